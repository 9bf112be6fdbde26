"""The sky from one planet at the app's time, its change over a window, and coming close approaches.

Part of the "Neighbour skies" view. The star and the other planets are
placed by their direction seen from the selected planet: longitude along
that planet's orbital plane measured from the star (signed elongation) and
latitude off it, both in degrees, and drawn as discs of their true angular
diameter on equal axes, so the picture is to scale; a disc of the Moon seen
from Earth (0.518 deg) stands beside them for comparison. Geometry is that
of fixed Keplerian orbits (``orbitdeck.models.motion.ephemeris``); brightness is a
Lambert-sphere estimate with an assumed geometric albedo
(``orbitdeck.models.motion.sky_view``).

Over a window of time two plots follow: every body's apparent diameter (in
arcseconds, one line per body, named in the legend) and the elongation of
one body chosen beside the plot (in degrees); each plot keeps to one unit.

:class:`TimePlayer` steps or plays the app's time, which Layout and this view
share.
"""

from __future__ import annotations

import holoviews as hv
import numpy as np
import pandas as pd
import panel as pn
import param

from orbitdeck.models.motion import ephemeris
from orbitdeck.models.constants import MOON_ANGULAR_DIAMETER
from orbitdeck.models.motion.sky_view import close_approaches, sky_from

from . import palette
from .common import View, batched, escape, note, section, set_section, while_shown
from .entries import Entry, Rejected, parse_entry
from .plotting import FONT_SIZES, LayeredPlot, Styles, texts

#: times sampled over the window of the size and elongation plots
WINDOW_SAMPLES = 400
#: default window [d] and player step [d]
DEFAULT_WINDOW_D = 30.0
DEFAULT_STEP_D = 0.25
#: closest approaches listed for each other planet
APPROACHES_PER_BODY = 2
MOON_DEG = float(np.degrees(MOON_ANGULAR_DIAMETER))
#: the sky picture's frame [px]: fixed, so that names can be set apart by a known number of pixels
SKY_WIDTH_PX, SKY_HEIGHT_PX = 860, 300
DISC_POINTS = 48
LON_DIM = hv.Dimension("longitude", label="longitude from the star along the orbit", unit="deg")
LAT_DIM = hv.Dimension("latitude", label="latitude", unit="deg")
TIME_DIM = hv.Dimension("t", label="time after the start of the window", unit="d")


def sky_coordinates(elements, observer: int, time: float):
    """Directions of the star and the other planets from planet ``observer`` at ``time``.

    Longitude is measured in the observer's orbital plane from the star's
    direction, positive along the orbital motion; latitude is the angle off
    that plane (the plane's normal from the positions a quarter period apart).

    Returns
    -------
    longitude_deg, latitude_deg : ndarray
        One entry per body: the star first, then the other planets in period order.
    """
    quarter = elements.period_d[observer] / 4.0
    pos = ephemeris.positions(elements, np.array([time, time + quarter]))
    xyz = np.stack([pos.x_au, pos.y_au, pos.z_au], axis=-1)         # (2, planets, 3)
    here, later = xyz[0, observer], xyz[1, observer]
    normal = np.cross(here, later)
    normal /= np.linalg.norm(normal)
    others = [j for j in range(xyz.shape[1]) if j != observer]
    directions = np.concatenate([-here[None, :], xyz[0, others] - here], axis=0)
    with np.errstate(invalid="ignore"):   # a body at the observer's own place has no direction: NaN
        directions /= np.linalg.norm(directions, axis=-1, keepdims=True)
    u = directions[0]
    w = np.cross(normal, u)
    latitude = np.degrees(np.arcsin(np.clip(directions @ normal, -1.0, 1.0)))
    longitude = np.degrees(np.arctan2(directions @ w, directions @ u))
    return longitude, latitude


#: a name's width as a share of the picture's span of longitude, and the pixel offsets of names
#: above (negative) or below their bodies
_NAME_WIDTH_SHARE = 1.0 / 40.0
_NAME_ABOVE_PX, _NAME_BELOW_PX, _NAME_STEP_PX = -6.0, 14.0, 14.0


