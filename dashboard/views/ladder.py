"""Period ladder: adjacent period ratios against the rungs of commensurabilities.

Horizontal rungs mark every p:q of order p - q <= 3 (from
``orbitdeck.models.physics.resonances.commensurability_table``) across the range of
the system's ratios, solid for first order, dashed for second, dotted for
third. Each adjacent pair is drawn at its ratio P_outer/P_inner as two
discs in the colours of its planets, with a stub to its nearest rung (the
integers p and q come from ``Derived.pairs``) and the offset
Delta = (P2/P1)/(p/q) - 1 (Lithwick, Xie & Wu 2012) beside it; consecutive
pairs are linked where they form a triple, labelled with the best
small-integer three-body relation p/P1 - (p+q)/P2 + q/P3 and its residual.
The pair chosen as ``app.selected_pair`` (in the Dynamics view, or a row of
the pairs table here) stands on a band, and its table row is selected. With
a pinned reference, its period ratios (and their intervals, with draws) are
drawn as rings beside the current pair of the same two planets
(:mod:`.pinned`). The tables beneath list every quantity the registry shows
in this view.
"""

from __future__ import annotations

import holoviews as hv
import numpy as np
import panel as pn
import param

from orbitdeck.models.physics.resonances import commensurability_table

from . import palette, pinned
from .common import (View, batched, escape, interval, interval_caption, note, number_texts, section, select_on_tap,
                     span_texts, while_shown)
from .pair_choice import PairRows, chosen_pair
from .plotting import FONT_SIZES, LayeredPlot, Styles, drawn, texts, with_a_row
from .tables import caution_html, quantities_of, table_frame, table_widget

VIEW = "ladder"
#: rung looks by order: colour, width and the legend's words
RUNG_COLOURS = {1: "#3b3b3b", 2: "#6f6f6f", 3: "#9a9a9a"}
RUNG_NAMES = {1: "first-order rungs (p \u2212 q = 1)", 2: "second-order rungs", 3: "third-order rungs"}
PAIR_SIZE = 15
#: above this many pairs the offsets and relations are left to the tooltips and tables (labels would overlap)
MAX_LABELLED_PAIRS = 12
LINK_COLOUR, LINK_SELECTED = "#8a6fae", "#2b1a40"
#: the band behind the chosen pair, and its half-width in pair positions
BAND_FILL, BAND_LINE, BAND_HALF_WIDTH = "#ece5f4", "#4a2d6a", 0.3
PINNED_SIZE = 12
X_DIM = hv.Dimension("position", label="adjacent pair")
Y_DIM = hv.Dimension("ratio", label="period ratio P_outer / P_inner")


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


# -- layers ------------------------------------------------------------------------------------
def _dims(d):
    return [X_DIM.clone(range=d["x_range"]), Y_DIM.clone(range=d["y_range"])]


def _segments(d, group, label=""):
    dims = _dims(d) + [hv.Dimension("position1", range=d["x_range"]), hv.Dimension("ratio1", range=d["y_range"])]
    return drawn(hv.Segments((d["x0"], d["y0"], d["x1"], d["y1"], texts(d["colour"]), d["width"]), dims,
                             ["colour", hv.Dimension("width", range=(0.0, 10.0))], group=group, label=label),
                 len(d["x0"]) > 0)


def _rungs(order):
    def rungs(d):
        return _segments(d, f"LadderRung{order}", RUNG_NAMES[order])
    rungs.__name__ = f"rungs{order}"
    return rungs


def _labels(group):
    def labels(d):
        return hv.Labels((d["x"], d["y"], texts(d["text"])), _dims(d), "text", group=group)
    labels.__name__ = group
    return labels


def stubs(d):
    return _segments(d, "LadderStub")


def links(d):
    return _segments(d, "LadderLink", "three-body relations")


def errors(d):
    return _segments(d, "LadderRange", "16th\u201384th percentiles")


def pinned_errors(d):
    return _segments(d, "LadderPinnedRange", "pinned reference: 16th\u201384th percentiles")


def pair_band(d):
    dims = _dims(d) + [hv.Dimension("position1", range=d["x_range"]), hv.Dimension("ratio1", range=d["y_range"])]
    return drawn(hv.Rectangles((d["x0"], d["y0"], d["x1"], d["y1"]), dims, group="LadderPairBand",
                               label="chosen pair"), len(d["x0"]) > 0)


PINNED_VDIMS = ["colour", "pair", "now", "ratio_range"]


