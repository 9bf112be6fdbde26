"""Flux & temperature: insolation against radius, and the planet tables of the registry.

The plot shows each planet's orbit-averaged insolation S on a reversed
logarithmic axis (hotter to the left) against its radius, over the
habitable zone of Kopparapu et al. 2014 in this project's visual code
(:mod:`.habitable`) with its four limits named. With Monte Carlo draws,
bars span the 16th-84th percentiles of S and of the radius. The tables
below list every quantity the registry shows in this view, one table per
registry group (orbits and irradiation, bulk properties), masses estimated
from the radius (Chen & Kipping 2017) marked "\u2248".
"""

from __future__ import annotations

import holoviews as hv
import numpy as np
import panel as pn
import param

from . import habitable, palette
from .common import (View, section, as_floats, batched, escape, interval, interval_caption, note, select_on_tap,
                     span_texts, while_shown)
from .plotting import FONT_SIZES, LayeredPlot, Styles, drawn, extent, texts
from .tables import caution_html, link_selection, quantities_of, table_frame, table_widget

VIEW = "flux"
SIZE_PLAIN, SIZE_SELECTED = 12, 19
S_DIM = hv.Dimension("S", label="orbit-averaged insolation S", unit="S\u2295, Earth's = 1")
R_DIM = hv.Dimension("R", label="planet radius", unit="R\u2295")
ESTIMATED_MASS_MARK = "\u2248\u2009"
TEQ_NOTE = ("Teq: no greenhouse effect, no internal heat. \u2248 marks masses estimated from the radius "
            "(Chen &amp; Kipping 2017).")


# -- layers: plain data -> elements ---------------------------------------------------------------
def hz_band(d, backend: str = "bokeh"):
    """The graded steps of the habitable zone; the optimistic ones carry a hatch pattern ("/")."""
    count = len(d["hot"])
    dims = [S_DIM.clone(range=d["x_range"]), R_DIM.clone(range=d["y_range"]), "S1", "R1"]
    band = hv.Rectangles((d["hot"], np.zeros(count), d["cold"], np.full(count, d["top"]), texts(d["colour"]),
                          d["alpha"], texts(d["zone"]), texts(d["hatch"])), dims,
                         [hv.Dimension("colour"), hv.Dimension("alpha", range=(0.0, 1.0)), "zone", "hatch"],
                         group="FluxHZBand")
    if backend == "bokeh":
        return band     # the Bokeh glyph takes its hatch pattern from the "hatch" column (see _hatch)
    if not count:
        return None     # no zone (a host outside the limits' range): matplotlib cannot scale colours of nothing
    return band * band.select(hatch=palette.HZ_HATCH).clone(group="FluxHZHatch")


def _limit_names(group):
    def limit_names(d):
        return hv.Labels((d["S"], d["y"], texts(d["text"])),
                         [S_DIM.clone(range=d["x_range"]), R_DIM.clone(range=d["y_range"])], "text", group=group)
    limit_names.__name__ = group
    return limit_names


def ranges(d):
    return drawn(hv.Segments((d["x0"], d["y0"], d["x1"], d["y1"], texts(d["colour"])),
                             [S_DIM.clone(range=extent(d["x0"], d["x1"])),
                              R_DIM.clone(range=extent(d["y0"], d["y1"])), "S1", "R1"], ["colour"],
                             group="FluxRange", label="16th\u201384th percentiles"), len(d["x0"]) > 0)


def planets(d):
    dims = [S_DIM.clone(range=d["x_range"]), R_DIM.clone(range=d["y_range"])]
    columns = {k: d[k] for k in ("S", "R", "name", "colour", "size", "line_colour", "line_width", "teq", "region",
                                 "a", "S_range", "teq_range")}
    for k in ("name", "colour", "line_colour", "region", "S_range", "teq_range"):
        columns[k] = texts(columns[k])
    return hv.Points(columns, dims, ["name", "colour", "size", "line_colour", "line_width", "teq", "region", "a",
                                     "S_range", "teq_range"], group="FluxPlanet", label="planets")


