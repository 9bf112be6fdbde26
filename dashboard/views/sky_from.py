"""The sky from one planet at the app's time, its change over a window, and coming close approaches.

Part of the "Neighbour skies" view. The star and the other planets are
placed by their direction seen from the selected planet: longitude along
that planet's orbital plane measured from the star (signed elongation) and
latitude off it, both in degrees, and drawn as discs of their true angular
diameter on equal axes, so the picture is to scale; a disc of the Moon seen
from Earth (0.518 deg) stands beside them for comparison. Geometry is that
of fixed Keplerian orbits (``orbitdeck.models.ephemeris``); brightness is a
Lambert-sphere estimate with an assumed geometric albedo
(``orbitdeck.models.sky_view``).

:class:`TimePlayer` steps or plays the app's time, which Layout and this view
share.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import panel as pn
from bokeh.models import Label

from orbitdeck.models import ephemeris
from orbitdeck.models.constants import MOON_ANGULAR_DIAMETER
from orbitdeck.models.sky_view import close_approaches, sky_from

from . import palette
from .common import (add_hover, batched, calm_selection, empty_source, new_figure, replace_data, table_widget,
                     while_shown)

#: times sampled over the window of the size and elongation plot
WINDOW_SAMPLES = 400
#: default window [d] and player step [d]
DEFAULT_WINDOW_D = 30.0
DEFAULT_STEP_D = 0.25
#: closest approaches listed for each other planet
APPROACHES_PER_BODY = 2
MOON_DEG = float(np.degrees(MOON_ANGULAR_DIAMETER))


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


class SkyFromView:
    """The sky from the selected planet at the app's time."""

    tab = "Neighbour skies"  # shown in the tab of SkiesView

    def __init__(self, app):
        self.app = app
        self.window = pn.widgets.FloatInput(name="Window of the plots below [d]", value=DEFAULT_WINDOW_D,
                                            start=0.5, end=5000.0, step=1.0, width=220)
        sky = new_figure("", "longitude from the star along the orbit [deg]", "latitude [deg]",
                         height=330, match_aspect=True)
        self.sky = sky
        self.sources = {"discs": empty_source("x", "y", "radius", "colour", "body", "arcsec", "elongation",
                                              "phase", "lit", "brightness", "distance", "name_offset"),
                        "moon": empty_source("x", "y", "radius")}
        discs = sky.circle(x="x", y="y", radius="radius", fill_color="colour", line_color="#222222",
                           fill_alpha=0.85, source=self.sources["discs"])
        marks = sky.scatter(x="x", y="y", size=7, marker="circle", fill_color="colour", line_color="#222222",
                            source=self.sources["discs"])
        sky.text(x="x", y="y", text="body", text_font_size="11px", x_offset=6, y_offset="name_offset",
                 source=self.sources["discs"])
        sky.circle(x="x", y="y", radius="radius", fill_alpha=0, line_color="#555555", line_dash="dashed",
                   source=self.sources["moon"])
        self.moon_label = Label(x=0, y=0, text="dashed: the Moon from Earth, to scale", text_font_size="10px",
                                text_color="#555555", text_align="center", text_baseline="top")
        sky.add_layout(self.moon_label)
        for renderer in (discs, marks):
            calm_selection(renderer)
        add_hover(sky, [discs, marks], [
            ("body", "@body"), ("angular diameter", "@arcsec{0.0} arcsec"), ("distance", "@distance{0.00000} au"),
            ("elongation", "@elongation{0.0} deg"), ("phase angle", "@phase{0.0} deg"),
            ("illuminated", "@lit{0.00}"), ("brightness", "@brightness{0.000e} x the full Moon (estimate)")])

        size = new_figure("Apparent diameter over the window", "time [BJD_TDB - start, d]",
                          "angular diameter [arcsec]", height=260, y_axis_type="log")
        elongation = new_figure("Elongation from the star over the window", "time [BJD_TDB - start, d]",
                                "elongation [deg]", height=260, x_range=size.x_range)
        self.size, self.elongation = size, elongation
        self.sources["tracks"] = empty_source("t", "arcsec", "elongation", "colour", "body")
        size.multi_line(xs="t", ys="arcsec", line_color="colour", line_width=2, source=self.sources["tracks"])
        elongation.multi_line(xs="t", ys="elongation", line_color="colour", line_width=2,
                              source=self.sources["tracks"])
        for fig in (size, elongation):
            add_hover(fig, fig.renderers, [("body", "@body")])
        self.table = table_widget({"body": [], "time [BJD_TDB]": [], "distance [au]": [], "diameter [arcsec]": []},
                                  formats={"time [BJD_TDB]": "0.0000", "distance [au]": "0.000000",
                                           "diameter [arcsec]": "0.0"}, height=220, selectable=False)
        self.note = pn.pane.HTML("", margin=(0, 10))
        app.param.watch(self.update, ["derived", "selected", "time", "elements"])
        self.window.param.watch(self.update, "value")
        self.update()

    @while_shown
    @batched
    def update(self, *_):
        app, elements = self.app, self.app.elements
        if elements is None or app.selected not in list(elements.names):
            self.sky.title.text = "Pick a planet to see its sky"
            return
        observer, time = app.selected, float(app.time)
        a_au = elements.a_au
        names = list(elements.names)
        now = sky_from(app.system, observer, time, a_au=a_au)
        longitude, latitude = sky_coordinates(elements, names.index(observer), time)
        bodies = now["bodies"]
        colours = [palette.STAR_COLOUR if b == "star" else palette.body_colour(b, names) for b in bodies]
        replace_data(self.sources["discs"], {
            "x": longitude, "y": latitude, "radius": now["angular_diameter_arcsec"] / 7200.0,
            "colour": colours, "body": bodies, "arcsec": now["angular_diameter_arcsec"],
            "elongation": now["elongation_deg"], "phase": np.nan_to_num(now["phase_angle_deg"], nan=-1.0),
            "lit": now["illuminated_fraction"], "brightness": now["brightness_moon_ratio"],
            "distance": now["distance_au"], "name_offset": name_offsets(longitude, latitude)})
        # the reference Moon sits just beside the star's disc, on the side away from most bodies
        side = -1.0 if np.sum(longitude[1:] > 0) > np.sum(longitude[1:] < 0) else 1.0
        moon_x = side * (now["angular_diameter_arcsec"][0] / 7200.0 + MOON_DEG)
        replace_data(self.sources["moon"], {"x": [moon_x], "y": [0.0], "radius": [MOON_DEG / 2.0]})
        # the label runs inwards from the Moon's outer edge (outwards it would leave the picture),
        # below the discs and so clear of the bodies' names above them
        self.moon_label.update(x=moon_x + side * MOON_DEG / 2.0, text_align="right" if side > 0 else "left",
                               y=-max(MOON_DEG, now["angular_diameter_arcsec"][0] / 7200.0), y_offset=-8)
        self.sky.title.text = (f"The sky of planet {observer} at BJD_TDB {time:.4f} "
                               "(discs to scale; hover for phase and brightness)")

        start, span = time, float(self.window.value or DEFAULT_WINDOW_D)
        times = start + np.linspace(0.0, span, WINDOW_SAMPLES)
        track = sky_from(app.system, observer, times, a_au=a_au)
        rel = times - start
        replace_data(self.sources["tracks"], {
            "t": [rel] * len(bodies), "arcsec": list(track["angular_diameter_arcsec"].T),
            "elongation": list(track["elongation_deg"].T), "colour": colours, "body": bodies})

        events = close_approaches(app.system, observer, after=time, count=APPROACHES_PER_BODY, a_au=a_au)
        rows = [(b["body"], e["time"], e["distance_au"], e["angular_diameter_arcsec"])
                for b in events["bodies"] for e in b["approaches"]]
        rows.sort(key=lambda r: r[1])
        self.table.value = pd.DataFrame(rows, columns=list(self.table.value.columns))
        notes = list(dict.fromkeys(now["warnings"] + events.get("warnings", [])))
        self.note.object = ("<div style='font-size:12px;color:#555'>Fixed Keplerian orbits (no mutual "
                            "perturbations); brightness assumes a geometric albedo of 0.3.</div>"
                            + "".join(f"<div style='font-size:12px;color:#7a5a00'>{_esc(n)}</div>" for n in notes))

    def panel(self):
        return pn.Column(
            pn.pane.Bokeh(self.sky, sizing_mode="stretch_width"), self.note, self.window,
            pn.Row(pn.pane.Bokeh(self.size, sizing_mode="stretch_width"),
                   pn.pane.Bokeh(self.elongation, sizing_mode="stretch_width"), sizing_mode="stretch_width"),
            pn.pane.HTML("<b>Coming close approaches</b> (minima of the separation on the Keplerian orbits)",
                         margin=(0, 10)),
            self.table, sizing_mode="stretch_width")


