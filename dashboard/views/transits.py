"""Transit planner: the coming transits of every planet on a timeline, and which a site can observe.

Time runs across (BJD_TDB shown as a calendar date), one row per planet,
inner planets on top. Each transit is a tick at its mid-time and, when
zoomed in, a bar from ingress to egress inside its 1-sigma and 3-sigma
windows (the linear ephemeris' uncertainty grows with the epoch). With a
site and the star's coordinates, nights (Sun below the chosen altitude) are
shaded and transits that cannot be observed are drawn faint. Transits of
two or more planets at the same time are marked. The table below lists
every transit; a row, a tick or a planet's row picks that planet in every
view. Built with HoloViews (Bokeh backend): one ``DynamicMap`` whose
overlay is redrawn when the forecast or the selected planet changes.
"""

from __future__ import annotations

import html
import math

import holoviews as hv
import numpy as np
import pandas as pd
import panel as pn
import param
from bokeh.models import NumberFormatter

from orbitdeck.models.forecast import (DEFAULT_MAX_SUN_ALTITUDE_DEG, DEFAULT_MIN_ALTITUDE_DEG, Conditions,
                                       ForecastInputError, forecast_transits)
from orbitdeck.models.system import SITE_ELEVATION_RANGE, Site

from . import palette
from .plotting import load_backend

#: choices of the range control: label -> days
SPANS = {"7 days": 7.0, "30 days": 30.0, "90 days": 90.0, "1 year": 365.25}
NO_SITE = "no site"
TYPED_SITE = "latitude, longitude, elevation below"
#: night shading (our own colour: the page header's slate, faint)
NIGHT_COLOUR = "#2d3a4a"
NIGHT_ALPHA = 0.13
#: faint colour of transits that cannot be observed from the site
UNOBSERVABLE_COLOUR = "#b9b9b9"
_UNIX_EPOCH_JD = 2440587.5
_MS_PER_DAY = 86_400_000.0
CAUTION = ("Predictions from a linear ephemeris (T0 + n P, uncorrelated errors of T0 and P; transit-timing "
           "variations not modelled): model estimates, not observations. Altitudes are geometric (no refraction).")
#: how the table shows its numbers (Bokeh's formatters: no thousands separators in Julian dates)
TABLE_FORMATS = {"mid [BJD_TDB]": "0.00000", "ingress [BJD_TDB]": "0.00000", "egress [BJD_TDB]": "0.00000",
                 "1 sigma [min]": "0.00", "altitude [deg]": "0.0", "airmass": "0.00", "Sun [deg]": "0.0",
                 "Moon sep. [deg]": "0", "Moon lit": "0.00"}
KEY = ("Ticks: transits at their mid-times (faint: not observable from the site; thin: not even partly); "
       "shaded: nights; ▼: transits of two or more planets at once. Zoom in (wheel) to see each bar from "
       "ingress to egress inside its 1-sigma and 3-sigma windows. Click a row, a tick or a table row to pick a "
       "planet.")
TABLE_COLUMNS = {"planet": "planet", "epoch": "epoch", "mid_bjd_tdb": "mid [BJD_TDB]", "sigma_min": "1 sigma [min]",
                 "ingress_bjd_tdb": "ingress [BJD_TDB]", "egress_bjd_tdb": "egress [BJD_TDB]",
                 "mid_utc": "mid [UTC]", "altitude_deg": "altitude [deg]", "airmass": "airmass",
                 "sun_altitude_deg": "Sun [deg]", "moon_separation_deg": "Moon sep. [deg]",
                 "moon_illuminated_fraction": "Moon lit", "observable": "observable", "overlaps": "overlaps"}


def calendar_dates(bjd) -> np.ndarray:
    """BJD_TDB [d] as numpy datetimes on the TDB scale (the axis labels them as such)."""
    milliseconds = np.round((np.asarray(bjd, dtype=float) - _UNIX_EPOCH_JD) * _MS_PER_DAY)
    return milliseconds.astype("int64").astype("datetime64[ms]")