def names(d):
    return hv.Labels((d["S"], d["R"], texts(f"   {n}" for n in d["name"])),
                     [S_DIM.clone(range=extent(d["S"])), R_DIM.clone(range=extent(d["R"]))], "text",
                     group="FluxPlanetName")


LAYERS = {"hz": hz_band,
          "limit_names_top": _limit_names("FluxHZLimitTop"), "limit_names_bottom": _limit_names("FluxHZLimitBottom"),
          "ranges": ranges, "planets": planets, "names": names}
#: ticks of the insolation axis: 1, 2 and 5 times powers of ten (the axis shows those in its range)
S_TICKS = [k * 10.0 ** n for n in range(-6, 7) for k in (1, 2, 5)]


def _hatch(plot, element):
    """Hatch the optimistic steps: the glyph reads its pattern from the "hatch" column (Bokeh fills have hatch
    patterns; HoloViews has no option for them)."""
    plot.handles["glyph"].update(hatch_pattern={"field": "hatch"}, hatch_color=palette.HZ_HATCH_COLOUR,
                                 hatch_alpha=0.55, hatch_scale=9.0, hatch_weight=0.8)


FRAME = {
    "bokeh": dict(responsive=True, height=430, logx=True, invert_xaxis=True, legend_position="right",
                  toolbar="above", active_tools=["wheel_zoom"], show_grid=True, xticks=S_TICKS, xformatter="%g",
                  title="Insolation and radius (hotter to the left)", fontsize=FONT_SIZES),
    "matplotlib": dict(logx=True, invert_xaxis=True, legend_position="right", fig_size=250, aspect=1.9,
                       title="Insolation and radius (hotter to the left)"),
}
STYLES = Styles(
    frame=FRAME,
    bokeh={
        # layers other than the planets' take no part in the axes' ranges (the planets' layer carries them)
        "Rectangles.FluxHZBand": dict(apply_ranges=False, color=hv.dim("colour"), alpha=hv.dim("alpha"),
                                      line_alpha=0.0, hooks=[_hatch], tools=["hover"],
                                      hover_tooltips=[("habitable zone", "@zone")]),
        "Labels.FluxHZLimitTop": dict(apply_ranges=False, text_font_size="10.5px", angle=90, text_align="right",
                                      text_baseline="bottom", text_color=palette.HZ_LIMIT_COLOUR),
        "Labels.FluxHZLimitBottom": dict(apply_ranges=False, text_font_size="10.5px", angle=90, text_align="left",
                                         text_baseline="bottom", text_color=palette.HZ_LIMIT_COLOUR),
        "Segments.FluxRange": dict(apply_ranges=False, color=hv.dim("colour"), line_width=2.0),
        "Points.FluxPlanet": dict(color="colour", size="size", line_color="line_colour", line_width="line_width",
                              tools=["hover", "tap"], nonselection_alpha=1.0, selection_alpha=1.0,
                              hover_tooltips=[("planet", "@name"), ("S", "@S{0.000} S_earth"),
                                              ("radius", "@R{0.000} R_earth"), ("Teq", "@teq{0.0} K"),
                                              ("HZ region", "@region"), ("a", "@a{0.00000} au"),
                                              ("S 16th\u201384th pct", "@{S_range}"),
                                              ("Teq 16th\u201384th pct", "@{teq_range}")]),
        "Labels.FluxPlanetName": dict(apply_ranges=False, text_font_size="12px", text_align="left",
                                      text_baseline="middle", text_color=palette.INK),
    },
    matplotlib={
        "Rectangles.FluxHZBand": dict(color=hv.dim("colour"), alpha=hv.dim("alpha"), linewidth=0),
        "Rectangles.FluxHZHatch": dict(facecolor="none", hatch="//", edgecolor=palette.HZ_HATCH_COLOUR, linewidth=0),
        "Labels.FluxHZLimitTop": dict(size=8, rotation=90, horizontalalignment="right", verticalalignment="top",
                                      color=palette.HZ_LIMIT_COLOUR),
        "Labels.FluxHZLimitBottom": dict(size=8, rotation=90, horizontalalignment="right", verticalalignment="bottom",
                                         color=palette.HZ_LIMIT_COLOUR),
        "Segments.FluxRange": dict(color=hv.dim("colour"), linewidth=1.6),
        "Points.FluxPlanet": dict(color=hv.dim("colour"), s=hv.dim("size") ** 2 * 0.6,
                              edgecolors=hv.dim("line_colour"), linewidth=hv.dim("line_width")),
        "Labels.FluxPlanetName": dict(size=9, horizontalalignment="left", verticalalignment="center",
                                  color=palette.INK),
    })