def name_offsets(longitude, latitude) -> np.ndarray:
    """Vertical pixel offsets of the bodies' names, so that names of bodies that stand close
    together in the sky take turns above and below them (further out each time) instead of
    overlapping; a lone body's name sits just above it."""
    longitude, latitude = np.asarray(longitude, dtype=float), np.asarray(latitude, dtype=float)
    if longitude.size == 0:
        return np.zeros(0)
    width = _NAME_WIDTH_SHARE * max(float(np.ptp(longitude)), 10.0)
    order = np.argsort(longitude, kind="stable")
    x, y = longitude[order], latitude[order]
    close = np.concatenate([[False], (np.diff(x) < width) & (np.abs(np.diff(y)) < width)])
    index = np.arange(x.size)
    slot = index - np.maximum.accumulate(np.where(close, 0, index))   # place within a run of close bodies
    away = (slot // 2) * _NAME_STEP_PX
    offsets = np.empty(x.size)
    offsets[order] = np.where(slot % 2 == 0, _NAME_ABOVE_PX - away, _NAME_BELOW_PX + away)
    return offsets


def sky_extent(longitude, latitude, radius_deg):
    """Longitude and latitude ranges [deg] of the picture: every disc and the Moon with a margin, the
    latitude span widened to the frame's shape so that degrees are equal both ways (with no disc, the
    frame's smallest span about 0)."""
    if np.size(longitude) == 0:
        longitude = latitude = radius_deg = np.zeros(1)
    lo = float(np.min(longitude - radius_deg)) - 2.0 * MOON_DEG
    hi = float(np.max(longitude + radius_deg)) + 2.0 * MOON_DEG
    if hi - lo < 10.0:
        middle = 0.5 * (lo + hi)
        lo, hi = middle - 5.0, middle + 5.0
    margin = 0.04 * (hi - lo)
    lon = (lo - margin, hi + margin)
    half = 0.5 * max((lon[1] - lon[0]) * SKY_HEIGHT_PX / SKY_WIDTH_PX,
                     2.2 * float(np.max(np.abs(latitude) + radius_deg)) + 3.0 * MOON_DEG)
    return lon, (-half, half)


# -- layers ---------------------------------------------------------------------------------------
def _sky_dims(d):
    return [LON_DIM.clone(range=d["x_range"]), LAT_DIM.clone(range=d["y_range"])]


def discs(d):
    shapes = [{"longitude": x, "latitude": y, "colour": c} for x, y, c in zip(d["xs"], d["ys"], d["colour"])]
    return hv.Polygons(shapes, _sky_dims(d), ["colour"], group="SkyDisc", label="bodies (discs to scale)")


MARK_VDIMS = ["body", "colour", "arcsec", "elongation", "phase", "lit", "brightness", "distance"]


def marks(d):
    columns = {k: d[k] for k in ("longitude", "latitude", *MARK_VDIMS)}
    for k in ("body", "colour"):
        columns[k] = texts(columns[k])
    return hv.Points(columns, _sky_dims(d), MARK_VDIMS, group="SkyMark", label="")


def sky_names(d):
    return hv.Labels((d["longitude"], d["latitude"], texts(d["text"])), _sky_dims(d), "text", group="SkyName")


def moon(d):
    return hv.Path([{"longitude": d["x"], "latitude": d["y"]}], _sky_dims(d), group="SkyMoon",
                   label="the Moon from Earth, to scale")


SKY_LAYERS = {"discs": discs, "moon": moon, "marks": marks, "names": sky_names}


def diameters(d, backend: str = "bokeh"):
    curves = {body: hv.Curve((d["t"], values), TIME_DIM, hv.Dimension("arcsec", label="apparent diameter",
                                                                       unit="arcsec"),
                             group="SkyDiameter", label=body).opts(color=colour, backend=backend)
              for body, values, colour in zip(d["bodies"], d["arcsec"], d["colour"])}
    return hv.NdOverlay(curves, kdims=["body"], sort=False)


def elongation(d, backend: str = "bokeh"):
    """The chosen body's elongation, keyed by the body (a new body is a new entry of the legend)."""
    curve = hv.Curve((d["t"], d["elongation"]), TIME_DIM,
                     hv.Dimension("elongation", label="elongation from the star", unit="deg"),
                     group="SkyElongation", label=d["body"]).opts(color=d["colour"], backend=backend)
    return hv.NdOverlay({d["body"]: curve}, kdims=["body"])


TRACK_STYLES = Styles(
    frame={"bokeh": dict(responsive=True, height=260, toolbar="above", legend_position="right", show_grid=True,
                         fontsize=FONT_SIZES),
           "matplotlib": dict(fig_size=220, aspect=2.0, legend_position="right")},
    bokeh={"Curve.SkyDiameter": dict(line_width=2, logy=True, tools=["hover"],
                                     title="Apparent diameter of each body over the window"),
           "Curve.SkyElongation": dict(line_width=2, tools=["hover"],
                                       title="Elongation from the star of the chosen body over the window")},
    matplotlib={"Curve.SkyDiameter": dict(linewidth=1.5, logy=True,
                                          title="Apparent diameter of each body over the window"),
                "Curve.SkyElongation": dict(linewidth=1.5,
                                            title="Elongation from the star of the chosen body over the window")})
SKY_STYLES = Styles(
    frame={"bokeh": dict(frame_width=SKY_WIDTH_PX, frame_height=SKY_HEIGHT_PX, toolbar="above", data_aspect=1,
                         legend_position="right", fontsize=FONT_SIZES),
           "matplotlib": dict(fig_size=250, aspect="equal", legend_position="right")},
    bokeh={"Polygons.SkyDisc": dict(color=hv.dim("colour"), line_color="#222222", alpha=0.9),
           "Path.SkyMoon": dict(color="#555555", line_dash="dashed", line_width=1.2),
           "Points.SkyMark": dict(color="colour", size=7, line_color="#222222", tools=["hover"],
                                  hover_tooltips=[("body", "@body"), ("angular diameter", "@arcsec{0.0} arcsec"),
                                                  ("distance", "@distance{0.00000} au"),
                                                  ("elongation", "@elongation{0.0} deg"),
                                                  ("phase angle", "@phase{0.0} deg"), ("illuminated", "@lit{0.00}"),
                                                  ("brightness", "@brightness{0.000e} \u00d7 the full Moon "
                                                                 "(estimate)")]),
           "Labels.SkyName": dict(text_font_size="11px", text_align="left", text_baseline="middle",
                                  text_color=palette.INK)},
    matplotlib={"Polygons.SkyDisc": dict(color=hv.dim("colour"), edgecolor="#222222", alpha=0.9),
                "Path.SkyMoon": dict(color="#555555", linestyle="--", linewidth=1.0),
                "Points.SkyMark": dict(color=hv.dim("colour"), s=25, edgecolors="#222222"),
                "Labels.SkyName": dict(size=8, horizontalalignment="left", verticalalignment="center",
                                       color=palette.INK)})


class SkyFromView(View):
    """The sky from the selected planet at the app's time (shown in the "Neighbour skies" tab)."""

    title = "Neighbour skies"
    window = param.Number(default=DEFAULT_WINDOW_D, bounds=(0.5, 5000.0), doc="Window of the plots over time [d]")
    body = param.String(default="", doc="The body whose elongation is plotted over the window")

    def __init__(self, app, **params):
        super().__init__(app, **params)
        self.window_input = Entry(label="Window of the plots below [d]", value=f"{self.window:g}",
                                                 width=220)
        self.window_message = pn.pane.HTML("", margin=(0, 10))
        self.window_input.param.watch(self._window, "value")
        self.body_select = pn.widgets.Select(label="Body for the elongation plot", options=[], width=220)
        self.body_select.param.watch(lambda e: setattr(self, "body", e.new or ""), "value")
        self.sky_title = section()
        self.caption = note()
        sky, tracks, table = self._data()
        self.sky = LayeredPlot(SKY_LAYERS, SKY_STYLES, sky)
        self.tracks = LayeredPlot({"diameters": diameters}, TRACK_STYLES, {"diameters": tracks["diameters"]})
        self.elongation = LayeredPlot({"elongation": elongation}, TRACK_STYLES, {"elongation": tracks["elongation"]})
        self.table = pn.widgets.Tabulator(table, disabled=True, show_index=False, selectable=False, height=220,
                                          layout="fit_data_table", sizing_mode="stretch_width", sortable=False)
        self._refresh()

    def _window(self, event):
        try:
            self.window = parse_entry(event.new, self.param.window, "Window", "d")
        except Rejected as error:
            self.window_message.object = f'<div role="alert" style="color:#a11a1a;font-size:12px">{escape(error)}</div>'
            return
        self.window_message.object = ""

    @param.depends("app.derived", "app.selected", "app.time", "app.elements", "window", "body", watch=True)
    @while_shown
    @batched
    def _refresh(self):
        sky, tracks, table = self._data()
        self.sky.update(**sky)
        self.tracks.update(diameters=tracks["diameters"])
        self.elongation.update(elongation=tracks["elongation"])
        self.table.value = table

    def _choose_body(self, bodies) -> str:
        """The body of the elongation plot: the one chosen if it is still in the sky, else the first planet."""
        others = [b for b in bodies if b != "star"]
        options = others or bodies
        if list(self.body_select.options) != options:
            self.body_select.options = options
        if self.body not in options:
            with param.parameterized.discard_events(self):
                self.body = options[0] if options else ""
        if self.body_select.value != self.body:
            self.body_select.value = self.body
        return self.body

    def _data(self):
        app, elements = self.app, self.app.elements
        names = list(elements.names)
        if app.selected not in names:
            set_section(self.sky_title, "Pick a planet to see its sky")
            return self._empty()
        observer, time = app.selected, float(app.time)
        a_au = elements.a_au
        now = sky_from(app.system, observer, time, a_au=a_au)
        longitude, latitude = sky_coordinates(elements, names.index(observer), time)
        radius = np.asarray(now["angular_diameter_arcsec"]) / 7200.0
        bodies = list(now["bodies"])
        colours = self.colours(bodies)
        # a body that overlaps the observer has no place in its sky (the caption says so): it is not drawn
        placed = np.isfinite(longitude) & np.isfinite(latitude) & np.isfinite(radius)
        star_radius = radius[0] if placed[0] else 0.0
        planets_seen = longitude[1:][placed[1:]]   # longitudes of the other planets drawn
        seen, seen_colours = [b for b, p in zip(bodies, placed) if p], [c for c, p in zip(colours, placed) if p]
        longitude, latitude, radius = longitude[placed], latitude[placed], radius[placed]
        x_range, y_range = sky_extent(longitude, latitude, radius)
        t = np.linspace(0.0, 2.0 * np.pi, DISC_POINTS + 1)
        # the reference Moon sits just beside the star's disc, on the side away from most bodies
        side = -1.0 if np.sum(planets_seen > 0) > np.sum(planets_seen < 0) else 1.0
        moon_x = side * (star_radius + MOON_DEG)
        per_px = (y_range[1] - y_range[0]) / SKY_HEIGHT_PX
        offsets = -name_offsets(longitude, latitude) * per_px     # pixels down -> degrees up
        shown = {k: np.asarray(now[k])[placed] for k in ("angular_diameter_arcsec", "elongation_deg",
                                                           "phase_angle_deg", "illuminated_fraction",
                                                           "brightness_moon_ratio", "distance_au")}
        sky = {
            "discs": {"xs": [x + r * np.cos(t) for x, r in zip(longitude, radius)],
                      "ys": [y + r * np.sin(t) for y, r in zip(latitude, radius)], "colour": seen_colours,
                      "x_range": x_range, "y_range": y_range},
            "moon": {"x": moon_x + 0.5 * MOON_DEG * np.cos(t), "y": 0.5 * MOON_DEG * np.sin(t),
                     "x_range": x_range, "y_range": y_range},
            "marks": {"longitude": longitude, "latitude": latitude, "body": seen, "colour": seen_colours,
                      "arcsec": shown["angular_diameter_arcsec"], "elongation": shown["elongation_deg"],
                      "phase": np.nan_to_num(shown["phase_angle_deg"].astype(float), nan=-1.0),
                      "lit": shown["illuminated_fraction"], "brightness": shown["brightness_moon_ratio"],
                      "distance": shown["distance_au"], "x_range": x_range, "y_range": y_range},
            "names": {"longitude": longitude + 0.006 * (x_range[1] - x_range[0]), "latitude": latitude + offsets,
                      "text": [f"{b}" for b in seen], "x_range": x_range, "y_range": y_range},
        }
        set_section(self.sky_title, f"The sky of planet {escape(observer)} at BJD_TDB {time:.4f}")
        span = float(self.window or DEFAULT_WINDOW_D)
        times = time + np.linspace(0.0, span, WINDOW_SAMPLES)
        track = sky_from(app.system, observer, times, a_au=a_au)
        rel = times - time
        chosen = self._choose_body(bodies)
        index = bodies.index(chosen) if chosen in bodies else 0
        tracks = {"diameters": {"t": rel, "bodies": bodies, "colour": colours,
                                "arcsec": list(np.asarray(track["angular_diameter_arcsec"]).T)},
                  "elongation": {"t": rel, "elongation": np.asarray(track["elongation_deg"])[:, index],
                                 "body": chosen or "", "colour": colours[index] if colours else palette.INK}}
        events = close_approaches(app.system, observer, after=time, count=APPROACHES_PER_BODY, a_au=a_au)
        rows = sorted(((b["body"], e["time"], e["distance_au"], e["angular_diameter_arcsec"])
                       for b in events["bodies"] for e in b["approaches"]), key=lambda r: r[1])
        table = pd.DataFrame(rows, columns=["body", "time [BJD_TDB]", "distance [au]", "diameter [arcsec]"])
        for column, decimals in (("time [BJD_TDB]", 4), ("distance [au]", 6), ("diameter [arcsec]", 1)):
            table[column] = [f"{v:.{decimals}f}" for v in table[column]]
        warnings = list(dict.fromkeys(now["warnings"] + events.get("warnings", [])))
        self.caption.object = (f"Discs to scale; hover for phase and brightness. Dashed: the Moon seen from Earth "
                               f"({MOON_DEG:.3f}\u00b0), to scale. Fixed Keplerian orbits (no mutual perturbations); "
                               "brightness assumes a geometric albedo of 0.3."
                               + "".join(f" {escape(w)}" for w in warnings))
        return sky, tracks, table

    def _empty(self):
        none, blank = (-1.0, 1.0), np.zeros(0)
        sky = {"discs": {"xs": [], "ys": [], "colour": [], "x_range": none, "y_range": none},
               "moon": {"x": blank, "y": blank, "x_range": none, "y_range": none},
               "marks": {"longitude": blank, "latitude": blank, **{k: [] for k in MARK_VDIMS}, "x_range": none,
                         "y_range": none},
               "names": {"longitude": blank, "latitude": blank, "text": [], "x_range": none, "y_range": none}}
        tracks = {"diameters": {"t": blank, "bodies": [], "arcsec": [], "colour": []},
                  "elongation": {"t": blank, "elongation": blank, "body": "", "colour": palette.INK}}
        return sky, tracks, pd.DataFrame(columns=["body", "time [BJD_TDB]", "distance [au]", "diameter [arcsec]"])

    def panel(self):
        return pn.Column(
            self.sky_title, pn.pane.HoloViews(self.sky.live(), linked_axes=False), self.caption, self.window_input,
            self.window_message,
            pn.pane.HoloViews(self.tracks.live(), sizing_mode="stretch_width", linked_axes=False),
            pn.Row(self.body_select, sizing_mode="stretch_width"),
            pn.pane.HoloViews(self.elongation.live(), sizing_mode="stretch_width", linked_axes=False),
            section("Coming close approaches"),
            self.table, sizing_mode="stretch_width")

    def figure(self, backend: str | None = None):
        sky = self.sky.figure(backend)
        observer = self.app.selected
        if backend is not None and observer in list(self.app.elements.names):
            # the page says this above the plot; a figure standing alone says it in its title
            sky = sky.opts(title=f"The sky of planet {observer} at BJD_TDB {float(self.app.time):.4f} (discs to "
                                 "scale; dashed: the Moon seen from Earth)", backend=backend)
        return [sky, self.tracks.figure(backend), self.elongation.figure(backend)]


class TimePlayer:
    """Step or play the app's time (shared by Layout and Neighbour skies)."""

    def __init__(self, app):
        self.app = app
        self.step = Entry(label="Step of the time buttons [d]", value=f"{DEFAULT_STEP_D:g}", width=150)
        self.back = pn.widgets.Button(label="\u25c0 step", width=78, description="Step the time back")
        self.forward = pn.widgets.Button(label="step \u25b6", width=78, description="Step the time forward")
        self.play = pn.widgets.Toggle(label="play", width=78)
        self.back.on_click(lambda _: self.advance(-1))
        self.forward.on_click(lambda _: self.advance(+1))
        self.play.param.watch(self._toggle, "value")
        self._callback = None

    def step_days(self) -> float:
        """The step typed in (the default one while the text is not a positive number)."""
        try:
            value = float(self.step.value)
        except (TypeError, ValueError):
            return DEFAULT_STEP_D
        return value if np.isfinite(value) and value > 0 else DEFAULT_STEP_D

    def advance(self, direction: int) -> None:
        self.app.time = float(self.app.time) + direction * self.step_days()

    def _toggle(self, event):
        if event.new and self._callback is None:
            self._callback = pn.state.add_periodic_callback(lambda: self.advance(+1), period=500)
        elif not event.new and self._callback is not None:
            self._callback.stop()
            self._callback = None

    def panel(self):
        return pn.Column(pn.Row(self.back, self.play, self.forward), self.step)
