"""Observability: transit and spectroscopy figures of merit.

Transit depth, total duration T14, impact parameter and geometric transit
probability (Winn 2010), the radial-velocity semi-amplitude K, and the
transmission and emission spectroscopy metrics TSM and ESM of Kempton et al.
2018 (which need the star's J and K magnitudes), with a bar chart of TSM.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import panel as pn
from bokeh.models import FactorRange

from . import palette
from .common import (add_hover, follow, as_floats, batched, calm_selection, empty_source, interval_caption,
                     new_figure, number_texts, planet_table, replace_data, watch_taps, while_shown)
from .flux import with_ranges

TABLE_FORMATS = {"depth [ppm]": "0", "T14 [h]": "0.000", "b": "0.000", "transit probability": "0.0000",
                 "TSM": "0.00", "ESM": "0.000", "K [m/s]": "0.000"}


#: table columns that get a "+err \u2212err" column beside them when there are Monte Carlo intervals
RANGED_COLUMNS = {"depth [ppm]": ("transit_depth_ppm", 3), "T14 [h]": ("transit_duration_h", 3),
                  "TSM": ("tsm", 3), "ESM": ("esm", 3), "K [m/s]": ("rv_semi_amplitude_ms", 3)}


def observability_frame(derived) -> pd.DataFrame:
    """The rows of the Observability table (with "+err \u2212err" columns when there are intervals)."""
    pl = derived.planets
    frame = pd.DataFrame({
        "planet": [str(n) for n in pl["name"]], "depth [ppm]": pl["transit_depth_ppm"],
        "T14 [h]": pl["transit_duration_h"], "b": pl["impact_parameter"],
        "transit probability": pl["transit_probability"], "TSM": pl["tsm"], "ESM": pl["esm"],
        "K [m/s]": pl["rv_semi_amplitude_ms"]})
    return with_ranges(frame, derived, "planets", RANGED_COLUMNS)


class ObservabilityView:
    """The "Observability" view of one app."""

    title = "Observability"
    tab = title  # the tab the view is shown in

    def __init__(self, app):
        self.app = app
        fig = new_figure("Transmission spectroscopy metric (Kempton et al. 2018)", "planet",
                         "TSM (relative S/N of transmission spectra)", tap=True, height=360, x_range=FactorRange())
        fig.xgrid.grid_line_color = None
        fig.y_range.start = 0
        self.figure = fig
        self.sources = {"bars": empty_source("name", "tsm", "esm", "tsm_text", "esm_text", "depth", "colour",
                                             "line_width", "line_colour")}
        s = self.sources["bars"]
        bars = fig.vbar(x="name", top="tsm", width=0.7, fill_color="colour", line_color="line_colour",
                        line_width="line_width", source=s)
        calm_selection(bars)
        # TSM and ESM as text: a star without J or K magnitude has none (a bar of height 0, NaN)
        add_hover(fig, [bars], [("planet", "@name"), ("TSM", "@tsm_text"), ("ESM", "@esm_text"),
                                ("transit depth", "@depth{0} ppm")])
        watch_taps(s, app)
        self.note = pn.pane.HTML("", styles={"color": "#8a2d00"})
        self.table, self._sync_table = planet_table(app, TABLE_FORMATS)
        follow(app, self.update, self._highlight)

    @while_shown
    @batched
    def update(self, *_):
        d = self.app.derived
        if d is None:
            return
        pl, names = d.planets, [str(n) for n in d.planet_names]
        tsm = as_floats(pl["tsm"])
        self.figure.x_range.factors = names
        replace_data(self.sources["bars"], {
            "name": names, "tsm": np.where(np.isfinite(tsm), tsm, 0.0), "esm": as_floats(pl["esm"]),
            "tsm_text": number_texts(tsm), "esm_text": number_texts(pl["esm"]),
            "depth": as_floats(pl["transit_depth_ppm"]), "colour": palette.planet_colours(len(names)),
            **self._outline(names)})
        notes = [] if np.isfinite(tsm).any() else [
            "TSM needs the star's J magnitude and ESM its K magnitude (j_mag, k_mag in the file)."]
        caption = interval_caption(d)
        if caption:
            notes.append(f'<span style="color:#444">"+err \u2212err" columns: {caption}</span>')
        self.note.object = "<br>".join(notes)
        self.table.value = observability_frame(d)
        self._sync_table()

    def _outline(self, names) -> dict:
        chosen = [n == self.app.selected for n in names]
        return {"line_width": [3.0 if c else 0.5 for c in chosen],
                "line_colour": [palette.HIGHLIGHT_COLOUR if c else "#333333" for c in chosen]}

    @while_shown
    @batched
    def _highlight(self, *_):
        self.sources["bars"].data.update(self._outline(list(self.sources["bars"].data["name"])))

    def panel(self):
        return pn.Column(pn.pane.Bokeh(self.figure, sizing_mode="stretch_width"), self.note, self.table,
                         sizing_mode="stretch_width")
