"""Layout: the system seen from above its orbital plane, to scale.

Orbits are drawn as Keplerian ellipses with the star at one focus, from
a, e and omega in the orbital plane (longitude of node 0, so the angle of a
point is omega + f and the observer lies along +y: a planet transits at
omega + f = 90 deg, Winn 2010). Planets sit where Kepler's equation puts
them at the chosen time (``orbitdeck.models.motion.ephemeris.positions``), the
habitable zone is the project's graded, partly hatched band
(:mod:`.habitable`, drawn as an image of the annulus), the star is a disc
of its own radius, Hill spheres are drawn on demand (enlarged by a stated
factor when they would be smaller than a few pixels) and a Solar System
orbit can be added for scale. With a pinned reference, its orbits are drawn
dashed and its planets as rings at the same time, in the planets' colours
(:mod:`.pinned`). Everything is in au on equal axes; notes sit beneath the
plot, never over it.
"""

from __future__ import annotations

import holoviews as hv
import numpy as np
import panel as pn
import param

from orbitdeck.models.constants import AU, R_SUN

from . import habitable, palette, pinned
from .common import View, batched, escape, interval, interval_caption, note, select_on_tap, span_texts, while_shown
from .orbit_drawing import circle_points, curve_segments, ellipse_points, in_plane_positions, orbit_ellipses
from .plotting import FONT_SIZES, LayeredPlot, Styles, drawn, texts, with_a_row

#: Solar System orbits offered for scale: circles of radius a [au]
#: (semi-major axes of Mercury 0.387 au and Venus 0.723 au from memory; Earth 1 au)
REFERENCE_ORBITS = {"none": None, "Mercury (0.387 au)": 0.387, "Venus (0.723 au)": 0.723, "Earth (1 au)": 1.0}
SIZE_PLAIN, SIZE_SELECTED = 11, 18
#: rings of the pinned reference's planets (drawn hollow, so a planet that did not move shows inside its ring)
PINNED_SIZE = 17
#: pixels of the habitable-zone image across
HZ_PIXELS = 320
#: Hill spheres are drawn at least this share of the shown half-width across (about 8 px), enlarged by a
#: round factor when needed; the factor is stated in the legend
HILL_MIN_SHARE = 0.014
HILL_FACTORS = (1, 2, 5, 10, 20, 50, 100, 200, 500, 1000)
X_DIM = hv.Dimension("x", label="x, in the orbital plane", unit="au")
Y_DIM = hv.Dimension("y", label="y, towards the observer", unit="au")


def hill_factor(radii, half_width: float) -> int:
    """The smallest round factor that makes the median Hill radius at least ``HILL_MIN_SHARE`` of the half-width."""
    radii = np.asarray(radii, dtype=float)
    radii = radii[np.isfinite(radii) & (radii > 0)]
    if radii.size == 0 or half_width <= 0:
        return 1
    need = HILL_MIN_SHARE * half_width / float(np.median(radii))
    return next((f for f in HILL_FACTORS if f >= need), HILL_FACTORS[-1])


