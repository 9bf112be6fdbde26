"""Transit planner: the coming transits of every planet on a timeline, and which a site can observe.

Time runs across (BJD_TDB shown as a calendar date), one row per planet,
inner planets on top. Each transit is a tick at its mid-time and, when
zoomed in, a bar from ingress to egress inside its 1-sigma and 3-sigma
windows (the linear ephemeris' uncertainty grows with the epoch). With a
site and the star's coordinates, nights (Sun below the chosen altitude) are
shaded and transits that cannot be observed are drawn faint. Transits of
two or more planets at the same time are marked. The table below lists
every transit; a row, a tick or a planet's row picks that planet in every
view. Built with HoloViews: one ``DynamicMap`` whose overlay is redrawn
when the forecast or the selected planet changes; the looks of its
elements are kept per backend (:class:`~.plotting.Styles`), so the same
timeline renders live through Bokeh and as a static figure through
matplotlib (:meth:`TransitPlannerView.figure`).
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

from orbitdeck.models.motion.forecast import (DEFAULT_MAX_SUN_ALTITUDE_DEG, DEFAULT_MIN_ALTITUDE_DEG, Conditions,
                                       ForecastInputError, forecast_transits)
from orbitdeck.models.files.system import SITE_ELEVATION_RANGE, Site

from . import palette
from .common import while_shown
from .plotting import Styles, load_backend

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


def axis_times(bjd, backend: str = "bokeh") -> np.ndarray:
    """BJD_TDB [d] as positions on the timeline's calendar axis: numpy datetimes for Bokeh, matplotlib's date
    numbers for matplotlib (whose Rectangles and Segments take no datetimes; a hook labels them as dates)."""
    if backend == "bokeh":
        return calendar_dates(bjd)
    from matplotlib.dates import date2num

    return np.asarray(date2num(calendar_dates(np.atleast_1d(bjd))), dtype=float).reshape(np.shape(bjd))


def calendar_axis(plot, element):
    """A matplotlib hook: the time axis labelled as calendar dates (it holds matplotlib's date numbers)."""
    from matplotlib.dates import AutoDateLocator, ConciseDateFormatter

    locator = AutoDateLocator(minticks=4, maxticks=9)
    axis = plot.handles["axis"].xaxis
    axis.set_major_locator(locator)
    axis.set_major_formatter(ConciseDateFormatter(locator))


#: what a transit's bar and tick tell on hover (Bokeh)
HOVER = [("planet", "@planet"), ("epoch", "@epoch"), ("mid BJD_TDB", "@bjd{0.00000}"),
         ("1 sigma [min]", "@{sigma_min}{0.00}"), ("at the site", "@state")]
#: the 3-sigma and 1-sigma windows: (sigmas, opacity, group)
WINDOWS = ((3.0, 0.25, "TransitWindow3"), (1.0, 0.5, "TransitWindow1"))
_AXES = dict(xlabel="BJD_TDB (as a calendar date)", ylabel="planet", invert_yaxis=True, show_legend=False)
#: the timeline's looks per backend, registered once per process as the defaults of its groups
STYLES = Styles(
    frame={"bokeh": dict(_AXES, responsive=True), "matplotlib": dict(_AXES, fig_size=260, hooks=[calendar_axis])},
    bokeh={"Rectangles.TransitNight": dict(fill_color=NIGHT_COLOUR, fill_alpha=NIGHT_ALPHA, line_alpha=0.0),
           "Rectangles.TransitSelectedRow": dict(fill_color=palette.HIGHLIGHT_COLOUR, fill_alpha=0.06, line_alpha=0.0),
           **{f"Rectangles.{group}": dict(fill_color="colour", fill_alpha=alpha, line_alpha=0.0)
              for _, alpha, group in WINDOWS},
           "Rectangles.TransitBar": dict(fill_color="colour", line_color="colour", tools=["hover"],
                                         hover_tooltips=HOVER),
           "Segments.TransitTick": dict(color="colour", line_width="width", tools=["hover", "tap"],
                                        hover_tooltips=HOVER),
           "Scatter.TransitOverlap": dict(marker="inverted_triangle", size=9, color=palette.HIGHLIGHT_COLOUR,
                                          tools=["hover"], hover_tooltips=[("planet", "@planet"),
                                                                           ("in transit together with", "@with")])},
    matplotlib={"Rectangles.TransitNight": dict(facecolor=NIGHT_COLOUR, alpha=NIGHT_ALPHA, linewidth=0),
                "Rectangles.TransitSelectedRow": dict(facecolor=palette.HIGHLIGHT_COLOUR, alpha=0.06, linewidth=0),
                **{f"Rectangles.{group}": dict(facecolor=hv.dim("colour"), alpha=alpha, linewidth=0)
                   for _, alpha, group in WINDOWS},
                "Rectangles.TransitBar": dict(facecolor=hv.dim("colour"), edgecolor=hv.dim("colour")),
                "Segments.TransitTick": dict(color=hv.dim("colour"), linewidth=hv.dim("width")),
                "Scatter.TransitOverlap": dict(marker="v", s=45, color=palette.HIGHLIGHT_COLOUR)})


class TransitPlannerView(param.Parameterized):
    """The "Transit planner" view of one app: timeline, table and the range and site controls."""

    title = "Transit planner"
    tab = title
    #: the settings that shape the figure, carried over to a copy of the session (figures.session_copy)
    figure_parameters = ("start_text", "span", "site_choice", "latitude", "longitude", "elevation", "min_altitude")

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
        STYLES.register("bokeh")
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
        self.update()

    def _selection_changed(self, *_) -> None:
        self._select()

    @while_shown
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

    @while_shown
    def update(self) -> None:
        """Forecast the range again from the app's system and the controls (later, while the tab is hidden in a
        served page)."""
        from orbitdeck.models.motion.sites import parse_time, star_coordinate
        from orbitdeck.models.motion.visibility import forecast_rows, nights, transit_sky

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
        return self._timeline("bokeh")

    def _timeline(self, backend: str):
        """The timeline overlay, with the options of its frame that the state decides given for ``backend``."""
        names = list(self.app.system.planet_names)
        colours = self.app.colours.colours(names)
        forecast = self.forecast
        height = max(200, 46 * len(names) + 90)
        elements = [self._nights(len(names), backend), self._selected_row(names, forecast, backend)]
        if forecast is not None and len(forecast):
            elements += self._transits(forecast, names, colours, backend)
        ticks = [(i, str(n)) for i, n in enumerate(names)]
        limits = {} if forecast is None else {"xlim": (axis_times(forecast.start, backend),
                                                       axis_times(forecast.end, backend))}
        # the plot grows with the planets: Bokeh in pixels, matplotlib by its aspect at a fixed width
        size = {"height": height} if backend == "bokeh" else {"aspect": min(max(1100.0 / height, 1.6), 4.5)}
        return hv.Overlay(elements).opts(
            yticks=ticks, ylim=(-0.5, len(names) - 0.5), backend=backend, **STYLES.overlay_options(backend),
            title=self.title + (": " + self._subtitle() if forecast is not None else ""), **size, **limits)

    def figure(self, backend: str | None = None):
        """The timeline as plain HoloViews objects of the current state (styled for ``backend`` if given)."""
        if backend is not None:
            STYLES.register(backend)
        return self._timeline(backend or "bokeh")

    def _subtitle(self) -> str:
        site = self.site()
        return ("no site chosen" if site is None or self.sky is None else
                f"nights (Sun below {DEFAULT_MAX_SUN_ALTITUDE_DEG:g} deg) at latitude {site.latitude:g} deg, "
                f"longitude {site.longitude:g} deg east, {site.elevation:g} m")

    def _nights(self, rows: int, backend: str = "bokeh"):
        begin, end = self.night_bounds
        data = [(b, -0.5, e, rows - 0.5) for b, e in zip(axis_times(begin, backend), axis_times(end, backend))]
        return hv.Rectangles(data, kdims=["x", "y", "x1", "y1"], group="TransitNight")

    def _selected_row(self, names, forecast, backend: str = "bokeh"):
        chosen = [i for i, n in enumerate(names) if n == self.highlight]
        data = [] if not chosen or forecast is None else [
            (axis_times(forecast.start, backend), chosen[0] - 0.5, axis_times(forecast.end, backend), chosen[0] + 0.5)]
        return hv.Rectangles(data, kdims=["x", "y", "x1", "y1"], group="TransitSelectedRow")

    def _transits(self, forecast, names, colours, backend: str = "bokeh") -> list:
        row = forecast.planet.astype(float)
        seen = np.ones(len(forecast), dtype=bool) if self.sky is None else self.sky.observable | self.sky.partial
        colour = np.where(seen, np.array(colours, dtype=object)[forecast.planet], UNOBSERVABLE_COLOUR)
        known = np.isfinite(forecast.duration)
        half = np.where(known, 0.5 * forecast.duration, 0.0)
        table = pd.DataFrame({
            "planet": [names[i] for i in forecast.planet], "epoch": forecast.epoch, "row": row, "colour": colour,
            "mid": axis_times(forecast.mid, backend), "bjd": forecast.mid, "sigma_min": forecast.sigma * 1440.0,
            "state": self._states(len(forecast)), "width": np.where(seen, 3.0, 1.5)})
        elements = []
        for sigmas, _, group in WINDOWS:
            low, high = forecast.window(sigmas)
            frame = table.assign(x0=axis_times(low - half, backend), x1=axis_times(high + half, backend),
                                 y0=row - 0.3, y1=row + 0.3)
            elements.append(hv.Rectangles(frame, ["x0", "y0", "x1", "y1"], ["planet", "colour"], group=group))
        bars = table.assign(x0=axis_times(forecast.mid - half, backend), x1=axis_times(forecast.mid + half, backend),
                            y0=row - 0.18, y1=row + 0.18)
        elements.append(hv.Rectangles(bars, ["x0", "y0", "x1", "y1"], ["planet", "epoch", "bjd", "sigma_min", "state",
                                                                       "colour"], group="TransitBar"))
        ticks = table.assign(y0=row - 0.38, y1=row + 0.38, x1=table["mid"])
        elements.append(hv.Segments(ticks, ["mid", "y0", "x1", "y1"], ["planet", "epoch", "bjd", "sigma_min", "state",
                                                                       "colour", "width"], group="TransitTick"))
        marked = np.flatnonzero([bool(o) for o in forecast.overlaps])
        overlaps = pd.DataFrame({"mid": axis_times(forecast.mid[marked], backend), "y": row[marked] - 0.42,
                                 "with": [", ".join(forecast.overlaps[k]) for k in marked],
                                 "planet": [names[forecast.planet[k]] for k in marked]})
        elements.append(hv.Scatter(overlaps, "mid", ["y", "planet", "with"], group="TransitOverlap"))
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