def _esc(text) -> str:
    import html

    return html.escape(str(text), quote=True)


class TimePlayer:
    """Step or play the app's time (shared by Layout and Neighbour skies)."""

    def __init__(self, app):
        self.app = app
        self.step = pn.widgets.FloatInput(name="Step of the time buttons [d]", value=DEFAULT_STEP_D,
                                          start=1e-4, end=1e4, width=150)
        self.back = pn.widgets.Button(name="\u25c0 step", width=78)
        self.forward = pn.widgets.Button(name="step \u25b6", width=78)
        self.play = pn.widgets.Toggle(name="play", width=78)
        self.back.on_click(lambda _: self.advance(-1))
        self.forward.on_click(lambda _: self.advance(+1))
        self.play.param.watch(self._toggle, "value")
        self._callback = None

    def advance(self, direction: int) -> None:
        self.app.time = float(self.app.time) + direction * float(self.step.value or DEFAULT_STEP_D)

    def _toggle(self, event):
        if event.new and self._callback is None:
            self._callback = pn.state.add_periodic_callback(lambda: self.advance(+1), period=500)
        elif not event.new and self._callback is not None:
            self._callback.stop()
            self._callback = None

    def panel(self):
        return pn.Column(pn.Row(self.back, self.play, self.forward), self.step)