def hz_image(limits: dict, half_width: float, faded: bool, pixels: int = HZ_PIXELS) -> np.ndarray:
    """The habitable-zone band as an RGBA image over [-half_width, half_width]^2, graded from the warm
    inner edge to the cool outer edge (evenly in log distance), hatched over the optimistic parts."""
    edges = np.log([limits[k] for k in habitable.LIMITS])
    centres = (np.arange(pixels) + 0.5) / pixels * 2.0 * half_width - half_width
    x, y = np.meshgrid(centres, centres[::-1])
    with np.errstate(divide="ignore"):
        log_r = np.log(np.sqrt(x * x + y * y))
    inside = (log_r >= edges[0]) & (log_r <= edges[3])
    fraction = np.clip((log_r - edges[0]) / (edges[3] - edges[0]), 0.0, 1.0)
    warm, mild, cool = (np.array(c) for c in (palette.HZ_WARM, palette.HZ_MILD, palette.HZ_COOL))
    t = fraction[..., None]
    rgb = np.where(t < 0.5, warm + (mild - warm) * (2 * t), mild + (cool - mild) * (2 * t - 1))
    optimistic = inside & ((log_r < edges[1]) | (log_r > edges[2]))
    alpha = np.where(inside, np.where(optimistic, habitable.OPTIMISTIC_ALPHA, habitable.CONSERVATIVE_ALPHA), 0.0)
    rows, columns = np.indices((pixels, pixels))
    stripe = optimistic & (((rows + columns) % 9) < 2)
    hatch = np.array([int(palette.HZ_HATCH_COLOUR[i:i + 2], 16) / 255.0 for i in (1, 3, 5)])
    rgb = np.where(stripe[..., None], hatch, rgb)
    alpha = np.where(stripe, 0.8, alpha) * (habitable.EXTRAPOLATED_FACTOR if faded else 1.0)
    return (np.dstack([rgb, alpha]) * 255.0 + 0.5).astype(np.uint8)


# -- layers: plain data -> elements -----------------------------------------------------------------
def _dims(d):
    return [X_DIM.clone(range=d["x_range"]), Y_DIM.clone(range=d["y_range"])]


def hz(d):
    w = d["half_width"]
    return hv.RGB(d["image"], bounds=(-w, -w, w, w), kdims=_dims(d), group="LayoutHZ")


def _lines(d, group, label):
    dims = _dims(d) + [hv.Dimension("x1", range=d["x_range"]), hv.Dimension("y1", range=d["y_range"])]
    return drawn(hv.Segments((d["x0"], d["y0"], d["x1"], d["y1"], texts(d["colour"]), d["width"]), dims,
                             ["colour", hv.Dimension("width", range=(0.0, 10.0))], group=group, label=label),
                 len(d["x0"]) > 0)


def orbits(d):
    return _lines(d, "LayoutOrbit", "orbits")


def hill(d):
    return _lines(d, "LayoutHill", "Hill spheres (see beneath)")


def reference(d):
    return _lines(d, "LayoutReference", "a Solar System orbit, for scale")


def pinned_orbits(d):
    return _lines(d, "LayoutPinnedOrbit", "pinned reference: orbits")


#: columns of their own (browser tests and tools find the current planets by theirs)
PINNED_VDIMS = ["name", "colour", "pinned_r", "pinned_f_deg"]


def pinned_planets(d):
    columns = {"x": d["x"], "y": d["y"], "name": texts(d["name"]), "colour": texts(d["colour"]),
               "pinned_r": d["r"], "pinned_f_deg": d["f_deg"]}
    return drawn(hv.Points(with_a_row(columns), _dims(d), PINNED_VDIMS, group="LayoutPinnedPlanet",
                           label="pinned reference: planets now"), len(d["x"]) > 0)


def star(d):
    disc = [{"x": d["x"], "y": d["y"]}] if len(d["x"]) else []
    return hv.Polygons(disc, _dims(d), group="LayoutStar", label="star (to scale)")


PLANET_VDIMS = ["name", "colour", "size", "line_colour", "line_width", "r", "f_deg", "a", "e", "periastron",
                "apoastron", "a_range"]


def planets(d):
    columns = {k: d[k] for k in ("x", "y", *PLANET_VDIMS)}
    for k in ("name", "colour", "line_colour", "a_range"):
        columns[k] = texts(columns[k])
    return hv.Points(columns, _dims(d), PLANET_VDIMS, group="LayoutPlanet", label="planets")


def names(d):
    return hv.Labels((d["x"], d["y"], texts(f"  {n}" for n in d["name"])), _dims(d), "text",
                     group="LayoutPlanetName")


LAYERS = {"hz": hz, "reference": reference, "pinned_orbits": pinned_orbits, "orbits": orbits, "star": star,
          "hill": hill, "pinned_planets": pinned_planets, "planets": planets, "names": names}