def pinned_pairs(d):
    columns = {"position": d["x"], "ratio": d["y"], "colour": texts(d["colour"]), "pair": texts(d["pair"]),
               "now": d["now"], "ratio_range": texts(d["ratio_range"])}
    return drawn(hv.Points(with_a_row(columns), _dims(d), PINNED_VDIMS, group="LadderPinnedPair",
                           label="pinned reference: period ratios"), len(d["x"]) > 0)


PAIR_VDIMS = ["colour", "line_colour", "line_width", "pair", "nearest", "order", "delta", "super_period", "spacing",
              "delta_range", "other_text", "delta_text", "super_period_text", "spacing_text"]
#: hover values that may be missing or infinite (an exact commensurability has no super-period), written as text
#: with these tooltip formats
HOVER_FORMATS = {"delta_text": "+0.00000", "super_period_text": "0.0", "spacing_text": "0.00"}


def pairs(d):
    columns = {"position": d["x"], "ratio": d["y"], **{k: d[k] for k in PAIR_VDIMS}}
    for k in ("colour", "line_colour", "pair", "nearest", "delta_range", "other_text", *HOVER_FORMATS):
        columns[k] = texts(columns[k])
    return hv.Points(columns,
                     [X_DIM.clone(range=d["x_range"]), Y_DIM.clone(range=d["y_range"])], PAIR_VDIMS,
                     group="LadderPair", label="adjacent pairs")


LAYERS = {"pair_band": pair_band, "rungs1": _rungs(1), "rungs2": _rungs(2), "rungs3": _rungs(3),
          "rung_names": _labels("LadderRungName"), "stubs": stubs, "links": links,
          "link_names": _labels("LadderLinkName"), "errors": errors, "pinned_errors": pinned_errors,
          "pinned_pairs": pinned_pairs, "pairs": pairs, "pair_names": _labels("LadderPairName"),
          "deltas": _labels("LadderDelta")}

TITLE = "Adjacent period ratios and the commensurabilities near them"
STYLES = Styles(
    frame={"bokeh": dict(responsive=True, height=480, legend_position="right", toolbar="above", title=TITLE,
                         xaxis=None, show_grid=False, fontsize=FONT_SIZES),
           "matplotlib": dict(fig_size=250, aspect=1.8, legend_position="right", title=TITLE, xaxis=None)},
    bokeh={
        "Rectangles.LadderPairBand": dict(fill_color=BAND_FILL, line_color=BAND_LINE, line_width=2.0),
        "Segments.LadderPinnedRange": dict(color=pinned.RANGE_COLOUR, line_width=2.0, line_dash="dashed",
                                           alpha=0.8),
        "Points.LadderPinnedPair": dict(line_color="colour", fill_alpha=0.0, line_width=2.2, line_alpha=0.85,
                                        size=PINNED_SIZE, tools=["hover"], hover_tooltips=[
                                            ("pinned reference", "@pair"), ("P2/P1 then", "@ratio{0.00000}"),
                                            ("16th\u201384th pct then", "@{ratio_range}"),
                                            ("P2/P1 now", "@now{0.00000}")]),
        "Segments.LadderRung1": dict(color=RUNG_COLOURS[1], line_width=1.4),
        "Segments.LadderRung2": dict(color=RUNG_COLOURS[2], line_width=1.1, line_dash="dashed"),
        "Segments.LadderRung3": dict(color=RUNG_COLOURS[3], line_width=1.1, line_dash="dotted"),
        "Labels.LadderRungName": dict(text_font_size="11px", text_align="right", text_baseline="bottom",
                                      text_color="#4d4d4d"),
        "Segments.LadderStub": dict(color="#333333", line_width=1.5),
        "Segments.LadderLink": dict(color=hv.dim("colour"), line_width=hv.dim("width"), line_dash="dashdot"),
        "Labels.LadderLinkName": dict(text_font_size="10.5px", text_align="center", text_baseline="top",
                                      text_color="#4a2d6a", background_fill_color="#ffffff",
                                      background_fill_alpha=0.85),
        "Segments.LadderRange": dict(color="#111111", line_width=2.0),
        "Points.LadderPair": dict(color="colour", size=PAIR_SIZE, line_color="line_colour", line_width="line_width",
                                  tools=["hover"], hover_tooltips=[
                                      ("pair", "@{pair}"), ("P2/P1", "@ratio{0.00000}"), ("nearest", "@{nearest}"),
                                      ("order", "@{order}"), ("Delta", "@{delta_text}"),
                                      ("Delta 16th\u201384th pct", "@{delta_range}"),
                                      ("TTV super-period", "@{super_period_text} d"),
                                      ("spacing", "@{spacing_text} mutual Hill radii"), ("", "@{other_text}")]),
        "Labels.LadderPairName": dict(text_font_size="12px", text_align="center", text_baseline="bottom",
                                      text_color=palette.INK),
        "Labels.LadderDelta": dict(text_font_size="11px", text_align="center", text_baseline="top",
                                   text_color=palette.INK, background_fill_color="#ffffff",
                                   background_fill_alpha=0.85),
    },
    matplotlib={
        "Rectangles.LadderPairBand": dict(facecolor=BAND_FILL, edgecolor=BAND_LINE, linewidth=1.5),
        "Segments.LadderPinnedRange": dict(color=pinned.RANGE_COLOUR, linewidth=1.5, linestyle="--", alpha=0.8),
        "Points.LadderPinnedPair": dict(facecolors="none", edgecolors=hv.dim("colour"), s=PINNED_SIZE ** 2 * 0.6,
                                        linewidth=1.6, alpha=0.85),
        "Segments.LadderRung1": dict(color=RUNG_COLOURS[1], linewidth=1.2),
        "Segments.LadderRung2": dict(color=RUNG_COLOURS[2], linewidth=1.0, linestyle="--"),
        "Segments.LadderRung3": dict(color=RUNG_COLOURS[3], linewidth=1.0, linestyle=":"),
        "Labels.LadderRungName": dict(size=8, horizontalalignment="right", verticalalignment="bottom",
                                      color="#4d4d4d"),
        "Segments.LadderStub": dict(color="#333333", linewidth=1.2),
        "Segments.LadderLink": dict(color=hv.dim("colour"), linewidth=1.4, linestyle="-."),
        "Labels.LadderLinkName": dict(size=8, horizontalalignment="center", verticalalignment="top",
                                      color="#4a2d6a"),
        "Segments.LadderRange": dict(color="#111111", linewidth=1.5),
        "Points.LadderPair": dict(color=hv.dim("colour"), s=PAIR_SIZE ** 2 * 0.6, edgecolors=hv.dim("line_colour"),
                                  linewidth=hv.dim("line_width")),
        "Labels.LadderPairName": dict(size=9, horizontalalignment="center", verticalalignment="bottom",
                                      color=palette.INK),
        "Labels.LadderDelta": dict(size=8, horizontalalignment="center", verticalalignment="top", color=palette.INK),
    })


