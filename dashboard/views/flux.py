"""Flux & temperature: the planet table and insolation against radius.

The table lists a, the orbit-averaged insolation S, the equilibrium
temperature Teq under the stated albedo and heat redistribution, the place
in the habitable zone, and the bulk properties, with masses estimated from
radius (Chen & Kipping 2017) marked as such. The scatter shows S on a
reversed logarithmic axis (hotter to the left, as is usual) against the
radius, with the four habitable-zone limits of Kopparapu et al. 2014 drawn
as named vertical lines and the zones between them shaded.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import panel as pn
from bokeh.models import BoxAnnotation, FixedTicker, Label, PrintfTickFormatter, Range1d, Span, Whisker

from orbitdeck.models.irradiation import HZ_LIMITS

from . import palette
from .common import (add_hover, follow, as_floats, batched, calm_selection, empty_source, interval, interval_caption,
                     new_figure, planet_table, range_texts, replace_data, span_texts, watch_taps, while_shown)

#: the limits' names as shown
HZ_LIMIT_LABELS = {"recent_venus": "recent Venus", "runaway_greenhouse": "runaway greenhouse",
                   "maximum_greenhouse": "maximum greenhouse", "early_mars": "early Mars"}
SIZE_PLAIN, SIZE_SELECTED = 12, 20
TABLE_FORMATS = {"P [d]": "0.0000", "a [au]": "0.00000", "S [S\u2295]": "0.000", "Teq [K]": "0.0",
                 "R [R\u2295]": "0.000", "M [M\u2295]": "0.000", "\u03c1 [g/cm\u00b3]": "0.00",
                 "g [m/s\u00b2]": "0.00", "v_esc [km/s]": "0.00"}


def hz_limit_fluxes(derived) -> dict | None:
    """Insolation [S_earth] at the four habitable-zone limits, S = L / d^2; None outside the fit's Teff range."""
    hz = derived.star["hz_au"]
    if not hz:
        return None
    luminosity = derived.star["luminosity_lsun"]
    return {k: luminosity / hz[k] ** 2 for k in HZ_LIMITS}


#: table columns that get a "+err −err" column beside them when there are Monte Carlo intervals
RANGED_COLUMNS = {"a [au]": ("semi_major_axis_au", 3), "S [S\u2295]": ("insolation_earth", 3),
                  "Teq [K]": ("teq_k", 3), "M [M\u2295]": ("mass_mearth", 3), "\u03c1 [g/cm\u00b3]": ("density_gcc", 3)}


def planet_frame(derived) -> pd.DataFrame:
    """The rows of the Flux & temperature table (with "+err \u2212err" columns when there are intervals)."""
    pl = derived.planets
    estimated = np.asarray(pl["mass_estimated"], dtype=bool)
    region = ["\u2014" if r is None else str(r) for r in pl["hz_region"]]
    frame = pd.DataFrame({
        "planet": [str(n) for n in pl["name"]], "P [d]": pl["period_d"], "a [au]": pl["semi_major_axis_au"],
        "S [S\u2295]": pl["insolation_earth"], "Teq [K]": pl["teq_k"], "HZ region": region,
        "R [R\u2295]": pl["radius_rearth"], "M [M\u2295]": pl["mass_mearth"],
        "mass": ["estimated" if e else "measured" for e in estimated],
        "\u03c1 [g/cm\u00b3]": pl["density_gcc"], "g [m/s\u00b2]": pl["surface_gravity_ms2"],
        "v_esc [km/s]": pl["escape_speed_kms"]})
    return with_ranges(frame, derived, "planets", RANGED_COLUMNS)


def with_ranges(frame: pd.DataFrame, derived, table: str, columns: dict) -> pd.DataFrame:
    """``frame`` with a "<column> 16\u201384%" text column ("+err \u2212err") after each of ``columns``."""
    if not derived.intervals:
        return frame
    for column, (key, digits) in columns.items():
        found = interval(derived, table, key)
        if found is not None:
            at = frame.columns.get_loc(column) + 1
            frame.insert(at, f"{column.split(' [')[0]} err (16\u201384%)", range_texts(frame[column], *found, digits))
    return frame