FRAME = {
    "bokeh": dict(frame_width=500, frame_height=500, data_aspect=1, legend_position="right", toolbar="above",
                  active_tools=["wheel_zoom"], title="Top-down view of the orbits, to scale",
                  fontsize=FONT_SIZES),
    "matplotlib": dict(fig_size=250, aspect="equal", legend_position="right",
                       title="Top-down view of the orbits, to scale"),
}
STYLES = Styles(
    frame=FRAME,
    bokeh={
        "RGB.LayoutHZ": dict(),
        "Segments.LayoutReference": dict(color=palette.REFERENCE_COLOUR, line_dash="dashed", line_width=1.5),
        "Segments.LayoutOrbit": dict(color=hv.dim("colour"), line_width=hv.dim("width"), alpha=0.85),
        "Segments.LayoutPinnedOrbit": dict(color=hv.dim("colour"), line_width=hv.dim("width"), alpha=0.6,
                                           line_dash="dashed"),
        "Points.LayoutPinnedPlanet": dict(line_color="colour", fill_alpha=0.0, line_width=2.2, line_alpha=0.8,
                                          size=PINNED_SIZE, tools=["hover"],
                                          hover_tooltips=[("pinned reference", "@{name}"),
                                                          ("distance now", "@{pinned_r}{0.00000} au"),
                                                          ("true anomaly f now", "@{pinned_f_deg}{0.0} deg")]),
        "Polygons.LayoutStar": dict(color=palette.STAR_COLOUR, line_color=palette.STAR_OUTLINE, line_width=1,
                                    show_legend=True),
        "Segments.LayoutHill": dict(color=hv.dim("colour"), line_width=hv.dim("width")),
        "Points.LayoutPlanet": dict(color="colour", size="size", line_color="line_colour", line_width="line_width",
                                    tools=["hover", "tap"], nonselection_alpha=1.0, selection_alpha=1.0,
                                    hover_tooltips=[("planet", "@{name}"), ("distance now", "@{r}{0.00000} au"),
                                                    ("true anomaly f", "@{f_deg}{0.0} deg"), ("a", "@{a}{0.00000} au"),
                                                    ("a 16th\u201384th pct", "@{a_range}"), ("e", "@{e}{0.000}"),
                                                    ("periastron", "@{periastron}{0.00000} au"),
                                                    ("apoastron", "@{apoastron}{0.00000} au")]),
        "Labels.LayoutPlanetName": dict(text_font_size="12px", text_align="left", text_baseline="top",
                                        text_color=palette.INK),
    },
    matplotlib={
        "RGB.LayoutHZ": dict(),
        "Segments.LayoutReference": dict(color=palette.REFERENCE_COLOUR, linestyle="--", linewidth=1.2),
        "Segments.LayoutOrbit": dict(color=hv.dim("colour"), linewidth=hv.dim("width") * 0.8),
        "Segments.LayoutPinnedOrbit": dict(color=hv.dim("colour"), linewidth=hv.dim("width") * 0.8, alpha=0.6,
                                           linestyle="--"),
        "Points.LayoutPinnedPlanet": dict(facecolors="none", edgecolors=hv.dim("colour"), s=PINNED_SIZE ** 2 * 0.6,
                                          linewidth=1.6, alpha=0.8),
        "Polygons.LayoutStar": dict(facecolor=palette.STAR_COLOUR, edgecolor=palette.STAR_OUTLINE, linewidth=0.5),
        "Segments.LayoutHill": dict(color=hv.dim("colour"), linewidth=1.0),
        "Points.LayoutPlanet": dict(color=hv.dim("colour"), s=hv.dim("size") ** 2 * 0.6,
                                    edgecolors=hv.dim("line_colour"), linewidth=hv.dim("line_width")),
        "Labels.LayoutPlanetName": dict(size=9, horizontalalignment="left", verticalalignment="top",
                                        color=palette.INK),
    })


