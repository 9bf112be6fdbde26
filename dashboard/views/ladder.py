"""Period ladder: adjacent period ratios against the rungs of commensurabilities.

Horizontal rungs mark every p:q of order p - q <= 3 (from
``orbitdeck.models.resonances.commensurability_table``) across the range of
the system's ratios. Each adjacent pair is drawn at its ratio P_outer/P_inner
as a disc split into the colours of its two planets, with a stub to its
nearest rung and the offset Delta = (P2/P1)/(p/q) - 1 (Lithwick, Xie & Wu
2012) beside it; consecutive pairs are linked where they form a triple,
labelled with the best small-integer three-body relation
p/P1 - (p+q)/P2 + q/P3 and its residual. TTV super-periods of pairs near
first-order rungs are in the tooltips and in the table beneath.
"""

from __future__ import annotations

import numpy as np
import panel as pn
from bokeh.models import FixedTicker, Label, Range1d, TeeHead, Whisker

from orbitdeck.models.resonances import commensurability_table

from . import palette
from .common import (add_hover, follow, batched, calm_selection, empty_source, interval, interval_caption,
                     new_figure, replace_data, span_texts, table_widget, while_shown)

#: rung styles by order: (dash, colour, width)
RUNG_STYLES = {1: ("solid", "#4d4d4d", 1.4), 2: ("dashed", "#7a7a7a", 1.1), 3: ("dotted", "#9a9a9a", 1.1)}
PAIR_RADIUS_PX = 9
#: above this many pairs the offsets and relations are left to the tooltips and tables (labels would overlap)
MAX_LABELLED_PAIRS = 12


def ladder_range(ratios) -> tuple[float, float]:
    """The period-ratio interval the ladder shows: the system's ratios with a margin."""
    ratios = np.asarray(ratios, dtype=float)
    if ratios.size == 0:
        return 1.0, 2.0
    lo, hi = float(ratios.min()), float(ratios.max())
    pad = max(0.04, 0.08 * (hi - lo))
    return max(1.0, lo - pad), hi + pad


def rungs_between(lo: float, hi: float):
    """Commensurabilities p:q (order <= 3) with lo <= p/q <= hi: (p, q, order, ratio) arrays."""
    p, q, order = commensurability_table()
    ratio = p / q
    keep = (ratio >= lo) & (ratio <= hi)
    return p[keep], q[keep], order[keep], ratio[keep]


