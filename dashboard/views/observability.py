"""Observability: transit and spectroscopy figures of merit.

A bar chart of the transmission spectroscopy metric TSM of Kempton et al.
2018 (which needs the star's J magnitude), with the 16th-84th percentiles
of the Monte Carlo draws as error bars and, on each bar, the threshold
that paper suggests for follow-up at that planet's radius (10 below
1.5 Rearth, 90 from 1.5 to 10 Rearth). The table below lists every
quantity the registry shows in this view (transit probability, depth,
duration, impact parameter, RV semi-amplitude, TSM, ESM), with their
ranges when there are draws.
"""

from __future__ import annotations

import holoviews as hv
import numpy as np
import panel as pn
import param

from orbitdeck.models.physics.observability import tsm_follow_up_threshold

from . import palette
from .common import (View, as_floats, batched, escape, interval, interval_caption, note, number_texts, select_on_tap,
                     while_shown)
from .plotting import FONT_SIZES, LayeredPlot, Styles, bar_colours, drawn, texts
from .tables import caution_html, link_selection, quantities_of, table_frame, table_widget

VIEW = "observability"
PLANET_DIM = hv.Dimension("planet")
THRESHOLD_COLOUR = "#141414"


def _planet_dim(d):
    """The planets, as categories given with the data (HoloViews would otherwise keep the categories of an
    earlier system on the axis once the error bars have been shown)."""
    return PLANET_DIM.clone(values=[str(n) for n in d["planets"]])


def _tsm_dim(d):
    return hv.Dimension("tsm", label="TSM (relative S/N of a transmission spectrum)", range=d["y_range"])


#: the bars' hover values that may be missing (no J or K magnitude), as text: a dash, where a bar of no length is drawn
HOVER_TEXTS = ("tsm_text", "esm_text", "tsm_range")


def bars(d):
    columns = {k: d[k] for k in ("planet", "tsm", "colour", "line_colour", "line_width", "depth", *HOVER_TEXTS)}
    for k in ("planet", "colour", "line_colour", *HOVER_TEXTS):
        columns[k] = texts(columns[k])
    return hv.Bars(columns,
                   [_planet_dim(d)], [_tsm_dim(d), "colour", "line_colour", "line_width", "depth", *HOVER_TEXTS],
                   group="ObservabilityTSM", label="TSM")


def errors(d):
    # never hidden (HoloViews does not show a Whisker again once hidden): a bar without a range is NaN, not drawn
    return hv.ErrorBars((texts(d["planet"]), d["tsm"], d["minus"], d["plus"]), [_planet_dim(d)],
                        [_tsm_dim(d), "minus", "plus"], group="ObservabilityRange", label="16th\u201384th percentiles")


def _thresholds(group, label):
    def thresholds(d):
        return drawn(hv.Scatter((texts(d["planet"]), d["threshold"]), [_planet_dim(d)], [_tsm_dim(d)], group=group,
                                label=label), len(d["planet"]) > 0)
    thresholds.__name__ = group
    return thresholds


#: the threshold marks: a dark dash over a wider light one, so they stand out on bars of any colour
LAYERS = {"bars": bars, "errors": errors, "halo": _thresholds("ObservabilityThresholdHalo", ""),
          "thresholds": _thresholds("ObservabilityThreshold", "follow-up threshold (Kempton et al. 2018)")}
TITLE = "Transmission spectroscopy metric (Kempton et al. 2018)"
STYLES = Styles(
    frame={"bokeh": dict(responsive=True, height=380, legend_position="right", toolbar="above", title=TITLE,
                         fontsize=FONT_SIZES, show_grid=True),
           "matplotlib": dict(fig_size=220, aspect=2.0, legend_position="right", title=TITLE)},
    bokeh={
        "Bars.ObservabilityTSM": dict(color=hv.dim("colour"), line_color=hv.dim("line_colour"),
                                      line_width=hv.dim("line_width"),
                                      tools=["hover", "tap"], nonselection_alpha=1.0, selection_alpha=1.0,
                                      hover_tooltips=[("planet", "@{planet}"), ("TSM", "@{tsm_text}"),
                                                      ("TSM 16th\u201384th pct", "@{tsm_range}"), ("ESM", "@{esm_text}"),
                                                      ("transit depth", "@depth{0} ppm")]),
        "ErrorBars.ObservabilityRange": dict(color=palette.INK, line_width=1.5, upper_head=None, lower_head=None),
        "Scatter.ObservabilityThresholdHalo": dict(marker="dash", size=46, color="#ffffff", line_width=7,
                                                   show_legend=False),
        "Scatter.ObservabilityThreshold": dict(marker="dash", size=44, color=THRESHOLD_COLOUR, line_width=3),
    },
    matplotlib={
        "Bars.ObservabilityTSM": dict(hooks=[bar_colours("colour", "line_colour", "line_width")]),
        "ErrorBars.ObservabilityRange": dict(color=palette.INK, linewidth=1.2, capsize=0),
        # a filled bar as the marker: matplotlib's "_" has no face
        "Scatter.ObservabilityThresholdHalo": dict(marker=[(-1, -0.2), (1, -0.2), (1, 0.2), (-1, 0.2)], s=760,
                                                   color="#ffffff", show_legend=False),
        "Scatter.ObservabilityThreshold": dict(marker=[(-1, -0.09), (1, -0.09), (1, 0.09), (-1, 0.09)], s=700,
                                               color=THRESHOLD_COLOUR),
    })