class FluxView:
    """The "Flux & temperature" view of one app."""

    title = "Flux & temperature"
    tab = title  # the tab the view is shown in

    def __init__(self, app):
        self.app = app
        self.x_range, self.y_range = Range1d(10.0, 0.1), Range1d(0.0, 2.0)
        fig = new_figure("Insolation and radius (hotter to the left)",
                         "orbit-averaged insolation S [S\u2295, Earth's = 1]", "planet radius [R\u2295]", tap=True,
                         height=440, x_axis_type="log", x_range=self.x_range, y_range=self.y_range)
        fig.xaxis.ticker = FixedTicker(ticks=[k * 10.0 ** n for n in range(-5, 6) for k in (1, 2, 5)],
                                       minor_ticks=[k * 10.0 ** n for n in range(-5, 6) for k in range(1, 10)])
        fig.xaxis.formatter = PrintfTickFormatter(format="%g")
        self.figure = fig
        self.sources = {"planets": empty_source("S", "R", "name", "colour", "size", "line_colour", "line_width",
                                                "teq", "region", "a", "S_range", "teq_range"),
                        "errors": empty_source("R", "lower", "upper", "colour")}
        s = self.sources["planets"]
        self.zones = {
            "conservative": BoxAnnotation(fill_color=palette.HZ_CONSERVATIVE_COLOUR, fill_alpha=0.25, line_alpha=0),
            "optimistic inner": BoxAnnotation(fill_color=palette.HZ_OPTIMISTIC_COLOUR, fill_alpha=0.3, line_alpha=0),
            "optimistic outer": BoxAnnotation(fill_color=palette.HZ_OPTIMISTIC_COLOUR, fill_alpha=0.3, line_alpha=0),
        }
        for box in self.zones.values():
            fig.add_layout(box)
        self.spans, self.span_labels = {}, {}
        for k in HZ_LIMITS:
            self.spans[k] = Span(location=1.0, dimension="height", line_color=palette.HZ_CONSERVATIVE_COLOUR,
                                 line_width=1.5, line_dash="dashed")
            self.span_labels[k] = Label(x=1.0, y=6, y_units="screen", text=HZ_LIMIT_LABELS[k], angle=np.pi / 2,
                                        x_offset=-4, text_font_size="11px", text_color="#2f6b16")
            fig.add_layout(self.spans[k])
            fig.add_layout(self.span_labels[k])
        self.hz_note = Label(x=8, y=8, x_units="screen", y_units="screen", text="", text_font_size="11px",
                             text_color="#8a2d00")
        fig.add_layout(self.hz_note)
        self.whiskers = Whisker(base="R", lower="lower", upper="upper", dimension="width",
                                source=self.sources["errors"], line_color="colour", line_width=2,
                                upper_head=None, lower_head=None)
        self.whiskers.upper_head = self.whiskers.lower_head = None
        fig.add_layout(self.whiskers)
        self.error_note = Label(x=8, y=24, x_units="screen", y_units="screen", text="", text_font_size="11px",
                                text_color="#444444", background_fill_color="white", background_fill_alpha=0.8)
        fig.add_layout(self.error_note)
        points = fig.scatter(x="S", y="R", size="size", fill_color="colour", line_color="line_colour",
                             line_width="line_width", source=s)
        fig.text(x="S", y="R", text="name", x_offset=10, y_offset=-8, text_font_size="12px", source=s)
        calm_selection(points)
        self.base_tooltips = [("planet", "@name"), ("S", "@S{0.000} S_earth"), ("radius", "@R{0.000} R_earth"),
                              ("Teq", "@teq{0.0} K"), ("HZ region", "@region"), ("a", "@a{0.00000} au")]
        self.range_tooltips = [("S 16th\u201384th pct", "@S_range S_earth"),
                               ("Teq 16th\u201384th pct", "@teq_range K")]
        self.hover = add_hover(fig, [points], self.base_tooltips)
        watch_taps(s, app)
        self.table, self._sync_table = planet_table(app, TABLE_FORMATS)
        follow(app, self.update, self._highlight)

    @while_shown
    @batched
    def update(self, *_):
        d = self.app.derived
        if d is None:
            return
        pl, names = d.planets, d.planet_names
        S, R = as_floats(pl["insolation_earth"]), as_floats(pl["radius_rearth"])
        regions = ["\u2014" if r is None else str(r) for r in pl["hz_region"]]
        colours = palette.planet_colours(len(names))
        s_interval, t_interval = interval(d, "planets", "insolation_earth"), interval(d, "planets", "teq_k")
        blank = [""] * len(names)
        replace_data(self.sources["planets"], {
            "S": S, "R": R, "name": list(names), "colour": colours,
            "teq": pl["teq_k"], "region": regions, "a": pl["semi_major_axis_au"],
            "S_range": span_texts(*s_interval) if s_interval else blank,
            "teq_range": span_texts(*t_interval, digits=4) if t_interval else blank, **self._marker_columns(names)})
        replace_data(self.sources["errors"],
                     {"R": R, "lower": s_interval[0], "upper": s_interval[1], "colour": colours}
                     if s_interval else {k: [] for k in self.sources["errors"].data})
        self.hover.tooltips = self.base_tooltips + (self.range_tooltips if s_interval else [])
        caption = interval_caption(d)
        self.error_note.text = f"horizontal bars: insolation, {caption}" if caption else ""
        limits = hz_limit_fluxes(d)
        shown = [v for v in S if v > 0] + ([v for v in s_interval[1] if v > 0] if s_interval else [])
        shown += [v for v in s_interval[0] if v > 0] if s_interval else []
        if limits:
            shown += [limits["recent_venus"], limits["early_mars"]]
            self._place_zones(limits)
            self.hz_note.text = ""
        else:
            self.hz_note.text = (f"no habitable-zone limits: Teff = {d.star['teff_k']:g} K is outside the "
                                 "2600-7200 K range of the Kopparapu et al. 2014 fit")
        for item in (*self.spans.values(), *self.span_labels.values(), *self.zones.values()):
            item.visible = bool(limits)
        hi, lo = (max(shown) * 2.0, min(shown) / 2.0) if shown else (10.0, 0.1)
        self.x_range.update(start=hi, end=lo)
        self.y_range.update(start=0.0, end=float(np.nanmax(R, initial=1.0)) * 1.25)
        self.table.value = planet_frame(d)
        self._sync_table()

    def _place_zones(self, limits: dict) -> None:
        for k, v in limits.items():
            self.spans[k].location = v
            self.span_labels[k].x = v
        self.zones["optimistic inner"].update(left=limits["recent_venus"], right=limits["runaway_greenhouse"])
        self.zones["conservative"].update(left=limits["runaway_greenhouse"], right=limits["maximum_greenhouse"])
        self.zones["optimistic outer"].update(left=limits["maximum_greenhouse"], right=limits["early_mars"])

    def _marker_columns(self, names) -> dict:
        chosen = [n == self.app.selected for n in names]
        return {"size": [SIZE_SELECTED if c else SIZE_PLAIN for c in chosen],
                "line_colour": [palette.HIGHLIGHT_COLOUR if c else "white" for c in chosen],
                "line_width": [3.0 if c else 1.0 for c in chosen]}

    @while_shown
    @batched
    def _highlight(self, *_):
        self.sources["planets"].data.update(self._marker_columns(list(self.sources["planets"].data["name"])))

    def panel(self):
        return pn.Column(pn.pane.Bokeh(self.figure, sizing_mode="stretch_width"), self.table,
                         pn.pane.HTML('<div style="font-size:12px;color:#555">Teq: no greenhouse effect, no '
                                      'internal heat. Estimated masses: Chen &amp; Kipping 2017 mass-radius '
                                      'relation.</div>'), sizing_mode="stretch_width")
