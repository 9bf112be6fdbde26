"""Layout: the system seen from above its orbital plane, to scale.

Orbits are drawn as Keplerian ellipses with the star at one focus, from
a, e and omega in the orbital plane (longitude of node 0, so the angle of a
point is omega + f and the observer lies along +y: a planet transits at
omega + f = 90 deg, Winn 2010). Planets sit where Kepler's equation puts
them at the chosen time (``orbitdeck.models.ephemeris.positions``), the
habitable zone is shaded as annuli (conservative: runaway to maximum
greenhouse; optimistic: recent Venus to runaway and maximum greenhouse to
early Mars, Kopparapu et al. 2014), the star is a disc of its own radius,
Hill spheres are drawn on demand and a Solar System orbit can be added for
scale. Everything is in au on equal axes.
"""

from __future__ import annotations

import numpy as np
import panel as pn
from bokeh.core.properties import value
from bokeh.models import Label, Legend, LegendItem, Range1d

from orbitdeck.models import ephemeris
from orbitdeck.models.constants import AU, R_SUN

from . import palette
from .common import (add_hover, follow, batched, calm_selection, empty_source, interval, interval_caption,
                     new_figure, replace_data, watch_taps, while_shown)

#: Solar System orbits offered for scale: circles of radius a [au]
#: (semi-major axes of Mercury 0.387 au and Venus 0.723 au from memory; Earth 1 au)
REFERENCE_ORBITS = {"none": None, "Mercury (0.387 au)": 0.387, "Venus (0.723 au)": 0.723, "Earth (1 au)": 1.0}
SIZE_PLAIN, SIZE_SELECTED = 11, 19


def orbit_ellipses(a, e, omega_rad) -> dict:
    """Keplerian orbits about a focus at the origin as ellipse glyphs: centre, axes [unit of a], angle [rad].

    The ellipse of semi-major axis a and eccentricity e has the semi-minor
    axis b = a sqrt(1 - e^2) and its centre a e from the focus, opposite
    periastron (Murray & Dermott 1999, sec. 2.4); periastron lies at the
    angle omega from the line of nodes, which is also the angle of the major
    axis. Returns the columns ``x``, ``y`` (centre), ``width`` (2a),
    ``height`` (2b) and ``angle`` (omega).
    """
    a, e, omega = (np.asarray(v, dtype=float) for v in (a, e, omega_rad))
    cos_w, sin_w = np.cos(omega), np.sin(omega)
    return {"x": -a * e * cos_w, "y": -a * e * sin_w, "width": 2.0 * a,
            "height": 2.0 * a * np.sqrt(1.0 - e * e), "angle": omega}


def in_plane_positions(elements, time: float):
    """Planet positions in the orbital plane at ``time`` [BJD_TDB]: x, y, r [au] and f [rad].

    Solves Kepler's equation through :func:`orbitdeck.models.ephemeris.positions`
    and turns the distance and the true anomaly into in-plane coordinates.
    """
    pos = ephemeris.positions(elements, time)
    r = np.sqrt(pos.x_au**2 + pos.y_au**2 + pos.z_au**2)
    angle = elements.omega_rad + pos.true_anomaly_rad
    return r * np.cos(angle), r * np.sin(angle), r, pos.true_anomaly_rad