class ObservabilityView(View):
    """The "Observability" view of one app."""

    title = "Observability"

    def __init__(self, app, **params):
        super().__init__(app, **params)
        self.quantities = quantities_of(VIEW, "planets")
        self.plot = LayeredPlot(LAYERS, STYLES, self._layer_data())
        self.tap = select_on_tap(app, self.plot.dynamic["bars"], lambda: self.plot.data["bars"]["planet"])
        self.caption = note()
        self.table = table_widget(self._frame(), self.quantities)
        self._sync_table = link_selection(self.table, app, lambda: list(self.table.value["planet"]))
        self.caution = note()
        self._refresh()

    @param.depends("app.derived", watch=True)
    @while_shown
    @batched
    def _refresh(self):
        d = self.app.derived
        self.plot.update(**self._layer_data())
        self.table.value = self._frame()
        tsm = as_floats(d.planets["tsm"])
        notes = []
        if not np.isfinite(tsm).any():
            notes.append("TSM needs the star's J magnitude and ESM its K magnitude (j_mag, k_mag in the file).")
        notes.append("Dashes on the bars: the TSM above which Kempton et al. 2018 suggest follow-up at the "
                     "planet's radius (10 below 1.5 R\u2295, 90 from 1.5 to 10 R\u2295; none from 10 R\u2295).")
        caption = interval_caption(d)
        if caption:
            notes.append(f"Error bars: {escape(caption)}.")
        self.caption.object = " ".join(notes)
        self.caution.object = caution_html(self.quantities, d)
        self._sync_table()

    @param.depends("app.selected", watch=True)
    @while_shown
    @batched
    def _highlight(self):
        data = self.plot.data["bars"]
        self.plot.update(bars={**data, **self._outline(data["planet"])})
        self._sync_table()

    def _outline(self, names) -> dict:
        chosen = [n == self.app.selected for n in names]
        return {"line_width": np.array([3.0 if c else 0.6 for c in chosen]),
                "line_colour": [palette.HIGHLIGHT_COLOUR if c else "#333333" for c in chosen]}

    def _layer_data(self) -> dict:
        d = self.app.derived
        names = [str(n) for n in d.planet_names]
        tsm = as_floats(d.planets["tsm"])
        found = interval(d, "planets", "tsm")
        threshold = tsm_follow_up_threshold(as_floats(d.planets["radius_rearth"]))
        shown = np.concatenate([tsm, found[1] if found else [], threshold])
        shown = shown[np.isfinite(shown)]
        y_range = (0.0, 1.15 * float(shown.max()) if shown.size and shown.max() > 0 else 1.0)
        bars_ = {"planet": names, "planets": names, "tsm": np.where(np.isfinite(tsm), tsm, 0.0),
                 "colour": self.colours(names), "tsm_text": number_texts(tsm, "0.00"),
                 "esm_text": number_texts(d.planets["esm"], "0.00"), "depth": as_floats(d.planets["transit_depth_ppm"]),
                 "tsm_range": [f"{lo:.3g}\u2013{hi:.3g}" if np.isfinite(lo) and np.isfinite(hi) else ""
                               for lo, hi in zip(*found)] if found else [""] * len(names),
                 "y_range": y_range, **self._outline(names)}
        # a row for every planet, NaN (not drawn) without an interval: Bokeh's whiskers must not start out empty
        # (a Whisker added to a plot with no data has no view in the page when data come later)
        lo, hi = found if found else (np.full(len(names), np.nan),) * 2
        keep = np.isfinite(tsm) & np.isfinite(lo) & np.isfinite(hi)
        errors_ = {"planet": names, "planets": names, "tsm": np.where(keep, tsm, 0.0),
                   "minus": np.where(keep, np.maximum(tsm - lo, 0.0), np.nan),
                   "plus": np.where(keep, np.maximum(hi - tsm, 0.0), np.nan), "y_range": y_range}
        has = np.isfinite(threshold) & np.isfinite(tsm)
        thresholds_ = {"planet": [n for n, k in zip(names, has) if k], "planets": names, "threshold": threshold[has],
                       "y_range": y_range}
        return {"bars": bars_, "errors": errors_, "halo": thresholds_, "thresholds": thresholds_}

    def _frame(self):
        d = self.app.derived
        return table_frame(d, VIEW, "planets", {"planet": d.planet_names}, self.quantities)

    def panel(self):
        return pn.Column(pn.pane.HoloViews(self.plot.live(), sizing_mode="stretch_width", linked_axes=False),
                         self.caption, self.table, self.caution, sizing_mode="stretch_width")

    def figure(self, backend: str | None = None):
        return self.plot.figure(backend)
