"""The layers and looks of the Dynamics view's plots (see :mod:`.plotting`).

* TTVs of the chosen pair: the analytic curves of both planets (Lithwick,
  Xie & Wu 2012) as paths in the planets' colours over bands of their
  16th-84th percentile amplitudes, and the N-body ensemble's TTVs (median
  and 16th-84th percentiles of the stable draws at each transit) as dots
  and bars in the same colours.
* beta = AMD / critical AMD of every pair as bars in the inner planet's
  colour against 1, with their percentile ranges.
* each pair's period ratio as a disc against the zone of overlapping
  first-order resonances (Deck, Payne & Holman 2013) and the j:j-1 rungs.
* survival times of an N-body ensemble as a histogram.

Every layer is a pure function of plain data; the data are made by the view.
"""

from __future__ import annotations

import holoviews as hv
import numpy as np

from . import palette
from .common import escape, interval_caption
from .plotting import FONT_SIZES, Styles, drawn, texts

OVERLAP_ZONE_COLOUR = "#c9c2b3"
RUNG_COLOUR = "#6f6f6f"
ONE_COLOUR = "#8a2d00"
SURVIVED_COLOUR = palette.ACCENT
STOPPED_COLOUR = "#b35a00"


def _framewise(looks: dict) -> dict:
    """Bokeh looks that take each frame's ranges: the axes follow the data (a new pair, a finished run).
    Every dimension carries its range, so HoloViews reads it rather than scanning the data."""
    return {spec: {**options, "framewise": True} for spec, options in looks.items()}


# -- TTVs ------------------------------------------------------------------------------------------
def _ttv_dims(d):
    return [hv.Dimension("days", label="time from the system epoch", unit="d", range=d["x_range"]),
            hv.Dimension("ttv", label="TTV (model estimate)", unit="min", range=d["y_range"])]


#: what a hidden path or band layer holds: Bokeh maps a colour column over paths by joining them, and an empty
#: list of paths has nothing to join
#: (a point, thrice: a polygon's ring needs three, and NaN breaks its closing)
_PLACEHOLDER = {"xs": [np.zeros(3)], "ys": [np.zeros(3)], "colour": ["#ffffff"], "width": [1.0]}


def ttv_bands(d):
    shown = len(d["xs"]) > 0
    d_ = d if shown else {**d, **_PLACEHOLDER}
    shapes = [{"days": x, "ttv": y, "colour": c} for x, y, c in zip(d_["xs"], d_["ys"], d_["colour"])]
    return drawn(hv.Polygons(shapes, _ttv_dims(d), ["colour"], group="DynamicsTTVBand",
                             label="16th\u201384th percentile amplitudes"), shown)


def ttv_curves(d, backend: str = "bokeh"):
    label = "analytic (Lithwick, Xie & Wu 2012)"
    if backend == "matplotlib":   # its paths read a colour column as values of a colour map: a curve each
        if not d["xs"]:
            return None
        return hv.Overlay([hv.Curve((x, y), *_ttv_dims(d), group="DynamicsTTV", label=label)
                           .opts(color=c, linewidth=w, backend=backend)
                           for x, y, c, w in zip(d["xs"], d["ys"], d["colour"], d["width"])])
    shown = len(d["xs"]) > 0
    d_ = d if shown else {**d, **_PLACEHOLDER}
    paths = [{"days": x, "ttv": y, "colour": c, "width": w}
             for x, y, c, w in zip(d_["xs"], d_["ys"], d_["colour"], d_["width"])]
    return drawn(hv.Path(paths, _ttv_dims(d), ["colour", "width"], group="DynamicsTTV", label=label), shown)


def nbody_ranges(d):
    # the ends' dimensions need labels of their own: HoloViews finds a dimension by its label too
    dims = _ttv_dims(d)
    ends = [dims[0].clone("days1", label="time (end)"), dims[1].clone("ttv1", label="TTV (end)")]
    return drawn(hv.Segments((d["x"], d["low"], d["x"], d["high"], texts(d["colour"])), [*dims, *ends], ["colour"],
                             group="DynamicsNBodyRange", label="N-body 16th\u201384th percentiles"), len(d["x"]) > 0)