# -- data of the layers -------------------------------------------------------------------------
def hz_layers(derived, top: float) -> dict:
    """Data of the habitable-zone layers in insolation: the graded steps, the hatched parts, the limits."""
    limits = habitable.limits_of(derived)
    none = (np.nan, np.nan)
    if limits is None:
        return {"hz": {"hot": [], "cold": [], "colour": [], "alpha": [], "zone": [], "hatch": [], "top": top,
                       "x_range": none, "y_range": none},
                "limit_names_top": {"S": [], "y": [], "text": [], "x_range": none, "y_range": none},
                "limit_names_bottom": {"S": [], "y": [], "text": [], "x_range": none, "y_range": none}}
    flux = np.asarray(derived.extra["hz_limit_flux"], dtype=float)     # recent Venus ... early Mars
    faded = habitable.extrapolated(derived)
    # steps are made along 1/S, which grows outwards like the distance
    inner, outer, colours, zone = habitable.steps(1.0 / flux)
    x_range, y_range = extent(flux), (0.0, top)
    band = {"hot": 1.0 / inner, "cold": 1.0 / outer, "colour": colours, "alpha": habitable.alphas(zone, faded),
            "zone": [habitable.ZONES[z] for z in zone],
            "hatch": [palette.HZ_HATCH if z != 1 else " " for z in zone], "top": top,
            "x_range": x_range, "y_range": y_range}
    names = [habitable.LIMIT_NAMES[k] for k in habitable.LIMITS]
    return {"hz": band,
            # names alternate between the top and the bottom of the plot: the limits can stand close together
            "limit_names_top": {"S": flux[0::2], "y": [top * 0.985] * 2, "text": [f"{n} " for n in names[0::2]],
                                "x_range": x_range, "y_range": y_range},
            "limit_names_bottom": {"S": flux[1::2], "y": [top * 0.015] * 2, "text": [f" {n}" for n in names[1::2]],
                                   "x_range": x_range, "y_range": y_range}}