class LadderView(View):
    """The "Period ladder" view of one app."""

    title = "Period ladder"

    def __init__(self, app, **params):
        super().__init__(app, **params)
        self.plot = LayeredPlot(LAYERS, STYLES, self._layer_data())
        self.tap = select_on_tap(app, self.plot.dynamic["pairs"], self._tapped_names)
        self.caption = note()
        self.pair_quantities = quantities_of(VIEW, "pairs")
        self.triple_quantities = quantities_of(VIEW, "triples")
        self.pairs_table = table_widget(self._pairs_frame(), self.pair_quantities, frozen=("pair",), selectable=1)
        self.pair_rows = PairRows(self.pairs_table, app)
        self.triples_table = table_widget(self._triples_frame(), self.triple_quantities, frozen=("planets",),
                                          selectable=False)
        self.caution = note()
        self._refresh()

    def _tapped_names(self):
        """The planet each drawn disc stands for (a pair's inner disc its inner planet, its outer disc the outer)."""
        return self.plot.data["pairs"]["planet"]

    @param.depends("app.selected_pair", watch=True)
    @while_shown
    @batched
    def _show_pair(self):
        data = self.plot.data
        self.plot.update(pair_band={**data["pair_band"], **self._band(data["pair_band"]["x_range"],
                                                                      data["pair_band"]["y_range"])})
        self.pair_rows.show()

    def _band(self, xr, yr) -> dict:
        """The band behind the chosen pair: its corners (none without a chosen pair)."""
        chosen = chosen_pair(self.app)
        if chosen is None:
            return {"x0": np.zeros(0), "y0": np.zeros(0), "x1": np.zeros(0), "y1": np.zeros(0)}
        return {"x0": np.array([chosen - BAND_HALF_WIDTH]), "y0": np.array([yr[0]]),
                "x1": np.array([chosen + (pinned.RING_OFFSETS[1] + 0.13 if self.app.pinned is not None
                                          else BAND_HALF_WIDTH)]),
                "y1": np.array([yr[1]])}

    @param.depends("app.derived", "app.pinned", "app.pinned_label", watch=True)
    @while_shown
    @batched
    def _refresh(self):
        d = self.app.derived
        self.plot.update(**self._layer_data())
        self.pair_rows.fill(self._pairs_frame())
        self.triples_table.value = self._triples_frame()
        caption = interval_caption(d)
        notes = ["Each pair: the inner planet's disc left, the outer's right; the stub runs to the nearest rung. "
                 "A pair chosen in the Dynamics view or in the table below stands on a band."]
        notes += pinned.ladder_notes(self.app.pinned, self.app.pinned_label, self.app.derived)
        if caption:
            notes.append(f"Vertical bars: period ratio, {escape(caption)}; the fraction of draws in which another "
                         "commensurability is nearer is in the tooltips.")
            found = interval(d, "pairs", "period_ratio")
            lo, hi = self.plot.data["pairs"]["y_range"]
            if found is not None and np.nanmax(found[1] - found[0], initial=0.0) < 0.01 * (hi - lo):
                notes.append("(Every bar is shorter than the discs: the ratios are known far more precisely than the "
                             "rungs are apart.)")
        self.caption.object = " ".join(notes)
        self.caution.object = caution_html(self.pair_quantities + self.triple_quantities, d)

    @param.depends("app.selected", watch=True)
    @while_shown
    @batched
    def _highlight(self):
        data = self.plot.data
        self.plot.update(pairs={**data["pairs"], **self._pair_marks(data["pairs"]["pair_planets"])},
                         links={**data["links"], **self._link_marks(data["links"]["trio"])})

    def _pair_marks(self, pair_planets) -> dict:
        hit = [self.app.selected in planets for planets in pair_planets]
        return {"line_colour": [palette.HIGHLIGHT_COLOUR if h else "#ffffff" for h in hit],
                "line_width": np.array([3.0 if h else 1.0 for h in hit])}

    def _link_marks(self, trio) -> dict:
        hit = [self.app.selected in t for t in trio]
        return {"width": np.array([3.5 if h else 1.8 for h in hit]),
                "colour": [LINK_SELECTED if h else LINK_COLOUR for h in hit]}

    def _layer_data(self) -> dict:
        d = self.app.derived
        pr, tr = d.pairs, d.triples
        ratio = np.asarray(pr["period_ratio"], dtype=float)
        n = ratio.size
        then = pinned.pinned_ratios(self.app.pinned, d)
        lo, hi = ladder_range(np.concatenate([ratio, then["ratio"]]))
        x_lo, x_hi = -0.7, max(n - 1, 0) + 1.4
        xr, yr = (x_lo, x_hi), (lo, hi)
        p_all, q_all, order_all, rung_all = rungs_between(lo, hi)
        layers = {}
        for k in (1, 2, 3):
            keep = order_all == k
            count = int(keep.sum())
            layers[f"rungs{k}"] = {"x0": np.full(count, x_lo), "y0": rung_all[keep], "x1": np.full(count, x_hi),
                                   "y1": rung_all[keep], "colour": [RUNG_COLOURS[k]] * count,
                                   "width": np.ones(count),
                                   "x_range": xr, "y_range": yr}
        layers["rung_names"] = {"x": np.full(rung_all.size, x_hi - 0.02), "y": rung_all,
                                "text": [f"{a}:{b}" for a, b in zip(p_all, q_all)], "x_range": xr, "y_range": yr}
        x = np.arange(n, dtype=float)
        p, q = np.asarray(pr["p"], dtype=int), np.asarray(pr["q"], dtype=int)
        nearest_ratio = p / np.maximum(q, 1) if n else ratio
        layers["stubs"] = {"x0": x, "y0": ratio, "x1": x, "y1": nearest_ratio, "colour": ["#333333"] * n,
                           "width": np.ones(n), "x_range": xr, "y_range": yr}
        trio = [list(t) for t in tr["planets"]]
        m = len(trio)
        residual = np.asarray(tr["residual_deg_per_day"], dtype=float)
        layers["links"] = {"x0": x[:m], "y0": ratio[:m], "x1": x[:m] + 1, "y1": ratio[1:m + 1], "trio": trio,
                           "x_range": xr, "y_range": yr,
                           **self._link_marks(trio)}
        labelled = n <= MAX_LABELLED_PAIRS
        layers["link_names"] = {"x": x[:m] + 0.5, "y": 0.5 * (ratio[:m] + ratio[1:m + 1]),
                                "text": [f"p={a} q={b}: {v:.2g}\u00b0/d" if labelled else ""
                                         for a, b, v in zip(tr["p"], tr["q"], residual)], "x_range": xr, "y_range": yr}
        found = interval(d, "pairs", "period_ratio")
        lo_, hi_ = found if found is not None else (np.zeros(0), np.zeros(0))
        layers["errors"] = {"x0": x[:lo_.size], "y0": lo_, "x1": x[:hi_.size], "y1": hi_,
                            "colour": ["#111111"] * lo_.size, "width": np.ones(lo_.size),
                            "x_range": xr, "y_range": yr}
        layers["pairs"] = self._pairs(d, x, ratio, xr, yr)
        layers.update(pinned.ladder_layers(then, ratio, self.colours, xr, yr))
        layers["pair_band"] = {**self._band(xr, yr), "x_range": xr, "y_range": yr}
        names = [f"{a}\u2013{b}" for a, b in zip(pr["inner"], pr["outer"])]
        layers["pair_names"] = {"x": x, "y": np.full(n, lo), "text": names, "x_range": xr, "y_range": yr}
        delta = np.asarray(pr["delta"], dtype=float)
        layers["deltas"] = {"x": x, "y": np.minimum(ratio, nearest_ratio) - 0.004 * (hi - lo),
                            "text": [f"{s}  \u0394 = {100 * v:+.2f}%" if labelled else ""
                                     for v, s in zip(delta, pr["nearest"])], "x_range": xr, "y_range": yr}
        return layers

    def _pairs(self, d, x, ratio, xr, yr) -> dict:
        """Two discs a pair, inner planet's left and outer planet's right, with the pair's numbers for hovering."""
        pr = d.pairs
        n = ratio.size
        inner, outer = [str(v) for v in pr["inner"]], [str(v) for v in pr["outer"]]
        delta = np.asarray(pr["delta"], dtype=float)
        found = interval(d, "pairs", "delta")
        other = np.asarray(d.extra.get("other_nearest_fraction", np.zeros(0)), dtype=float)
        delta_range = span_texts(*found, digits=4) if found is not None else [""] * n
        other_text = ([f"in {100 * f:.1f}% of draws another commensurability is nearer" for f in other]
                      if other.size == n and d.intervals else [""] * n)
        pair = [f"{a}\u2013{b}" for a, b in zip(inner, outer)]

        def both(values) -> list:
            """One entry for the inner disc of every pair, then one for the outer disc."""
            values = list(values)
            return values + values

        pair_planets = both(zip(inner, outer))
        hover = {"delta_text": delta, "super_period_text": pr["super_period_d"], "spacing_text": pr["mutual_hill_spacing"]}
        return {**{k: both(number_texts(v, HOVER_FORMATS[k])) for k, v in hover.items()},"x": np.concatenate([x - 0.09, x + 0.09]), "y": np.concatenate([ratio, ratio]),
                "colour": self.colours(inner) + self.colours(outer), "planet": inner + outer,
                "pair": both(pair), "pair_planets": pair_planets, "nearest": both(str(s) for s in pr["nearest"]),
                "order": np.concatenate([pr["order"], pr["order"]]).astype(float),
                "delta": np.concatenate([delta, delta]),
                "super_period": np.concatenate([pr["super_period_d"], pr["super_period_d"]]).astype(float),
                "spacing": np.concatenate([pr["mutual_hill_spacing"], pr["mutual_hill_spacing"]]).astype(float),
                "delta_range": both(delta_range), "other_text": both(other_text), "x_range": xr, "y_range": yr,
                **self._pair_marks(pair_planets)}

    def _pairs_frame(self):
        d = self.app.derived
        labels = {"pair": [f"{a}\u2013{b}" for a, b in zip(d.pairs["inner"], d.pairs["outer"])],
                  "nearest p:q": d.pairs["nearest"]}
        return table_frame(d, VIEW, "pairs", labels, self.pair_quantities)

    def _triples_frame(self):
        d = self.app.derived
        return table_frame(d, VIEW, "triples", {"planets": ["\u2013".join(t) for t in d.triples["planets"]]},
                           self.triple_quantities)

    def panel(self):
        return pn.Column(pn.pane.HoloViews(self.plot.live(), sizing_mode="stretch_width", linked_axes=False),
                         self.caption,
                         section("Adjacent pairs"),
                         self.pairs_table,
                         section("Three-body relations of consecutive triples"),
                         self.triples_table, self.caution, sizing_mode="stretch_width")

    def figure(self, backend: str | None = None):
        return self.plot.figure(backend)