NBODY_VDIMS = ["colour", "planet", "transit", "bjd", "span"]


def nbody_medians(d):
    columns = {"days": d["x"], "ttv": d["median"], "colour": texts(d["colour"]), "planet": texts(d["planet"]),
               "transit": d["transit"], "bjd": d["bjd"], "span": texts(d["span"])}
    return drawn(hv.Points(columns, _ttv_dims(d), NBODY_VDIMS, group="DynamicsNBody", label="N-body median"),
                 len(d["x"]) > 0)


#: the analytic curves over the N-body dots, which would hide them
TTV_LAYERS = {"bands": ttv_bands, "nbody_ranges": nbody_ranges, "nbody": nbody_medians, "curves": ttv_curves}
TTV_TITLE = "Transit-timing variations of the chosen pair"
TTV_STYLES = Styles(
    frame={"bokeh": dict(responsive=True, height=330, toolbar="above", show_legend=False, show_grid=True,
                         title=TTV_TITLE, fontsize=FONT_SIZES),
           "matplotlib": dict(fig_size=220, aspect=2.6, show_legend=False, title=TTV_TITLE)},
    bokeh=_framewise({
        "Polygons.DynamicsTTVBand": dict(color=hv.dim("colour"), alpha=0.22, line_alpha=0.0),
        "Path.DynamicsTTV": dict(color=hv.dim("colour"), line_width=hv.dim("width")),
        "Segments.DynamicsNBodyRange": dict(color=hv.dim("colour"), line_width=2.0, alpha=0.5),
        "Points.DynamicsNBody": dict(color="colour", size=6, line_color=palette.INK, line_width=0.6, alpha=0.85,
                                     tools=["hover"], hover_tooltips=[
                                         ("planet", "@planet"), ("transit", "@transit"),
                                         ("BJD_TDB (median)", "@bjd{0.000}"),
                                         ("N-body TTV, median", "@ttv{0.00} min"),
                                         ("16th\u201384th pct", "@span min")]),
    }),
    matplotlib={
        "Polygons.DynamicsTTVBand": dict(facecolor=hv.dim("colour"), alpha=0.22, edgecolor="none"),
        "Curve.DynamicsTTV": dict(linewidth=1.8),
        "Segments.DynamicsNBodyRange": dict(color=hv.dim("colour"), linewidth=1.5, alpha=0.5),
        "Points.DynamicsNBody": dict(color=hv.dim("colour"), s=24, edgecolors=palette.INK),
    })


# -- AMD ---------------------------------------------------------------------------------------------
PAIR_DIM = hv.Dimension("pair", label="adjacent pair")


def _beta_dim(d):
    return hv.Dimension("beta", label="beta = AMD / critical AMD (model estimate)", range=d["y_range"])


BETA_VDIMS = ["colour", "line_colour", "line_width", "beta_text", "beta_range"]


def _numbered(d):
    """Matplotlib's bar charts give every bar one colour: there the bars are rectangles at numbered places."""
    pairs = d.get("all_pairs", d["pair"])
    count = len(pairs)
    x_dims = [hv.Dimension("position", label="adjacent pair", range=(-0.6, count - 0.4)), _beta_dim(d)]
    return np.arange(count, dtype=float), x_dims, list(zip(range(count), pairs))