class LayoutView(View):
    """The "Layout" view of one app (one browser session)."""

    title = "Layout"

    def __init__(self, app, **params):
        super().__init__(app, **params)
        self.hill_factor = 1
        self._hz_cache = None
        self.plot = LayeredPlot(LAYERS, STYLES, self._layer_data())
        self.tap = select_on_tap(app, self.plot.dynamic["planets"], lambda: self.plot.data["planets"]["name"])
        self.caption = note()
        self._refresh()

    @param.depends("app.derived", "app.elements", "app.time", "app.reference", "app.show_hill",
                   "app.pinned_elements", "app.pinned_label", watch=True)
    @while_shown
    @batched
    def _refresh(self):
        app, d = self.app, self.app.derived
        self.plot.update(**self._layer_data())
        caption = interval_caption(d)
        notes = [habitable.key_html(d),
                 f"Positions at BJD_TDB {app.time:.4f} from Kepler's equation; the observer lies towards +y "
                 "(a planet transits at \u03c9 + f = 90\u00b0)."]
        if app.show_hill:
            notes.append(f"Hill spheres are drawn {self.hill_factor}\u00d7 their radius so that they show at this "
                         "scale; the Flux & temperature table gives the true radius." if self.hill_factor > 1 else
                         "Hill spheres are drawn to scale.")
        reference_au = REFERENCE_ORBITS.get(app.reference)
        if reference_au:
            notes.append(f"Dashed circle: {app.reference.split(' ')[0]}'s orbit (a = {reference_au:g} au), "
                         "for scale.")
        if app.pinned_elements is not None:
            placed = len(self.plot.data["pinned_planets"]["x"])
            notes.append(f"Dashed orbits{' and rings' if placed else ''}: the pinned reference "
                         f"({escape(app.pinned_label or 'pinned')})"
                         + (", its planets at the same time." if placed else
                            "; its planets' positions are not drawn (pinned without its transit times)."))
        if caption:
            notes.append(f"Semi-major axis ranges in the tooltips: {escape(caption)}.")
        self.caption.object = " ".join(n for n in notes if n)

    @param.depends("app.selected", watch=True)
    @while_shown
    @batched
    def _highlight(self):
        data = self.plot.data
        names_ = data["planets"]["name"]
        widths = self._orbit_widths(names_)
        per = len(data["orbits"]["x0"]) // max(len(names_), 1)
        then = data["pinned_orbits"]["name"]
        per_then = len(data["pinned_orbits"]["x0"]) // max(len(then), 1)
        self.plot.update(planets={**data["planets"], **self._marks(names_)},
                         orbits={**data["orbits"], "width": np.repeat(widths, per)},
                         pinned_orbits={**data["pinned_orbits"],
                                        "width": np.repeat(self._pinned_widths(then), per_then)})

    def _marks(self, names_) -> dict:
        chosen = [n == self.app.selected for n in names_]
        return {"size": np.array([SIZE_SELECTED if c else SIZE_PLAIN for c in chosen], dtype=float),
                "line_colour": [palette.HIGHLIGHT_COLOUR if c else "#ffffff" for c in chosen],
                "line_width": np.array([3.0 if c else 1.0 for c in chosen])}

    def _orbit_widths(self, names_) -> np.ndarray:
        return np.array([3.5 if n == self.app.selected else 1.6 for n in names_])

    def _pinned_widths(self, names_) -> np.ndarray:
        return np.array([2.6 if n == self.app.selected else 1.4 for n in names_])

    def _layer_data(self) -> dict:
        app, d = self.app, self.app.derived
        names_ = [str(n) for n in d.planet_names]
        colours = self.colours(names_)
        pl, elements = d.planets, app.elements
        a, e, omega = np.asarray(pl["semi_major_axis_au"], float), elements.e, elements.omega_rad
        star_radius_au = d.star["radius_rsun"] * R_SUN / AU
        then = app.pinned_elements
        half = 1.12 * max(float(np.max(d.extra["apoastron_au"], initial=0.0)), pinned.pinned_apoastron_au(then),
                          3.0 * star_radius_au)
        limits = habitable.limits_of(d)
        if limits and limits["early_mars"] < 3.0 * half:
            half = max(half, 1.05 * limits["early_mars"])
        reference_au = REFERENCE_ORBITS.get(app.reference)
        if reference_au:
            half = max(half, 1.06 * reference_au)
        view = (-half, half)
        # layers that an edit of the planets leaves alone carry their own extent, not the view's, so that
        # they are not sent again when the view's extent follows the orbits
        layers = {"hz": self._hz(d, limits, half)}
        rx, ry = circle_points([0.0], [0.0], [reference_au or 0.0], 180)
        own = (-(reference_au or 0.0), reference_au or 0.0)
        layers["reference"] = curve_segments(rx, ry, [palette.REFERENCE_COLOUR], [1.5], own, own) \
            if reference_au else curve_segments(np.zeros((0, 2)), np.zeros((0, 2)), [], [], own, own)
        ox, oy = ellipse_points(orbit_ellipses(a, e, omega))
        layers["orbits"] = curve_segments(ox, oy, colours, self._orbit_widths(names_), view, view)
        sx, sy = circle_points([0.0], [0.0], [star_radius_au], 64)
        layers["star"] = {"x": sx[0], "y": sy[0], "x_range": (-star_radius_au, star_radius_au),
                          "y_range": (-star_radius_au, star_radius_au)}
        x, y, r, f = in_plane_positions(elements, app.time)
        self.hill_factor = hill_factor(pl["hill_radius_au"], half)
        if app.show_hill:
            hx, hy = circle_points(x, y, np.asarray(pl["hill_radius_au"], float) * self.hill_factor)
            layers["hill"] = curve_segments(hx, hy, colours, [1.5] * len(names_), view, view)
        else:
            layers["hill"] = curve_segments(np.zeros((0, 2)), np.zeros((0, 2)), [], [], view, view)
        found = interval(d, "planets", "semi_major_axis_au")
        layers["planets"] = {
            "x": x, "y": y, "name": names_, "colour": colours, "r": r, "f_deg": np.degrees(f), "a": a, "e": e,
            "periastron": np.asarray(d.extra["periastron_au"], float),
            "apoastron": np.asarray(d.extra["apoastron_au"], float),
            "a_range": span_texts(*found, digits=5) if found else [""] * len(names_),
            "x_range": view, "y_range": view, **self._marks(names_)}
        layers["names"] = {"x": x, "y": y, "name": names_, "x_range": view, "y_range": view}
        names_then = list(then.names) if then is not None else []
        layers.update(pinned.layout_layers(then, self.colours(names_then), self._pinned_widths(names_then),
                                           app.time, view))
        return layers

    def _hz(self, d, limits, half: float) -> dict:
        """The habitable-zone image over the band, or over the view when the band reaches far beyond it
        (kept from the last call while the band and its width are the same)."""
        if limits is None:
            tiny = (-1e-9, 1e-9)
            return {"image": np.zeros((1, 1, 4), dtype=np.uint8), "half_width": 1e-9, "x_range": tiny,
                    "y_range": tiny}
        width = limits["early_mars"] * 1.01 if limits["early_mars"] < 3.0 * half else half
        faded = habitable.extrapolated(d)
        key = (tuple(limits.values()), width, faded)
        if self._hz_cache is None or self._hz_cache[0] != key:
            self._hz_cache = (key, {"image": hz_image(limits, width, faded), "half_width": width,
                                    "x_range": (-width, width), "y_range": (-width, width)})
        return self._hz_cache[1]

    # -- pages and figures ----------------------------------------------------------------------
    def panel(self):
        return pn.Column(pn.pane.HoloViews(self.plot.live(), linked_axes=False), self.caption,
                         sizing_mode="stretch_width")

    def figure(self, backend: str | None = None):
        return self.plot.figure(backend)
