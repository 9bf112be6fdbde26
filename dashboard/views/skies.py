"""Neighbour skies: how large the star and each other planet can appear in every planet's sky.

A matrix observer x body of the largest apparent diameter (at the closest
approach of the two orbits, ``Derived.skies``), in units of the Moon's
diameter seen from Earth, and for the selected observer a bar chart of the
same values. These are geometric maxima on fixed Keplerian orbits, not
predictions of a given night.
"""

from __future__ import annotations

import numpy as np
import panel as pn
from bokeh.models import ColorBar, FactorRange, Label, LogColorMapper, Span, Title
from bokeh.palettes import Cividis256

from . import palette
from .common import (add_hover, follow, batched, calm_selection, empty_source, interval, interval_caption,
                     new_figure, replace_data, span_texts, watch_taps, while_shown)
from .sky_from import SkyFromView

#: above this many planets the values are no longer printed inside the cells
MAX_PLANETS_WITH_CELL_TEXT = 12
STAR_FACTOR = "star"


def _cell_text_colour(values, low: float, high: float) -> list[str]:
    """Black text on the light (high) end of Cividis, white on the dark end."""
    span = np.log(high) - np.log(low) if high > low else 1.0
    t = (np.log(np.maximum(values, low)) - np.log(low)) / span
    return ["#000000" if v > 0.55 else "#ffffff" for v in t]