def beta_bars(d, backend: str = "bokeh"):
    if backend == "matplotlib":
        x, dims, ticks = _numbered(d)
        ends = [dims[0].clone("position1", label="position (end)"), dims[1].clone("beta1", label="beta (end)")]
        return hv.Rectangles((x - 0.4, np.zeros(x.size), x + 0.4, d["beta"], texts(d["colour"]),
                              texts(d["line_colour"])), [*dims, *ends], ["colour", "line_colour"],
                             group="DynamicsBetaBox", label="beta").opts(
                                 xticks=ticks or 0, backend=backend)   # no pairs (one planet): no ticks
    columns = {"pair": texts(d["pair"]), "beta": d["beta"], **{k: d[k] for k in BETA_VDIMS}}
    for k in ("colour", "line_colour", "beta_text", "beta_range"):
        columns[k] = texts(columns[k])
    return hv.Bars(columns, [PAIR_DIM], [_beta_dim(d), *BETA_VDIMS], group="DynamicsBeta", label="beta")


def beta_errors(d, backend: str = "bokeh"):
    if backend == "matplotlib":
        if not d["shown"]:
            return None
        x, dims, _ = _numbered(d)
        ends = [dims[0].clone("position1", label="position (end)"), dims[1].clone("beta1", label="beta (end)")]
        return hv.Segments((x, d["beta"] - d["minus"], x, d["beta"] + d["plus"]), [*dims, *ends],
                           group="DynamicsBetaRange", label="16th\u201384th percentiles")
    return drawn(hv.ErrorBars((texts(d["pair"]), d["beta"], d["minus"], d["plus"]), [PAIR_DIM],
                              [_beta_dim(d), "minus", "plus"], group="DynamicsBetaRange",
                              label="16th\u201384th percentiles"), d["shown"])


def beta_one(d):
    return hv.HLine(1.0, group="DynamicsBetaOne")


def beta_clipped(d, backend: str = "bokeh"):
    if backend == "matplotlib":
        _, dims, _ = _numbered(d)
        return hv.Labels((d["position"], d["beta"], texts(d["text"])), dims, "text", group="DynamicsBetaClipped")
    return hv.Labels((texts(d["pair"]), d["beta"], texts(d["text"])), [PAIR_DIM, _beta_dim(d)], "text",
                     group="DynamicsBetaClipped")


BETA_LAYERS = {"bars": beta_bars, "errors": beta_errors, "one": beta_one, "clipped": beta_clipped}
BETA_TITLE = "AMD stability: beta of each pair (stable below 1)"
BETA_STYLES = Styles(
    frame={"bokeh": dict(responsive=True, height=320, toolbar="above", show_legend=False, show_grid=True,
                         title=BETA_TITLE, fontsize=FONT_SIZES),
           "matplotlib": dict(fig_size=220, aspect=2.6, show_legend=False, title=BETA_TITLE)},
    bokeh=_framewise({
        "Bars.DynamicsBeta": dict(color=hv.dim("colour"), line_color=hv.dim("line_colour"),
                                  line_width=hv.dim("line_width"), tools=["hover", "tap"], nonselection_alpha=1.0,
                                  selection_alpha=1.0,
                                  hover_tooltips=[("pair", "@pair"), ("beta", "@{beta_text}"),
                                                  ("16th\u201384th pct", "@{beta_range}")]),
        "ErrorBars.DynamicsBetaRange": dict(color=palette.INK, line_width=1.5, upper_head=None, lower_head=None),
        "HLine.DynamicsBetaOne": dict(color=ONE_COLOUR, line_dash="dashed", line_width=1.5),
        "Labels.DynamicsBetaClipped": dict(text_font_size="10.5px", text_baseline="top", text_color="#ffffff"),
    }),
    matplotlib={
        "Rectangles.DynamicsBetaBox": dict(facecolor=hv.dim("colour"), edgecolor=hv.dim("line_colour")),
        "Segments.DynamicsBetaRange": dict(color=palette.INK, linewidth=1.2),
        "HLine.DynamicsBetaOne": dict(color=ONE_COLOUR, linestyle="--", linewidth=1.2),
        "Labels.DynamicsBetaClipped": dict(size=8, verticalalignment="top", color="#ffffff"),
    })