class LadderView:
    """The "Period ladder" view of one app."""

    title = "Period ladder"
    tab = title  # the tab the view is shown in

    def __init__(self, app):
        self.app = app
        self.y_range, self.x_range = Range1d(1.0, 2.0), Range1d(-0.7, 0.7)
        fig = new_figure("Adjacent period ratios and the commensurabilities near them", "adjacent pair",
                         "period ratio P_outer / P_inner", height=480, x_range=self.x_range, y_range=self.y_range)
        fig.xgrid.grid_line_color = None
        fig.ygrid.grid_line_alpha = 0.3
        fig.xaxis.major_label_text_font_size = "12px"
        self.ticker = FixedTicker(ticks=[])
        fig.xaxis.ticker = self.ticker
        self.figure = fig
        rung_columns = ("x0", "x1", "y", "label", "order")
        self.sources = {
            **{f"rungs{k}": empty_source(*rung_columns) for k in RUNG_STYLES},
            "pairs": empty_source("x", "y", "pair", "inner_colour", "outer_colour", "nearest", "rung", "order",
                                  "delta", "delta_text", "super_period", "spacing", "outline", "ring",
                                  "delta_range", "other_fraction", "other_text"),
            "errors": empty_source("x", "lower", "upper"),
            "links": empty_source("x0", "y0", "x1", "y1", "xm", "ym", "planets", "p", "q", "residual", "text",
                                  "width", "colour"),
        }
        s = self.sources
        for k, (dash, colour, width) in RUNG_STYLES.items():
            fig.segment(x0="x0", y0="y", x1="x1", y1="y", line_dash=dash, line_color=colour, line_width=width,
                        source=s[f"rungs{k}"])
            fig.text(x="x1", y="y", text="label", text_align="right", text_baseline="bottom",
                     text_font_size="11px", text_color=colour, source=s[f"rungs{k}"])
        fig.segment(x0="x", y0="y", x1="x", y1="rung", line_color="#333333", line_width=1.5, source=s["pairs"])
        links = fig.segment(x0="x0", y0="y0", x1="x1", y1="y1", line_color="colour", line_width="width",
                            line_dash="dashdot", source=s["links"])
        fig.text(x="xm", y="ym", text="text", text_align="center", text_baseline="top", y_offset=8,
                 text_font_size="10.5px", text_color="#4a2d6a", background_fill_color="white",
                 background_fill_alpha=0.85, source=s["links"])
        rings = fig.scatter(x="x", y="y", size="ring", fill_alpha=0, line_color=palette.HIGHLIGHT_COLOUR,
                            line_width="outline", source=s["pairs"])
        left = fig.wedge(x="x", y="y", radius=PAIR_RADIUS_PX, radius_units="screen", start_angle=np.pi / 2,
                         end_angle=3 * np.pi / 2, fill_color="inner_colour", line_color="white", source=s["pairs"])
        right = fig.wedge(x="x", y="y", radius=PAIR_RADIUS_PX, radius_units="screen", start_angle=-np.pi / 2,
                          end_angle=np.pi / 2, fill_color="outer_colour", line_color="white", source=s["pairs"])
        fig.text(x="x", y="y", text="delta_text", y_offset=-(PAIR_RADIUS_PX + 4), text_align="center",
                 text_baseline="bottom", text_font_size="11.5px", background_fill_color="white",
                 background_fill_alpha=0.85, source=s["pairs"])
        for r in (links, rings, left, right):
            calm_selection(r)
        self.whiskers = Whisker(base="x", lower="lower", upper="upper", dimension="height", source=s["errors"],
                                line_color="#111111", line_width=2, level="underlay",
                                upper_head=TeeHead(size=10, line_width=2, line_color="#111111"),
                                lower_head=TeeHead(size=10, line_width=2, line_color="#111111"))
        fig.add_layout(self.whiskers)
        self.error_note = Label(x=8, y=8, x_units="screen", y_units="screen", text="", text_font_size="11px",
                                text_color="#444444", background_fill_color="white", background_fill_alpha=0.8)
        fig.add_layout(self.error_note)
        self.base_tooltips = [
            ("pair", "@pair"), ("P2/P1", "@y{0.00000}"), ("nearest", "@nearest (order @order)"),
            ("Delta", "@delta{+0.00000}"), ("TTV super-period", "@super_period{0.0} d"),
            ("spacing", "@spacing{0.00} mutual Hill radii")]
        self.range_tooltips = [("Delta 16th\u201384th pct", "@delta_range"), ("other rungs", "@other_text")]
        self.hover = add_hover(fig, [left, right], self.base_tooltips)
        add_hover(fig, [links], [("three-body relation", "@planets"), ("p, q", "@p, @q"),
                                 ("p/P1 - (p+q)/P2 + q/P3", "@residual{0.000000} deg/d")])
        self.pairs_table = table_widget({}, formats={
            "P2/P1": "0.00000", "other rung nearer [% of draws]": "0.0", "Delta [%]": "+0.000",
            "TTV super-period [d]": "0.0", "spacing [mutual Hill radii]": "0.00"}, height=230, selectable=False)
        self.triples_table = table_widget({}, formats={"residual [deg/d]": "0.000000"}, height=190,
                                          selectable=False)
        follow(app, self.update, self._highlight)

    @while_shown
    @batched
    def update(self, *_):
        d = self.app.derived
        if d is None:
            return
        pr, tr, names = d.pairs, d.triples, d.planet_names
        colours = palette.planet_colours(len(names))
        ratio = np.asarray(pr["period_ratio"], dtype=float)
        n_pairs = ratio.size
        lo, hi = ladder_range(ratio)
        x_lo, x_hi = -0.7, max(n_pairs - 1, 0) + 1.4
        self.y_range.update(start=lo, end=hi)
        self.x_range.update(start=x_lo, end=x_hi)
        p, q, order, rung = rungs_between(lo, hi)
        for k in RUNG_STYLES:
            keep = order == k
            replace_data(self.sources[f"rungs{k}"], {
                "x0": np.full(keep.sum(), x_lo), "x1": np.full(keep.sum(), x_hi - 0.02), "y": rung[keep],
                "label": [f"{a}:{b}" for a, b in zip(p[keep], q[keep])], "order": order[keep]})
        nearest = [str(s) for s in pr["nearest"]]
        near_ratio = np.array([int(s.split(":")[0]) / int(s.split(":")[1]) for s in nearest]) if nearest else ratio
        pair_names = [f"{a}\u2013{b}" for a, b in zip(pr["inner"], pr["outer"])]
        self.ticker.ticks = list(range(n_pairs))
        self.figure.xaxis.major_label_overrides = {i: name for i, name in enumerate(pair_names)}
        delta = np.asarray(pr["delta"], dtype=float)
        replace_data(self.sources["pairs"], {
            "x": np.arange(n_pairs, dtype=float), "y": ratio, "pair": pair_names,
            "inner_colour": colours[:-1] if n_pairs else [], "outer_colour": colours[1:] if n_pairs else [],
            "nearest": nearest, "rung": near_ratio, "order": np.asarray(pr["order"]), "delta": delta,
            "delta_text": [f"{s}  \u0394 = {100 * v:+.2f}%" if n_pairs <= MAX_LABELLED_PAIRS else ""
                           for v, s in zip(delta, nearest)],
            "super_period": np.asarray(pr["super_period_d"], dtype=float),
            "spacing": np.asarray(pr["mutual_hill_spacing"], dtype=float), **self._ring_columns(d),
            **self._range_columns(d, n_pairs)})
        self._update_errors(d, n_pairs, hi - lo)
        n_triples = len(tr["p"])
        trio = [list(t) for t in tr["planets"]]
        residual = np.asarray(tr["residual_deg_per_day"], dtype=float)
        x0 = np.arange(n_triples, dtype=float)
        replace_data(self.sources["links"], {
            "x0": x0, "y0": ratio[:n_triples], "x1": x0 + 1, "y1": ratio[1:n_triples + 1], "xm": x0 + 0.5,
            "ym": 0.5 * (ratio[:n_triples] + ratio[1:n_triples + 1]), "planets": ["\u2013".join(t) for t in trio],
            "p": np.asarray(tr["p"]), "q": np.asarray(tr["q"]), "residual": residual,
            "text": [f"p={a} q={b}: {v:.2g}\u00b0/d" if n_pairs <= MAX_LABELLED_PAIRS else ""
                     for a, b, v in zip(tr["p"], tr["q"], residual)],
            **self._link_columns(trio)})
        self.pairs_table.value = _pairs_frame(pr, d)
        self.triples_table.value = _triples_frame(tr)

    def _range_columns(self, d, n_pairs: int) -> dict:
        """Tooltip texts of the Monte Carlo intervals of Delta and of how often another rung is nearer."""
        found = interval(d, "pairs", "delta")
        other = np.asarray(d.extra.get("other_nearest_fraction", np.zeros(0)), dtype=float)
        if found is None or other.size != n_pairs:
            return {"delta_range": [""] * n_pairs, "other_fraction": np.full(n_pairs, np.nan),
                    "other_text": [""] * n_pairs}
        return {"delta_range": span_texts(*found, digits=4), "other_fraction": other,
                "other_text": [f"in {100 * f:.1f}% of draws another commensurability is nearer" for f in other]}

    def _update_errors(self, d, n_pairs: int, shown_span: float) -> None:
        """Vertical bars between the 16th and 84th percentiles of each period ratio (none without draws)."""
        found = interval(d, "pairs", "period_ratio")
        self.hover.tooltips = self.base_tooltips + (self.range_tooltips if found is not None else [])
        if found is None:
            replace_data(self.sources["errors"], {k: [] for k in self.sources["errors"].data})
            self.error_note.text = ""
            return
        lo, hi = found
        replace_data(self.sources["errors"], {"x": np.arange(n_pairs, dtype=float), "lower": lo, "upper": hi})
        # about 400 px of plot height: say so when every bar is shorter than the pair's disc
        tallest_px = float(np.nanmax(hi - lo, initial=0.0)) / shown_span * 400.0 if shown_span > 0 else 0.0
        self.error_note.text = (f"vertical bars: period ratio, {interval_caption(d)}"
                                + ("\n(every bar is shorter than the discs: the ratios are known far more "
                                   "precisely than the rungs are apart)" if tallest_px < 2 * PAIR_RADIUS_PX else ""))

    def _ring_columns(self, d) -> dict:
        chosen = self.app.selected
        hit = [chosen in (a, b) for a, b in zip(d.pairs["inner"], d.pairs["outer"])]
        return {"outline": [3.0 if h else 0.0 for h in hit], "ring": [2 * PAIR_RADIUS_PX + 9 if h else 1 for h in hit]}

    def _link_columns(self, trio) -> dict:
        hit = [self.app.selected in t for t in trio]
        return {"width": [3.5 if h else 1.8 for h in hit], "colour": ["#2b1a40" if h else "#8a6fae" for h in hit]}

    @while_shown
    @batched
    def _highlight(self, *_):
        d = self.app.derived
        if d is None:
            return
        self.sources["pairs"].data.update(self._ring_columns(d))
        self.sources["links"].data.update(self._link_columns([list(t) for t in d.triples["planets"]]))

    def panel(self):
        return pn.Column(pn.pane.Bokeh(self.figure, sizing_mode="stretch_width"),
                         pn.pane.HTML("<b>Adjacent pairs</b>"), self.pairs_table,
                         pn.pane.HTML("<b>Three-body relations of consecutive triples</b>"), self.triples_table,
                         sizing_mode="stretch_width")


def _pairs_frame(pr, d=None) -> dict:
    import pandas as pd

    frame = pd.DataFrame({
        "inner": pr["inner"], "outer": pr["outer"], "P2/P1": pr["period_ratio"], "nearest p:q": pr["nearest"],
        "order": pr["order"], "Delta [%]": 100 * np.asarray(pr["delta"], dtype=float),
        "TTV super-period [d]": pr["super_period_d"], "spacing [mutual Hill radii]": pr["mutual_hill_spacing"]})
    found = interval(d, "pairs", "delta") if d is not None else None
    if found is not None:
        frame.insert(frame.columns.get_loc("Delta [%]") + 1, "Delta 16\u201384% [%]",
                     span_texts(100 * found[0], 100 * found[1], digits=4))
        other = np.asarray(d.extra.get("other_nearest_fraction", []), dtype=float)
        if other.size == len(frame):
            frame.insert(frame.columns.get_loc("order") + 1, "other rung nearer [% of draws]", 100 * other)
    return frame


def _triples_frame(tr):
    import pandas as pd

    return pd.DataFrame({"planets": ["\u2013".join(t) for t in tr["planets"]], "p": tr["p"], "q": tr["q"],
                         "residual [deg/d]": tr["residual_deg_per_day"]})