class LayoutView:
    """The "Layout" view of one app (one browser session)."""

    title = "Layout"
    tab = title  # the tab the view is shown in

    def __init__(self, app):
        self.app = app
        self.x_range, self.y_range = Range1d(-0.1, 0.1), Range1d(-0.1, 0.1)
        fig = new_figure("Top-down view of the orbits, to scale", "x, in the orbital plane [au]",
                         "y, towards the observer [au]", tap=True, frame_width=560, frame_height=560,
                         x_range=self.x_range, y_range=self.y_range)
        fig.height = fig.width = None
        self.figure = fig
        self.sources = {
            "hz": empty_source("inner", "outer", "kind", "limits", "colour", "alpha"),
            "reference": empty_source("radius", "label"),
            "bands": empty_source("inner", "outer", "name", "colour"),
            "orbits": empty_source("x", "y", "width", "height", "angle", "name", "colour", "a", "e", "periastron",
                                   "apoastron", "line_width"),
            "star": empty_source("radius", "name", "radius_rsun", "teff"),
            "hill": empty_source("x", "y", "radius", "name", "colour"),
            "planets": empty_source("x", "y", "name", "colour", "size", "line_colour", "line_width",
                                    "r", "f_deg", "a", "e", "periastron", "apoastron"),
        }
        s = self.sources
        hz = fig.annulus(x=0, y=0, inner_radius="inner", outer_radius="outer", fill_color="colour",
                         fill_alpha="alpha", line_alpha=0, source=s["hz"])
        bands = fig.annulus(x=0, y=0, inner_radius="inner", outer_radius="outer", fill_color="colour",
                            fill_alpha=0.5, line_color="colour", line_alpha=0.8, line_width=1, source=s["bands"])
        ref = fig.circle(x=0, y=0, radius="radius", fill_alpha=0, line_color=palette.REFERENCE_COLOUR,
                         line_dash="dashed", line_width=1.5, source=s["reference"])
        # an ellipse glyph per orbit: five numbers a planet where a drawn curve would need hundreds of points
        orbits = fig.ellipse(x="x", y="y", width="width", height="height", angle="angle", fill_color=None,
                             line_color="colour", line_width="line_width", line_alpha=0.8, source=s["orbits"])
        star = fig.circle(x=0, y=0, radius="radius", fill_color=palette.STAR_COLOUR, line_color="#8a6500",
                          source=s["star"])
        self.hill = fig.circle(x="x", y="y", radius="radius", fill_color="colour", fill_alpha=0.15,
                               line_color="colour", line_width=1.5, source=s["hill"], visible=False)
        planets = fig.scatter(x="x", y="y", size="size", fill_color="colour", line_color="line_colour",
                              line_width="line_width", source=s["planets"])
        fig.text(x="x", y="y", text="name", x_offset=9, y_offset=-9, text_font_size="12px",
                 text_color="#222222", source=s["planets"])
        for r in (hz, bands, ref, orbits, star, self.hill, planets):
            calm_selection(r)
        add_hover(fig, [planets], [("planet", "@name"), ("distance now", "@r{0.00000} au"),
                                   ("true anomaly f", "@f_deg{0.0} deg"), ("a", "@a{0.00000} au"), ("e", "@e{0.000}"),
                                   ("periastron", "@periastron{0.00000} au"), ("apoastron", "@apoastron{0.00000} au")])
        add_hover(fig, [star], [("star", "@name"), ("radius", "@radius_rsun{0.000} Rsun = @radius{0.000000} au"),
                                ("Teff", "@teff{0} K")])
        add_hover(fig, [self.hill], [("Hill sphere of", "@name"), ("radius", "@radius{0.000000} au")])
        add_hover(fig, [ref], [("scale reference", "@label")])
        add_hover(fig, [bands], [("semi-major axis of", "@name"),
                                 ("16th\u201384th percentiles", "@inner{0.00000}\u2013@outer{0.00000} au")])
        self.band_item = LegendItem(label=value("a: 16th\u201384th percentiles"), renderers=[bands], visible=False)
        self.reference_item = LegendItem(label=value("no scale reference"), renderers=[ref])
        self.hz_items = [LegendItem(label=value("conservative HZ"), renderers=[hz], index=0),
                         LegendItem(label=value("optimistic HZ"), renderers=[hz], index=1)]
        legend = Legend(items=[
            *self.hz_items,
            LegendItem(label=value("star (to scale)"), renderers=[star]),
            LegendItem(label=value("Hill spheres"), renderers=[self.hill]),
            self.reference_item,
            self.band_item,
        ], location="top_left", label_text_font_size="11px", border_line_alpha=0)
        fig.add_layout(legend, "right")
        self.note = Label(x=8, y=8, x_units="screen", y_units="screen", text="", text_font_size="11px",
                          text_color="#444444", background_fill_color="white", background_fill_alpha=0.7)
        fig.add_layout(self.note)
        watch_taps(s["planets"], app)
        app.param.watch(self._show_hill, "show_hill")
        follow(app, self.update, self._highlight, inputs=("derived", "elements", "time", "reference"))
        self._show_hill()

    # -- user actions --------------------------------------------------------
    @batched
    def _show_hill(self, *_):
        self.hill.visible = bool(self.app.show_hill)

    # -- data ----------------------------------------------------------------
    @while_shown
    @batched
    def update(self, *_):
        """Redraw from the app's current derived state (data replaced in place)."""
        app, d = self.app, self.app.derived
        if d is None or app.elements is None:
            return
        pl, names = d.planets, d.planet_names
        colours = palette.planet_colours(len(names))
        a, e = pl["semi_major_axis_au"], app.elements.e
        omega = app.elements.omega_rad
        star_radius_au = d.star["radius_rsun"] * R_SUN / AU
        replace_data(self.sources["orbits"], {
            **orbit_ellipses(a, e, omega), "name": list(names), "colour": colours, "a": a, "e": e,
            "periastron": d.extra["periastron_au"], "apoastron": d.extra["apoastron_au"],
            "line_width": self._widths(names, 1.5, 3.5)})
        replace_data(self.sources["star"], {"radius": [star_radius_au], "name": [d.star["name"]],
                                            "radius_rsun": [d.star["radius_rsun"]], "teff": [d.star["teff_k"]]})
        self._update_hz(d)
        self._update_bands(d, names, colours)
        x, y, r, f = in_plane_positions(app.elements, app.time)
        replace_data(self.sources["planets"], {
            "x": x, "y": y, "name": list(names), "colour": colours, "r": r, "f_deg": np.degrees(f), "a": a,
            "e": e, "periastron": d.extra["periastron_au"], "apoastron": d.extra["apoastron_au"],
            **self._marker_columns(names)})
        replace_data(self.sources["hill"], {"x": x, "y": y, "radius": pl["hill_radius_au"], "name": list(names),
                                            "colour": colours})
        reference = REFERENCE_ORBITS.get(app.reference)
        body = app.reference.split(" ")[0]
        self.reference_item.label = value(f"{body}'s orbit\n(a = {reference:g} au), for scale" if reference
                                          else "no scale reference")
        replace_data(self.sources["reference"],
                     {"radius": [reference], "label": [f"circle of radius {reference:g} au, the semi-major axis of "
                                                       f"{app.reference.split(' ')[0]}'s orbit"]}
                     if reference else {"radius": [], "label": []})
        extent = 1.12 * max(float(np.max(d.extra["apoastron_au"], initial=0.0)), 3 * star_radius_au)
        hz_au = d.star["hz_au"]
        if hz_au and hz_au["early_mars"] < 3.0 * extent:
            extent = max(extent, 1.05 * hz_au["early_mars"])
        if reference:
            extent = max(extent, 1.06 * reference)
        if abs(self.x_range.end - extent) > 1e-3 * extent:
            self.x_range.update(start=-extent, end=extent)
            self.y_range.update(start=-extent, end=extent)
        self.figure.title.text = f"Top-down view of the orbits, to scale, at BJD_TDB {app.time:.4f}"
        caption = interval_caption(d)
        self.note.text = ("observer towards +y (transit at \u03c9 + f = 90\u00b0); positions from Kepler's equation"
                          + (f"\nbands: semi-major axis, {caption}" if caption else ""))

    def _update_bands(self, d, names, colours) -> None:
        """Annuli between the 16th and 84th percentiles of each semi-major axis (none without draws)."""
        found = interval(d, "planets", "semi_major_axis_au")
        self.band_item.visible = found is not None
        if found is None:
            replace_data(self.sources["bands"], {k: [] for k in self.sources["bands"].data})
            return
        lo, hi = found
        self.band_item.label = value(f"a: 16th\u201384th percentiles\nof {d.samples} Monte Carlo draws")
        replace_data(self.sources["bands"], {"inner": lo, "outer": hi, "name": list(names), "colour": colours})

    def _update_hz(self, d) -> None:
        hz = d.star["hz_au"]
        if not hz:
            replace_data(self.sources["hz"], {k: [] for k in self.sources["hz"].data})
            self.hz_items[0].label = value("no HZ: Teff outside 2600\u20137200 K")
            self.hz_items[1].label = value(" ")
            return
        rv, rg, mg, em = (hz[k] for k in ("recent_venus", "runaway_greenhouse", "maximum_greenhouse", "early_mars"))
        self.hz_items[0].label = value(f"conservative HZ\n{rg:.4f}\u2013{mg:.4f} au")
        self.hz_items[1].label = value(f"optimistic HZ\n{rv:.4f}\u2013{rg:.4f} au\n{mg:.4f}\u2013{em:.4f} au")
        replace_data(self.sources["hz"], {
            "inner": [rg, rv, mg], "outer": [mg, rg, em],
            "kind": ["conservative", "optimistic (inner)", "optimistic (outer)"],
            "limits": [f"runaway greenhouse {rg:.4g} au and maximum greenhouse {mg:.4g} au",
                       f"recent Venus {rv:.4g} au and runaway greenhouse {rg:.4g} au",
                       f"maximum greenhouse {mg:.4g} au and early Mars {em:.4g} au"],
            "colour": [palette.HZ_CONSERVATIVE_COLOUR, palette.HZ_OPTIMISTIC_COLOUR, palette.HZ_OPTIMISTIC_COLOUR],
            "alpha": [0.35, 0.35, 0.35]})

    def _marker_columns(self, names) -> dict:
        chosen = [n == self.app.selected for n in names]
        return {"size": [SIZE_SELECTED if c else SIZE_PLAIN for c in chosen],
                "line_colour": [palette.HIGHLIGHT_COLOUR if c else "white" for c in chosen],
                "line_width": [3.0 if c else 1.0 for c in chosen]}

    def _widths(self, names, plain: float, chosen: float) -> list[float]:
        return [chosen if n == self.app.selected else plain for n in names]

    @while_shown
    @batched
    def _highlight(self, *_):
        names = list(self.sources["planets"].data["name"])
        replace_data(self.sources["planets"], {**self.sources["planets"].data, **self._marker_columns(names)})
        replace_data(self.sources["orbits"], {**self.sources["orbits"].data,
                                              "line_width": self._widths(names, 1.5, 3.5)})

    def panel(self):
        return pn.pane.Bokeh(self.figure, sizing_mode="fixed")