# -- resonance overlap -------------------------------------------------------------------------------
def _ratio_dims(d, x="ratio", y="row", labels=("period ratio P_outer / P_inner", "adjacent pair")):
    return [hv.Dimension(x, label=labels[0], range=d["x_range"]), hv.Dimension(y, label=labels[1], range=d["y_range"])]


#: labels of the far corners' dimensions (HoloViews finds a dimension by its label too: they must differ)
_ENDS = ("period ratio (end)", "pair (end)")


def overlap_zones(d):
    columns = (d["x0"], d["y0"], d["x1"], d["y1"])
    return hv.Rectangles(columns, _ratio_dims(d, "zone_x", "zone_y") + _ratio_dims(d, "zone_x1", "zone_y1", _ENDS),
                         group="DynamicsOverlapZone", label="overlap zone")


def overlap_rungs(d):
    dims = _ratio_dims(d, "rung", "rung_y") + _ratio_dims(d, "rung1", "rung_y1", _ENDS)
    return drawn(hv.Segments((d["x"], d["y0"], d["x"], d["y1"]), dims, group="DynamicsRung",
                             label="first-order commensurabilities j:j\u22121"), len(d["x"]) > 0)


def _labels(group):
    def labels(d):
        return hv.Labels((d["x"], d["y"], texts(d["text"])), _ratio_dims(d, "label_x", "label_y"), "text",
                         group=group)
    labels.__name__ = group
    return labels


PAIR_VDIMS = ["pair", "colour", "line_colour", "line_width", "size", "nearest", "edge", "edge_range", "inside"]


def overlap_pairs(d):
    columns = {"ratio": d["ratio"], "row": d["row"], **{k: d[k] for k in PAIR_VDIMS}}
    for k in ("pair", "colour", "line_colour", "nearest", "edge_range", "inside"):
        columns[k] = texts(columns[k])
    return hv.Points(columns, _ratio_dims(d), PAIR_VDIMS, group="DynamicsPair", label="adjacent pairs")


OVERLAP_LAYERS = {"zones": overlap_zones, "rungs": overlap_rungs, "rung_names": _labels("DynamicsRungName"),
                  "pair_names": _labels("DynamicsPairName"), "pairs": overlap_pairs}
OVERLAP_TITLE = "Period ratios and the overlap of first-order resonances"
OVERLAP_STYLES = Styles(
    frame={"bokeh": dict(responsive=True, height=320, toolbar="above", show_legend=False, yaxis=None,
                         title=OVERLAP_TITLE, fontsize=FONT_SIZES),
           "matplotlib": dict(fig_size=220, aspect=2.6, show_legend=False, yaxis=None, title=OVERLAP_TITLE)},
    bokeh=_framewise({
        "Rectangles.DynamicsOverlapZone": dict(color=OVERLAP_ZONE_COLOUR, line_alpha=0.0),
        "Segments.DynamicsRung": dict(color=RUNG_COLOUR, line_width=1.0, line_dash="dotted"),
        "Labels.DynamicsRungName": dict(text_font_size="10.5px", text_align="center", text_baseline="bottom",
                                        text_color="#4d4d4d"),
        "Labels.DynamicsPairName": dict(text_font_size="11.5px", text_align="left", text_baseline="bottom",
                                        text_color=palette.INK),
        "Points.DynamicsPair": dict(color="colour", size="size", line_color="line_colour", line_width="line_width",
                                    tools=["hover", "tap"], nonselection_alpha=1.0, selection_alpha=1.0,
                                    hover_tooltips=[("pair", "@pair"), ("P2/P1", "@ratio{0.00000}"),
                                                    ("nearest", "@nearest"),
                                                    ("overlap edge P2/P1", "@edge{0.00000}"),
                                                    ("edge 16th\u201384th pct", "@{edge_range}"),
                                                    ("in the overlap zone", "@inside")]),
    }),
    matplotlib={
        "Rectangles.DynamicsOverlapZone": dict(facecolor=OVERLAP_ZONE_COLOUR, edgecolor="none"),
        "Segments.DynamicsRung": dict(color=RUNG_COLOUR, linewidth=0.9, linestyle=":"),
        "Labels.DynamicsRungName": dict(size=8, horizontalalignment="center", verticalalignment="bottom",
                                        color="#4d4d4d"),
        "Labels.DynamicsPairName": dict(size=8.5, horizontalalignment="left", verticalalignment="bottom",
                                        color=palette.INK),
        "Points.DynamicsPair": dict(color=hv.dim("colour"), s=hv.dim("size") ** 2 * 0.8,
                                    edgecolors=hv.dim("line_colour"), linewidth=hv.dim("line_width")),
    })