class TransitPlannerView(param.Parameterized):
    """The "Transit planner" view of one app: timeline, table and the range and site controls."""

    title = "Transit planner"
    tab = title

    start_text = param.String(default="", doc="Start of the range: BJD_TDB or an ISO date (UTC)")
    span = param.Selector(default="30 days", objects=list(SPANS), doc="Length of the range")
    site_choice = param.Selector(default=NO_SITE, objects=[NO_SITE, TYPED_SITE], doc="The observing site")
    latitude = param.Number(default=0.0, bounds=(-90.0, 90.0), doc="Site latitude [deg]")
    longitude = param.Number(default=0.0, bounds=(-180.0, 360.0), doc="Site longitude, east positive [deg]")
    elevation = param.Number(default=0.0, bounds=SITE_ELEVATION_RANGE, doc="Site elevation [m]")
    min_altitude = param.Number(default=DEFAULT_MIN_ALTITUDE_DEG, bounds=(0.0, 89.0),
                                doc="Lowest altitude of the star over a transit's window [deg]")
    version = param.Integer(default=0, doc="Counts the forecasts made (the timeline follows it)")
    highlight = param.String(default=None, allow_None=True, doc="The planet drawn selected")

    def __init__(self, app, **params):
        super().__init__(**params)
        load_backend("bokeh")   # HoloViews' Bokeh options, without changing the current backend
        self.app = app
        self.forecast = None
        self.sky = None
        self.night_bounds = (np.zeros(0), np.zeros(0))
        self.rows: list[dict] = []
        self.message = pn.pane.HTML("", sizing_mode="stretch_width", margin=(0, 10))
        self.table = pn.widgets.Tabulator(pd.DataFrame(), disabled=True, show_index=False, selectable=1,
                                          pagination="local", page_size=12, sizing_mode="stretch_width",
                                          layout="fit_data_table",
                                          formatters={k: NumberFormatter(format=v) for k, v in TABLE_FORMATS.items()})
        self.table.param.watch(self._table_selection, "selection")
        self.dynamic = hv.DynamicMap(self.timeline)
        self.tap = hv.streams.Tap(source=self.dynamic, x=None, y=None)
        self.tap.add_subscriber(self._tapped)
        self.start_text = f"{app.system.epoch:.5f}"
        self._offer_file_sites()
        self.param.watch(self._inputs_changed, ["start_text", "span", "site_choice", "latitude", "longitude",
                                                "elevation", "min_altitude"])
        app.param.watch(self._inputs_changed, ["derived", "system"])
        app.param.watch(self._selection_changed, "selected")
        self.highlight = app.selected
        self.update()

    # -- following the app ------------------------------------------------------------
    def _when_shown(self, method) -> bool:
        """False (the call kept for later) while the view's tab is hidden in a served page."""
        if self.app.tab_hidden(self.tab):
            self.app.mark_stale(self.tab, (id(self), method.__name__), method)
            return False
        return True

    def _offer_file_sites(self) -> None:
        names = [s.name for s in self.app.system.sites]
        choice = self.site_choice if self.site_choice in (NO_SITE, TYPED_SITE, *names) else NO_SITE
        self.param.site_choice.objects = [NO_SITE, TYPED_SITE, *names]
        if choice == NO_SITE and names:
            choice = names[0]   # the file's first site, when it names one
        self.site_choice = choice

    def _inputs_changed(self, *events) -> None:
        if any(e.name == "system" for e in events):
            self._offer_file_sites()
        if self._when_shown(self.update):
            self.update()

    def _selection_changed(self, *_) -> None:
        if self._when_shown(self._select):
            self._select()

    def _select(self) -> None:
        self.highlight = self.app.selected
        self._select_table_row()

    # -- the forecast -----------------------------------------------------------------
    def site(self) -> Site | None:
        """The chosen site, or None."""
        if self.site_choice == NO_SITE:
            return None
        if self.site_choice == TYPED_SITE:
            return Site("typed site", self.latitude, self.longitude, self.elevation)
        return self.app.system.site(self.site_choice)

    def update(self) -> None:
        """Forecast the range again from the app's system and the controls."""
        from orbitdeck.models.sites import parse_time, star_coordinate
        from orbitdeck.models.visibility import forecast_rows, nights, transit_sky

        system, site = self.app.system, self.site()
        star = system.star
        notes, self.forecast, self.sky, self.rows = [], None, None, []
        self.night_bounds = (np.zeros(0), np.zeros(0))
        try:
            start, note = parse_time(self.start_text, star_coordinate(star) if star.has_position else None)
            notes += [note] if note else []
            forecast = forecast_transits(system, start, start + SPANS[self.span])
        except (ValueError, ForecastInputError) as error:
            problems = getattr(error, "problems", [("start", str(error))])
            self._show([f"{field}: {reason}" for field, reason in problems], error=True)
            return
        notes += list(forecast.notes)
        if site is not None and not star.has_position:
            notes.append("the system file gives no star.ra and star.dec: no nights, altitudes or observability")
        elif site is not None:
            conditions = Conditions(self.min_altitude, DEFAULT_MAX_SUN_ALTITUDE_DEG)
            self.sky = transit_sky(forecast, star, site, conditions)
            self.night_bounds = nights(star, site, forecast.start, forecast.end, conditions.max_sun_altitude_deg)
            notes += list(self.sky.notes)
        self.forecast, self.rows = forecast, forecast_rows(forecast, self.sky)
        self._show(notes)

    def _show(self, notes: list[str], error: bool = False) -> None:
        with pn.io.hold():
            colour = "#8a2d00" if error else "#5c4400"
            items = "".join(f'<li style="color:{colour}">{html.escape(n)}</li>' for n in notes)
            self.message.object = (f'<div style="font-size:12px;color:#444">{html.escape(CAUTION)} {html.escape(KEY)}'
                                   + (f'<ul style="margin:2px 0">{items}</ul>' if items else "") + "</div>")
            columns = [k for k in TABLE_COLUMNS if not self.rows or k in self.rows[0]]
            frame = pd.DataFrame([{TABLE_COLUMNS[k]: r[k] for k in columns} for r in self.rows],
                                 columns=[TABLE_COLUMNS[k] for k in columns])
            if "overlaps" in frame:
                frame["overlaps"] = [", ".join(v) for v in frame["overlaps"]]
            self.table.value = frame
            self._select_table_row()
            self.version += 1

    # -- the timeline -------------------------------------------------------------------
    @param.depends("version", "highlight")
    def timeline(self):
        """The timeline overlay: nights, the selected planet's row, windows, bars, ticks and overlaps."""
        names = list(self.app.system.planet_names)
        colours = self.app.colours.colours(names)
        forecast = self.forecast
        height = max(200, 46 * len(names) + 90)
        elements = [self._nights(len(names)), self._selected_row(names, forecast)]
        if forecast is not None and len(forecast):
            elements += self._transits(forecast, names, colours)
        ticks = [(i, str(n)) for i, n in enumerate(names)]
        limits = {} if forecast is None else {"xlim": (calendar_dates(forecast.start), calendar_dates(forecast.end))}
        return hv.Overlay(elements).opts(
            responsive=True, height=height, invert_yaxis=True, yticks=ticks, ylim=(-0.5, len(names) - 0.5),
            xlabel="BJD_TDB (as a calendar date)", ylabel="planet", show_legend=False, backend="bokeh",
            title=self.title + (": " + self._subtitle() if forecast is not None else ""), **limits)

    def _subtitle(self) -> str:
        site = self.site()
        return ("no site chosen" if site is None or self.sky is None else
                f"nights (Sun below {DEFAULT_MAX_SUN_ALTITUDE_DEG:g} deg) at latitude {site.latitude:g} deg, "
                f"longitude {site.longitude:g} deg east, {site.elevation:g} m")

    def _nights(self, rows: int):
        begin, end = self.night_bounds
        data = [(b, -0.5, e, rows - 0.5) for b, e in zip(calendar_dates(begin), calendar_dates(end))]
        return hv.Rectangles(data, kdims=["x", "y", "x1", "y1"]).opts(
            fill_color=NIGHT_COLOUR, fill_alpha=NIGHT_ALPHA, line_alpha=0.0, backend="bokeh")

    def _selected_row(self, names, forecast):
        chosen = [i for i, n in enumerate(names) if n == self.highlight]
        data = [] if not chosen or forecast is None else [
            (calendar_dates(forecast.start), chosen[0] - 0.5, calendar_dates(forecast.end), chosen[0] + 0.5)]
        return hv.Rectangles(data, kdims=["x", "y", "x1", "y1"]).opts(
            fill_color=palette.HIGHLIGHT_COLOUR, fill_alpha=0.06, line_alpha=0.0, backend="bokeh")

    def _transits(self, forecast, names, colours) -> list:
        row = forecast.planet.astype(float)
        seen = np.ones(len(forecast), dtype=bool) if self.sky is None else self.sky.observable | self.sky.partial
        colour = np.where(seen, np.array(colours, dtype=object)[forecast.planet], UNOBSERVABLE_COLOUR)
        known = np.isfinite(forecast.duration)
        half = np.where(known, 0.5 * forecast.duration, 0.0)
        table = pd.DataFrame({
            "planet": [names[i] for i in forecast.planet], "epoch": forecast.epoch, "row": row, "colour": colour,
            "mid": calendar_dates(forecast.mid), "bjd": forecast.mid, "sigma_min": forecast.sigma * 1440.0,
            "state": self._states(len(forecast)), "width": np.where(seen, 3.0, 1.5)})
        elements = []
        for sigmas, alpha in ((3.0, 0.25), (1.0, 0.5)):
            low, high = forecast.window(sigmas)
            frame = table.assign(x0=calendar_dates(low - half), x1=calendar_dates(high + half),
                                 y0=row - 0.3, y1=row + 0.3)
            elements.append(hv.Rectangles(frame, ["x0", "y0", "x1", "y1"], ["planet", "colour"]).opts(
                fill_color="colour", fill_alpha=alpha, line_alpha=0.0, backend="bokeh"))
        bars = table.assign(x0=calendar_dates(forecast.mid - half), x1=calendar_dates(forecast.mid + half),
                            y0=row - 0.18, y1=row + 0.18)
        hover = [("planet", "@planet"), ("epoch", "@epoch"), ("mid BJD_TDB", "@bjd{0.00000}"),
                 ("1 sigma [min]", "@sigma_min{0.00}"), ("at the site", "@state")]
        elements.append(hv.Rectangles(bars, ["x0", "y0", "x1", "y1"], ["planet", "epoch", "bjd", "sigma_min", "state",
                                                                       "colour"]).opts(
            fill_color="colour", line_color="colour", tools=["hover"], hover_tooltips=hover, backend="bokeh"))
        ticks = table.assign(y0=row - 0.38, y1=row + 0.38, x1=table["mid"])
        elements.append(hv.Segments(ticks, ["mid", "y0", "x1", "y1"], ["planet", "epoch", "bjd", "sigma_min", "state",
                                                                       "colour", "width"]).opts(
            color="colour", line_width="width", tools=["hover", "tap"], hover_tooltips=hover, backend="bokeh"))
        marked = np.flatnonzero([bool(o) for o in forecast.overlaps])
        overlaps = pd.DataFrame({"mid": calendar_dates(forecast.mid[marked]), "y": row[marked] - 0.42,
                                 "with": [", ".join(forecast.overlaps[k]) for k in marked],
                                 "planet": [names[forecast.planet[k]] for k in marked]})
        elements.append(hv.Scatter(overlaps, "mid", ["y", "planet", "with"]).opts(
            marker="inverted_triangle", size=9, color=palette.HIGHLIGHT_COLOUR,
            tools=["hover"], hover_tooltips=[("planet", "@planet"), ("in transit together with", "@with")],
            backend="bokeh"))
        return elements

    def _states(self, count: int) -> list[str]:
        if self.sky is None:
            return ["no site"] * count
        return ["observable" if o else "partial" if p else "not observable"
                for o, p in zip(self.sky.observable, self.sky.partial)]

    # -- picking a planet ------------------------------------------------------------------
    def _tapped(self, x=None, y=None, **_) -> None:
        names = self.app.system.planet_names
        if y is None or not (isinstance(y, (int, float)) and math.isfinite(y)):
            return
        row = int(round(y))
        if 0 <= row < len(names):
            self.app.selected = names[row]

    def _table_selection(self, event) -> None:
        if event.new and self.rows and event.new[0] < len(self.rows):
            planet = self.rows[event.new[0]]["planet"]
            if planet != self.app.selected:
                self.app.selected = planet

    def _select_table_row(self) -> None:
        """Select the selected planet's first transit in the table (nothing when it has none)."""
        rows = [i for i, r in enumerate(self.rows) if r["planet"] == self.app.selected]
        current = self.table.selection
        if rows and current and current[0] < len(self.rows) and self.rows[current[0]]["planet"] == self.app.selected:
            return
        self.table.selection = rows[:1]

    # -- layout ----------------------------------------------------------------------------
    def controls(self) -> pn.Column:
        start = pn.widgets.TextInput.from_param(self.param.start_text, label="Start (BJD_TDB or ISO date, UTC)",
                                                width=230)
        span = pn.widgets.Select.from_param(self.param.span, label="Range", width=110)
        site = pn.widgets.Select.from_param(self.param.site_choice, label="Site", width=250)
        numbers = [pn.widgets.FloatInput.from_param(self.param[name], label=label, width=130)
                   for name, label in (("latitude", "Latitude [deg]"), ("longitude", "Longitude E [deg]"),
                                       ("elevation", "Elevation [m]"), ("min_altitude", "Min. altitude [deg]"))]
        # two plain rows, not a FlexBox: its "__ref:" tag carries a model id that snapshots cannot renumber
        return pn.Column(pn.Row(start, span, site), pn.Row(*numbers), sizing_mode="stretch_width")

    def panel(self) -> pn.Column:
        return pn.Column(self.controls(), self.message, pn.pane.HoloViews(self.dynamic, backend="bokeh", sizing_mode="stretch_width"),
                         self.table, sizing_mode="stretch_width")