class FluxView(View):
    """The "Flux & temperature" view of one app."""

    title = "Flux & temperature"

    def __init__(self, app, **params):
        super().__init__(app, **params)
        self.plot = LayeredPlot(LAYERS, STYLES, self._layer_data())
        self.tap = select_on_tap(app, self.plot.dynamic["planets"], lambda: self.plot.data["planets"]["name"])
        self.caption = note()
        self.groups = _groups()
        self.tables, self._syncs = {}, {}
        for group, quantities in self.groups.items():
            table = table_widget(self._frame(quantities), quantities)
            self.tables[group] = table
            self._syncs[group] = link_selection(table, app, lambda t=table: list(t.value["planet"]))
        self.caution = note()
        self._refresh()

    # -- following the app ----------------------------------------------------------------------

    @param.depends("app.derived", watch=True)
    @while_shown
    @batched
    def _refresh(self):
        d = self.app.derived
        self.plot.update(**self._layer_data())
        for group, quantities in self.groups.items():
            self.tables[group].value = self._frame(quantities)
        caption = interval_caption(d)
        hz_missing = habitable.limits_of(d) is None
        self.caption.object = " ".join(filter(None, [
            habitable.key_html(d),
            (f"No habitable-zone limits: Teff = {d.star['teff_k']:g} K lies outside the range of the Kopparapu "
             "et al. 2014 fit.") if hz_missing else "",
            f"Bars: insolation and radius, {escape(caption)}." if caption else ""]))
        self.caution.object = caution_html([q for qs in self.groups.values() for q in qs], d) + " " + TEQ_NOTE
        self._sync_tables()

    @param.depends("app.selected", watch=True)
    @while_shown
    @batched
    def _highlight(self):
        self.plot.update(planets={**self.plot.data["planets"], **self._marks(self.plot.data["planets"]["name"])})
        self._sync_tables()

    def _sync_tables(self):
        for sync in self._syncs.values():
            sync()

    # -- data ---------------------------------------------------------------------------------
    def _marks(self, names) -> dict:
        chosen = [n == self.app.selected for n in names]
        return {"size": np.array([SIZE_SELECTED if c else SIZE_PLAIN for c in chosen], dtype=float),
                "line_colour": [palette.HIGHLIGHT_COLOUR if c else "#ffffff" for c in chosen],
                "line_width": np.array([3.0 if c else 1.0 for c in chosen])}

    def _layer_data(self) -> dict:
        d = self.app.derived
        pl, names_ = d.planets, [str(n) for n in d.planet_names]
        S, R = as_floats(pl["insolation_earth"]), as_floats(pl["radius_rearth"])
        colours = self.colours(names_)
        s_iv, r_iv, t_iv = (interval(d, "planets", k) for k in ("insolation_earth", "radius_rearth", "teq_k"))
        r_top = float(np.nanmax(r_iv[1] if r_iv else R, initial=1.0))
        top = 1.32 * r_top
        layers = hz_layers(d, top)
        shown = [v for v in S if v > 0]
        if s_iv:
            shown += [v for v in (*s_iv[0], *s_iv[1]) if v > 0]
        if len(layers["hz"]["hot"]):
            shown += [layers["hz"]["hot"][0], layers["hz"]["cold"][-1]]
        x_range = (min(shown) / 1.8, max(shown) * 1.8) if shown else (0.1, 10.0)
        blank = [""] * len(names_)
        layers["planets"] = {
            "S": S, "R": R, "name": names_, "colour": colours, "teq": as_floats(pl["teq_k"]),
            "region": ["\u2014" if r is None else str(r) for r in pl["hz_region"]],
            "a": as_floats(pl["semi_major_axis_au"]),
            "S_range": span_texts(*s_iv) if s_iv else blank, "teq_range": span_texts(*t_iv) if t_iv else blank,
            "x_range": x_range, "y_range": (0.0, top), **self._marks(names_)}
        layers["names"] = {"S": S, "R": R, "name": names_}
        layers["ranges"] = _range_bars(S, R, s_iv, r_iv, colours)
        return layers

    def _frame(self, quantities):
        d = self.app.derived
        estimated = np.asarray(d.planets["mass_estimated"], dtype=bool)
        marks = {"mass_mearth": [ESTIMATED_MASS_MARK if e else "" for e in estimated]}
        return table_frame(d, VIEW, "planets", {"planet": d.planet_names}, quantities, marks=marks)

    # -- pages and figures ----------------------------------------------------------------------
    def panel(self):
        blocks = [pn.pane.HoloViews(self.plot.live(), sizing_mode="stretch_width", linked_axes=False),
                  self.caption]
        for group, table in self.tables.items():
            blocks += [section(escape(group)), table]
        blocks.append(self.caution)
        return pn.Column(*blocks, sizing_mode="stretch_width")

    def figure(self, backend: str | None = None):
        return self.plot.figure(backend)


def _groups() -> dict:
    """The view's quantities by registry group, in registry order."""
    groups: dict[str, list] = {}
    for q in quantities_of(VIEW, "planets"):
        groups.setdefault(q.group or "Planets", []).append(q)
    return groups


def _range_bars(S, R, s_iv, r_iv, colours) -> dict:
    """Bars of the 16th-84th percentiles: horizontal for S, vertical for R (none without draws)."""
    x0, y0, x1, y1, colour = [], [], [], [], []
    if s_iv:
        x0 += list(s_iv[0]); x1 += list(s_iv[1]); y0 += list(R); y1 += list(R); colour += colours
    if r_iv:
        x0 += list(S); x1 += list(S); y0 += list(r_iv[0]); y1 += list(r_iv[1]); colour += colours
    return {"x0": np.array(x0, dtype=float), "y0": np.array(y0, dtype=float), "x1": np.array(x1, dtype=float),
            "y1": np.array(y1, dtype=float), "colour": colour}