# -- N-body survival ------------------------------------------------------------------------------
def _survival_dims(d):
    return [hv.Dimension("orbits", label="survival time [orbits of the innermost planet]", range=d["x_range"]),
            hv.Dimension("draws", label="draws", range=d["y_range"])]


def _histogram(group, label):
    def histogram(d, backend: str = "bokeh"):
        if backend == "matplotlib" and not np.sum(d["counts"]) > 0:
            return None   # a hidden element would still take a legend entry there
        # never hidden with Bokeh: a layer whose first frame is hidden keeps its first ranges (and the pane
        # holding the plot is hidden while there are no results)
        x_dim, y_dim = _survival_dims(d)
        return hv.Histogram((d["edges"], d["counts"]), kdims=[x_dim], vdims=[y_dim], group=group, label=label)
    histogram.__name__ = group
    return histogram


SURVIVAL_LAYERS = {"stopped": _histogram("DynamicsStopped", "stopped (unstable)"),
                   "survived": _histogram("DynamicsSurvived", "stable to the end")}
SURVIVAL_TITLE = "N-body ensemble: when the draws stopped"
SURVIVAL_STYLES = Styles(
    frame={"bokeh": dict(responsive=True, height=260, toolbar="above",
                         show_grid=True, title=SURVIVAL_TITLE, fontsize=FONT_SIZES),
           "matplotlib": dict(fig_size=220, aspect=2.6, title=SURVIVAL_TITLE)},
    bokeh=_framewise({
        "Histogram.DynamicsStopped": dict(color=STOPPED_COLOUR, line_color=palette.INK, tools=["hover"]),
        "Histogram.DynamicsSurvived": dict(color=SURVIVED_COLOUR, line_color=palette.INK, tools=["hover"]),
    }),
    matplotlib={
        "Histogram.DynamicsStopped": dict(color=STOPPED_COLOUR, edgecolor=palette.INK),
        "Histogram.DynamicsSurvived": dict(color=SURVIVED_COLOUR, edgecolor=palette.INK),
    })


def pairs_note(d, beta_cap: float) -> str:
    """What the AMD and overlap plots of derived state ``d`` show (beneath them; HTML)."""
    stable = d.system.get("amd_stable")
    share = (d.fractions or {}).get("system", {}).get("amd_stable")
    verdict = ("AMD-stable" if stable else "not AMD-stable") + (
        f" in {100 * share:.0f} % of the draws" if share is not None else "")
    parts = [f"Left: beta = AMD / critical AMD of each pair (Laskar &amp; Petit 2017; Petit, Laskar &amp; "
             f"Bou\u00e9 2017), bars in the inner planet's colour, the dashed line at 1; the system is "
             f"{verdict}. Bars above {beta_cap:g} are cut and labelled."]
    if not d.system.get("amd_kg_m2_s"):
        parts.append("AMD = 0 (circular orbits): every beta is 0.")
    parts.append("Right: each pair's period ratio (a disc in the inner planet's colour) against the shaded "
                 "zone where first-order resonances overlap (Deck, Payne &amp; Holman 2013) and the dotted "
                 "j:j\u22121 commensurabilities.")
    caption = interval_caption(d)
    if caption:
        parts.append(f"Error bars: {escape(caption)}.")
    parts.append("Both take mutual inclinations as zero.")
    return " ".join(parts)