class SkiesView:
    """The "Neighbour skies" view of one app."""

    title = "Neighbour skies"
    tab = title  # the tab the view is shown in

    def __init__(self, app):
        self.app = app
        self.mapper = LogColorMapper(palette=Cividis256, low=0.01, high=10.0)
        matrix = new_figure("Largest apparent diameter of each body in each planet's sky",
                            "body seen", "observer (planet)", tap=True, height=460,
                            x_range=FactorRange(), y_range=FactorRange())
        matrix.xgrid.grid_line_color = matrix.ygrid.grid_line_color = None
        matrix.xaxis.major_label_text_font_size = matrix.yaxis.major_label_text_font_size = "12px"
        self.matrix = matrix
        columns = ("observer", "body", "moon_ratio", "arcsec", "distance", "text", "text_colour",
                   "moon_range", "arcsec_range")
        self.sources = {"cells": empty_source(*columns), "row": empty_source("observer", "body"),
                        "bars": empty_source("body", "moon_ratio", "arcsec", "distance", "colour",
                                             "moon_range", "arcsec_range")}
        #: tooltip lines added when there are Monte Carlo intervals
        self.range_tooltips = [("16th\u201384th pct", "@moon_range x the Moon"), ("", "@arcsec_range arcsec")]
        s = self.sources
        cells = matrix.rect(x="body", y="observer", width=1, height=1, source=s["cells"], line_color="white",
                            fill_color={"field": "moon_ratio", "transform": self.mapper})
        matrix.text(x="body", y="observer", text="text", text_color="text_colour", text_align="center",
                    text_baseline="middle", text_font_size="11px", source=s["cells"])
        row = matrix.rect(x="body", y="observer", width=0.94, height=0.9, fill_alpha=0,
                          line_color=palette.HIGHLIGHT_COLOUR, line_width=2.5, source=s["row"])
        calm_selection(cells)
        calm_selection(row)
        self.cell_tooltips = [("observer", "@observer"), ("body", "@body"),
                              ("largest diameter", "@moon_ratio{0.000} x the Moon from Earth"),
                              ("", "@arcsec{0.0} arcsec"), ("closest distance", "@distance{0.00000} au")]
        self.cell_hover = add_hover(matrix, [cells], self.cell_tooltips)
        matrix.add_layout(ColorBar(color_mapper=self.mapper, title="x Moon's diameter from Earth",
                                   title_text_font_size="11px", width=12), "right")
        watch_taps(s["cells"], app, "observer")

        bars = new_figure("", "body seen", "largest apparent diameter [Moon diameters from Earth]",
                          height=340, x_range=FactorRange())
        bars.xgrid.grid_line_color = None
        self.bars = bars
        bar = bars.vbar(x="body", top="moon_ratio", width=0.7, fill_color="colour", line_color="#333333",
                        source=s["bars"])
        calm_selection(bar)
        bars.y_range.start = 0
        bars.add_layout(Span(location=1.0, dimension="width", line_color="#555555", line_dash="dashed"))
        bars.add_layout(Label(x=4, y=1.0, x_units="screen", text="the Moon from Earth", text_font_size="11px",
                              text_color="#555555", y_offset=3))
        self.bar_tooltips = [("body", "@body"), ("largest diameter", "@moon_ratio{0.000} x the Moon"),
                             ("", "@arcsec{0.0} arcsec"), ("closest distance", "@distance{0.00000} au")]
        self.bar_hover = add_hover(bars, [bar], self.bar_tooltips)
        # under the axis, where it can cover neither a bar nor the Moon line's label
        self.error_note = Title(text="", text_font_size="11px", text_font_style="normal", text_color="#444444")
        bars.add_layout(self.error_note, "below")
        self.sky_from = SkyFromView(app)
        follow(app, self.update, self._observer)

    @while_shown
    @batched
    def update(self, *_):
        d = self.app.derived
        if d is None:
            return
        sk, names = d.skies, d.planet_names
        ratio = np.asarray(sk["moon_ratio"], dtype=float)
        positive = ratio[np.isfinite(ratio) & (ratio > 0)]
        low, high = (float(positive.min()), float(positive.max())) if positive.size else (0.01, 10.0)
        if high <= low:
            low, high = low / 2.0, high * 2.0
        self.mapper.update(low=low, high=high)
        show_text = len(names) <= MAX_PLANETS_WITH_CELL_TEXT
        self.matrix.x_range.factors = [STAR_FACTOR, *names]
        self.matrix.y_range.factors = list(reversed(names))
        replace_data(self.sources["cells"], {
            "observer": list(sk["observer"]), "body": list(sk["body"]), "moon_ratio": ratio,
            "arcsec": sk["max_angular_diameter_arcsec"], "distance": sk["closest_distance_au"],
            "text": [f"{v:.2g}" if show_text else "" for v in ratio],
            "text_colour": _cell_text_colour(ratio, low, high), **self._range_columns(d, slice(None))})
        ranged = bool(d.intervals)
        self.cell_hover.tooltips = self.cell_tooltips + (self.range_tooltips if ranged else [])
        self.bar_hover.tooltips = self.bar_tooltips + (self.range_tooltips if ranged else [])
        caption = interval_caption(d)
        self.error_note.text = f"ranges in the tooltips: {caption}" if caption else ""
        self._observer()

    @while_shown
    @batched
    def _observer(self, *_):
        d, chosen = self.app.derived, self.app.selected
        if d is None:
            return
        sk, names = d.skies, d.planet_names
        rows = np.flatnonzero(np.asarray(sk["observer"]) == chosen) if chosen in names else np.array([], int)
        bodies = [str(b) for b in np.asarray(sk["body"])[rows]]
        replace_data(self.sources["row"], {"observer": [chosen] * len(rows), "body": bodies})
        colours = [palette.STAR_COLOUR if b == STAR_FACTOR and i == 0 else palette.body_colour(b, names)
                   for i, b in enumerate(bodies)]
        self.bars.x_range.factors = bodies
        replace_data(self.sources["bars"], {
            "body": bodies, "moon_ratio": np.asarray(sk["moon_ratio"], dtype=float)[rows],
            "arcsec": np.asarray(sk["max_angular_diameter_arcsec"])[rows],
            "distance": np.asarray(sk["closest_distance_au"])[rows], "colour": colours,
            **self._range_columns(d, rows)})
        self.bars.title.text = (f"In the sky of planet {chosen}: largest apparent diameters (closest approach)"
                                if rows.size else "Pick a planet to see its sky")

    @staticmethod
    def _range_columns(d, rows) -> dict:
        """"lo\u2013hi" texts of the moon ratio and the arcseconds for ``rows`` (blank without draws)."""
        moon, arcsec = interval(d, "skies", "moon_ratio"), interval(d, "skies", "max_angular_diameter_arcsec")
        count = len(np.asarray(d.skies["observer"])[rows])
        return {"moon_range": span_texts(moon[0][rows], moon[1][rows], 3) if moon else [""] * count,
                "arcsec_range": span_texts(arcsec[0][rows], arcsec[1][rows], decimals=1) if arcsec else [""] * count}

    def panel(self):
        return pn.Column(pn.pane.Bokeh(self.matrix, sizing_mode="stretch_width"),
                         pn.pane.Bokeh(self.bars, sizing_mode="stretch_width"), self.sky_from.panel(),
                         sizing_mode="stretch_width")
