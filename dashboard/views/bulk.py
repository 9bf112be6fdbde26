"""Bulk & atmosphere: what the planets may be made of, whether they keep air, and whether it can be seen.

Four panels; the three plots are HoloViews elements whose looks are kept per
backend (:class:`~.plotting.Styles`), so the same elements render live through
Bokeh and as static figures through matplotlib (:meth:`BulkView.figure`):

* mass against radius, with the composition curves of Zeng, Sasselov &
  Jacobsen 2016 and the Solar System planets; estimated masses (Chen &
  Kipping 2017) are hollow markers;
* the cosmic shoreline of Zahnle & Catling 2017, escape speed against
  insolation, with the Solar System bodies that anchor it;
* tidal heat flux on a logarithmic axis against Earth's and Io's mean heat flow;
* a spectroscopy table: scale height and the signal of one scale height for a
  set of mean molecular weights, the transits needed for a feature of N scale
  heights at a per-transit precision entered here, and the bare-rock eclipse depth.

Every number here is a model estimate under the assumptions stated beside it.
A tap on a planet selects it in every view.
"""

from __future__ import annotations

import html

import holoviews as hv
import numpy as np
import pandas as pd
import panel as pn
import param
from bokeh.models import NumberFormatter

from orbitdeck.models.physics import atmospheres, interiors, solar_system, tides
from orbitdeck.models.constants import R_EARTH, R_SUN

from . import palette
from .common import as_floats, batched, while_shown
from .plotting import Styles, bar_colours, load_backend, plain_log_ticks

#: mean molecular weights of the spectroscopy table [u]: H2/He (solar), water, N2, CO2
MOLECULAR_WEIGHTS = (2.3, 18.0, 28.0, 44.0)
#: feature-to-noise ratio at which a spectral feature counts as seen
SIGNIFICANCE = 3.0
#: colours of the composition curves (greys and browns, apart from the planet colours)
CURVE_COLOURS = ("#3d3d3d", "#8c6d46", "#b89f7a", "#5f8fb0", "#9cc3de")
REFERENCE_COLOUR = "#7a7a7a"
PLOT_HEIGHT = 380
#: the shoreline's own colour (not one of the planet colours)
SHORELINE_COLOUR = "#2f6f9f"
#: marker sizes: Bokeh's are diameters in screen pixels, matplotlib's areas in points squared
PLANET_SIZE, SELECTED_SIZE, REFERENCE_SIZE = 12, 20, 8
PLANET_AREA, SELECTED_AREA, REFERENCE_AREA = 110, 330, 40
MASS_RADIUS_TITLE = "Mass and radius, with composition curves (Zeng et al. 2016)"
SHORELINE_TITLE = "Cosmic shoreline (Zahnle & Catling 2017)"
HEAT_TITLE = (f"Tidal heat flux for the stated Q' (dashed: Earth {tides.EARTH_HEAT_FLUX} W/m\u00b2, "
              f"Io {tides.IO_HEAT_FLUX} W/m\u00b2)")
_MASS_RADIUS_AXES = dict(logx=True, logy=True, xlabel="mass [M\u2295]", ylabel="radius [R\u2295]",
                         title=MASS_RADIUS_TITLE)
_SHORELINE_AXES = dict(logx=True, logy=True, xlabel="escape speed [km/s]", ylabel="insolation [S\u2295]",
                       title=SHORELINE_TITLE)
_HEAT_AXES = dict(logy=True, xlabel="planet", ylabel="heat flux [W/m\u00b2]", title=HEAT_TITLE)
_LIVE = dict(height=PLOT_HEIGHT, responsive=True)
#: the static figures (rendered at slide resolution); logarithmic axes labelled with plain numbers
_STATIC = dict(fig_size=190, aspect=1.6, hooks=[plain_log_ticks])
_SELECTABLE = dict(nonselection_alpha=1.0, selection_alpha=1.0)

# The looks of the three plots per backend, registered once per process as the defaults of their groups.
MASS_RADIUS_STYLES = Styles(
    frame={"bokeh": dict(**_MASS_RADIUS_AXES, **_LIVE, legend_position="right"),
           "matplotlib": dict(**_MASS_RADIUS_AXES, **_STATIC, legend_position="right")},
    bokeh={**{f"Curve.BulkComposition{i}": dict(color=c, line_width=2) for i, c in enumerate(CURVE_COLOURS)},
           "Scatter.BulkReference": dict(color=REFERENCE_COLOUR, marker="square", size=REFERENCE_SIZE,
                                         tools=["hover"]),
           "Labels.BulkReferenceName": dict(text_font_size="9pt", text_color=REFERENCE_COLOUR, yoffset=0.04,
                                            text_align="left"),
           "ErrorBars.BulkMassRadiusRange": dict(color=palette.MUTED_INK, line_width=1),
           "Scatter.BulkMassRadius": dict(color="colour", fill_color="fill", line_color="colour", size=PLANET_SIZE,
                                          line_width=2, tools=["hover", "tap"], **_SELECTABLE),
           "Scatter.BulkMassRadiusSelected": dict(color=None, fill_alpha=0.0, line_color=palette.HIGHLIGHT_COLOUR,
                                                  size=SELECTED_SIZE, line_width=2, tools=["hover"])},
    matplotlib={**{f"Curve.BulkComposition{i}": dict(color=c, linewidth=2) for i, c in enumerate(CURVE_COLOURS)},
                "Scatter.BulkReference": dict(color=REFERENCE_COLOUR, marker="s", s=REFERENCE_AREA),
                "Labels.BulkReferenceName": dict(size=8, color=REFERENCE_COLOUR, horizontalalignment="left",
                                                 verticalalignment="bottom"),
                "ErrorBars.BulkMassRadiusRange": dict(color=palette.MUTED_INK, linewidth=1, capsize=0),
                "Scatter.BulkMassRadius": dict(facecolors=hv.dim("fill"), edgecolors=hv.dim("colour"),
                                               s=PLANET_AREA, linewidth=2),
                "Scatter.BulkMassRadiusSelected": dict(facecolors="none", edgecolors=palette.HIGHLIGHT_COLOUR,
                                                       s=SELECTED_AREA, linewidth=2)})
SHORELINE_STYLES = Styles(
    frame={"bokeh": dict(**_SHORELINE_AXES, **_LIVE, legend_position="top_left"),
           "matplotlib": dict(**_SHORELINE_AXES, **_STATIC, legend_position="right")},
    bokeh={"Curve.BulkShoreline": dict(color=SHORELINE_COLOUR, line_width=2),
           "Scatter.BulkShoreAtmosphere": dict(color=REFERENCE_COLOUR, marker="square", size=REFERENCE_SIZE,
                                               tools=["hover"]),
           "Scatter.BulkShoreAirless": dict(color="white", line_color=REFERENCE_COLOUR, marker="square",
                                            size=REFERENCE_SIZE, line_width=2, tools=["hover"]),
           "Labels.BulkShoreName": dict(text_font_size="8pt", text_color=REFERENCE_COLOUR, xoffset=0.0,
                                        yoffset=0.0, text_align="left"),
           "Scatter.BulkShorePlanet": dict(color="colour", size=PLANET_SIZE, tools=["hover", "tap"], **_SELECTABLE),
           "Scatter.BulkShoreSelected": dict(color=None, fill_alpha=0.0, line_color=palette.HIGHLIGHT_COLOUR,
                                             size=SELECTED_SIZE, line_width=2)},
    matplotlib={"Curve.BulkShoreline": dict(color=SHORELINE_COLOUR, linewidth=2),
                "Scatter.BulkShoreAtmosphere": dict(color=REFERENCE_COLOUR, marker="s", s=REFERENCE_AREA),
                "Scatter.BulkShoreAirless": dict(facecolors="white", edgecolors=REFERENCE_COLOUR, marker="s",
                                                 s=REFERENCE_AREA, linewidth=1.5),
                "Labels.BulkShoreName": dict(size=7, color=REFERENCE_COLOUR, horizontalalignment="left",
                                             verticalalignment="bottom"),
                "Scatter.BulkShorePlanet": dict(color=hv.dim("colour"), s=PLANET_AREA),
                "Scatter.BulkShoreSelected": dict(facecolors="none", edgecolors=palette.HIGHLIGHT_COLOUR,
                                                  s=SELECTED_AREA, linewidth=2)})
HEAT_STYLES = Styles(
    frame={"bokeh": dict(**_HEAT_AXES, **_LIVE), "matplotlib": dict(_STATIC, **_HEAT_AXES, aspect=2.4)},
    bokeh={"Bars.BulkHeat": dict(color=hv.dim("colour"), line_color=hv.dim("outline"), line_width=2,
                                 tools=["hover", "tap"], framewise=True, **_SELECTABLE),
           "HLine.BulkEarthHeat": dict(color=palette.ACCENT, line_dash="dashed", line_width=2),
           "HLine.BulkIoHeat": dict(color=palette.STAR_COLOUR, line_dash="dashed", line_width=2)},
    matplotlib={"Bars.BulkHeat": dict(hooks=[bar_colours("colour", "outline")]),
                "HLine.BulkEarthHeat": dict(color=palette.ACCENT, linestyle="--", linewidth=2),
                "HLine.BulkIoHeat": dict(color=palette.STAR_COLOUR, linestyle="--", linewidth=2)})
STYLES = {"mass_radius": MASS_RADIUS_STYLES, "shoreline": SHORELINE_STYLES, "heat": HEAT_STYLES}


def _on_log_axes(values) -> np.ndarray:
    """``values`` as floats, NaN where a logarithmic axis cannot place them (missing, infinite, zero or negative):
    every plot of this view is logarithmic in these quantities."""
    x = as_floats(values)
    with np.errstate(invalid="ignore"):
        return np.where(np.isfinite(x) & (x > 0.0), x, np.nan)


def _bounds(derived, key: str, values: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(value - low, high - value) of a planet column from its Monte Carlo interval (zeros without one)."""
    found = (derived.intervals or {}).get("planets", {}).get(key) if derived.intervals else None
    if found is None:
        return np.zeros_like(values), np.zeros_like(values)
    low, high = (np.asarray(b, dtype=float) for b in found)
    return np.clip(values - low, 0.0, None), np.clip(high - values, 0.0, None)


class BulkView(param.Parameterized):
    """The "Bulk & atmosphere" view of one app."""

    title = "Bulk & atmosphere"
    tab = title

    scale_heights = param.Number(default=2.0, bounds=(0.5, 20.0), doc="Size of the feature in scale heights")
    precision_ppm = param.Number(default=30.0, bounds=(0.1, 1e5), doc="Noise of one transit on the feature [ppm]")
    revision = param.Integer(default=0, doc="Counts the derivations shown")
    selected = param.String(default=None, allow_None=True, doc="The app's selected planet, as shown here")

    def __init__(self, app, **params):
        super().__init__(**params)
        load_backend("bokeh")   # HoloViews' Bokeh options, without changing the current backend
        for styles in STYLES.values():
            styles.register("bokeh")
        self.app = app
        self.taps = {}
        self.plots = {
            "mass_radius": (self._composition_curves() * self._reference_planets()
                            * hv.DynamicMap(self._mass_radius_errors) * self._tappable(self._mass_radius_points, "mr")
                            * hv.DynamicMap(self._mass_radius_selected)),
            "shoreline": (self._shoreline_line() * self._shoreline_references()
                          * self._tappable(self._shoreline_points, "shore") * hv.DynamicMap(self._shoreline_selected)),
            "heat": self._tappable(self._heat_bars, "heat") * self._heat_references(),
        }
        self.panes = {name: pn.pane.HoloViews(plot, backend="bokeh", sizing_mode="stretch_width")
                      for name, plot in self.plots.items()}
        self.caution = pn.pane.HTML("", sizing_mode="stretch_width", styles={"font-size": "12px", "color": "#5c4400"})
        self.table = pn.widgets.Tabulator(pd.DataFrame(), disabled=True, show_index=False, selectable=1, height=300,
                                          layout="fit_data_table", sizing_mode="stretch_width")
        self.table.param.watch(self._table_selected, "selection")
        self.scale_input = pn.widgets.FloatInput.from_param(self.param.scale_heights, name="feature [scale heights]",
                                                            step=0.5, width=170)
        self.precision_input = pn.widgets.FloatInput.from_param(self.param.precision_ppm,
                                                                name="precision per transit [ppm]", step=5.0, width=190)
        self.param.watch(self._update_table, ["scale_heights", "precision_ppm", "revision"])
        app.param.watch(self._refresh, "derived")
        app.param.watch(self._follow_selection, "selected")
        self._refresh()

    # -- state -------------------------------------------------------------------------------
    @while_shown
    @batched
    def _refresh(self, *_):
        """Show the app's current derivation (later, when the tab is hidden in a served page)."""
        self.param.update(revision=self.revision + 1, selected=self.app.selected)
        self.caution.object = self._caution_text()

    @while_shown
    @batched
    def _follow_selection(self, *_):
        self.selected = self.app.selected
        self._sync_table_selection()

    def _planets(self) -> dict:
        """Planet columns this view draws, as float arrays, with names and colours."""
        d = self.app.derived
        pl = d.planets
        names = [str(n) for n in pl["name"]]
        columns = {key: _on_log_axes(pl[key]) for key in (
            "mass_mearth", "radius_rearth", "escape_speed_kms", "insolation_earth", "tidal_heat_flux_w_m2")}
        return {"name": names, "colour": self.app.colours.colours(names),
                "estimated": np.asarray(pl["mass_estimated"], dtype=bool), **columns}

    def _tappable(self, method, key):
        """A DynamicMap of ``method`` whose tapped point selects its planet in the app."""
        dmap = hv.DynamicMap(method)
        tap = hv.streams.Selection1D(source=dmap)
        tap.add_subscriber(lambda index: self._tapped(index, key))
        self.taps[key] = tap
        return dmap

    def _tapped(self, index, key):
        if index:
            names = self._planets()["name"]
            if 0 <= index[0] < len(names):
                self.app.selected = names[index[0]]

    # -- mass and radius ---------------------------------------------------------------------
    def _composition_curves(self):
        curves = [hv.Curve((mass, radius), "mass", "radius", group=f"BulkComposition{i}", label=label)
                  for i, (label, (mass, radius)) in enumerate(interiors.composition_curves().items())]
        return hv.Overlay(curves)

    def _reference_planets(self):
        ref = solar_system.reference_points(planets_only=True)
        keep = [i for i, m in enumerate(ref["mass_mearth"]) if m < 40.0]   # the giants lie off the diagram
        frame = pd.DataFrame({k: [ref[k][i] for i in keep] for k in ("name", "mass_mearth", "radius_rearth")})
        points = hv.Scatter(frame, "mass_mearth", ["radius_rearth", "name"], group="BulkReference",
                            label="Solar System")
        labels = hv.Labels(frame, ["mass_mearth", "radius_rearth"], "name", group="BulkReferenceName")
        return points * labels

    def _mass_radius_frame(self) -> pd.DataFrame:
        p = self._planets()
        return pd.DataFrame({"name": p["name"], "mass": p["mass_mearth"], "radius": p["radius_rearth"],
                             "colour": p["colour"], "fill": np.where(p["estimated"], "white", p["colour"]),
                             "mass_kind": np.where(p["estimated"], "estimated (Chen & Kipping 2017)", "measured")})

    @param.depends("revision")
    def _mass_radius_points(self):
        return hv.Scatter(self._mass_radius_frame(), "mass", ["radius", "name", "mass_kind", "colour", "fill"],
                          group="BulkMassRadius", label="planets (hollow: estimated mass)")

    @param.depends("revision")
    def _mass_radius_errors(self):
        d, p = self.app.derived, self._planets()
        mass, radius = p["mass_mearth"], p["radius_rearth"]
        m_low, m_high = _bounds(d, "mass_mearth", mass)
        r_low, r_high = _bounds(d, "radius_rearth", radius)
        vertical = hv.ErrorBars((mass, radius, r_low, r_high), "mass", ["radius", "r_low", "r_high"],
                                group="BulkMassRadiusRange")
        horizontal = hv.ErrorBars((mass, radius, m_low, m_high), "mass", ["radius", "m_low", "m_high"],
                                  horizontal=True, group="BulkMassRadiusRange")
        return vertical * horizontal

    @param.depends("revision", "selected")
    def _mass_radius_selected(self):
        frame = self._mass_radius_frame().rename(columns={"name": "highlighted_name"})
        chosen = frame[frame["highlighted_name"] == self.selected]
        return hv.Scatter(chosen, "mass", ["radius", "highlighted_name"], group="BulkMassRadiusSelected")

    # -- cosmic shoreline --------------------------------------------------------------------
    def _shoreline_line(self):
        speed = np.geomspace(0.5, 80.0, 50)
        return hv.Curve((speed, atmospheres.shoreline_insolation(speed)), "escape speed", "insolation",
                        group="BulkShoreline", label="shoreline I \u221d v\u2074 (through Mars)")

    def _shoreline_references(self):
        ref = pd.DataFrame(solar_system.reference_points())
        ref["atmosphere"] = np.where(ref["has_atmosphere"], "yes", "no")
        kept = hv.Scatter(ref[ref["has_atmosphere"]], "escape_speed_kms", ["insolation_earth", "name", "atmosphere"],
                          group="BulkShoreAtmosphere", label="Solar System, with atmosphere")
        bare = hv.Scatter(ref[~ref["has_atmosphere"]], "escape_speed_kms", ["insolation_earth", "name", "atmosphere"],
                          group="BulkShoreAirless", label="Solar System, airless")
        labels = hv.Labels(ref, ["escape_speed_kms", "insolation_earth"], "name", group="BulkShoreName")
        return kept * bare * labels

    def _shoreline_frame(self) -> pd.DataFrame:
        p = self._planets()
        return pd.DataFrame({"name": p["name"], "speed": p["escape_speed_kms"], "insolation": p["insolation_earth"],
                             "colour": p["colour"]})

    @param.depends("revision")
    def _shoreline_points(self):
        return hv.Scatter(self._shoreline_frame(), "speed", ["insolation", "name", "colour"], group="BulkShorePlanet",
                          label="planets")

    @param.depends("revision", "selected")
    def _shoreline_selected(self):
        frame = self._shoreline_frame()
        return hv.Scatter(frame[frame["name"] == self.selected], "speed", ["insolation", "name"],
                          group="BulkShoreSelected")

    # -- tidal heating -----------------------------------------------------------------------
    @param.depends("revision", "selected")
    def _heat_bars(self):
        p = self._planets()
        flux = p["tidal_heat_flux_w_m2"]
        shown = np.where(flux > 0.0, flux, np.nan)   # a circular orbit has no tidal heating: no bar on a log axis
        outline = [palette.HIGHLIGHT_COLOUR if name == self.selected else colour
                   for name, colour in zip(p["name"], p["colour"])]
        frame = pd.DataFrame({"planet": p["name"], "flux": shown, "colour": p["colour"], "outline": outline})
        known = [f for f in shown if np.isfinite(f)] + [tides.EARTH_HEAT_FLUX, tides.IO_HEAT_FLUX]
        flux_dim = hv.Dimension("flux", range=(min(known) / 10.0, max(known) * 10.0))
        return hv.Bars(frame, "planet", [flux_dim, "colour", "outline"], group="BulkHeat")

    def _heat_references(self):
        """Earth's and Io's mean heat flow, dashed."""
        return (hv.HLine(tides.EARTH_HEAT_FLUX, group="BulkEarthHeat")
                * hv.HLine(tides.IO_HEAT_FLUX, group="BulkIoHeat"))

    # -- spectroscopy table ------------------------------------------------------------------
    def spectroscopy_frame(self) -> pd.DataFrame:
        """The rows of the spectroscopy table: one per planet."""
        d = self.app.derived
        pl = d.planets
        teq, gravity = as_floats(pl["teq_k"]), as_floats(pl["surface_gravity_ms2"])
        radius_m = as_floats(pl["radius_rearth"]) * R_EARTH
        star_radius_m = d.star["radius_rsun"] * R_SUN
        frame = {"planet": [str(n) for n in pl["name"]], "Teq [K]": teq}
        for mu in MOLECULAR_WEIGHTS:
            height = atmospheres.scale_height(teq, mu, gravity)
            signal = atmospheres.transmission_signal(height, radius_m, star_radius_m) * 1e6
            frame[f"H(\u03bc={mu:g}) [km]"] = height / 1000.0
            frame[f"signal(\u03bc={mu:g}) [ppm]"] = signal
            frame[f"transits(\u03bc={mu:g})"] = atmospheres.transits_needed(self.scale_heights * signal,
                                                                             self.precision_ppm, SIGNIFICANCE)
        assumed = self.app.system.assumptions
        frame[f"eclipse {assumed.eclipse_wavelength_um:g} \u00b5m [ppm]"] = as_floats(pl["eclipse_depth_ppm"])
        frame["escape [kg/s]"] = as_floats(pl["escape_rate_kg_s"])
        return pd.DataFrame(frame)

    def _update_table(self, *_):
        frame = self.spectroscopy_frame()
        formats = {c: NumberFormatter(format="0.0" if c.startswith(("H(", "Teq")) else "0.00",
                                      nan_format="\u2014") for c in frame.columns[1:]}
        for c in frame.columns:
            if c.startswith("transits") or c.startswith("escape"):
                formats[c] = NumberFormatter(format="0,0" if c.startswith("transits") else "0.00e+0",
                                             nan_format="\u2014")
        with pn.io.hold():
            self.table.formatters = formats
            self.table.value = frame
            self._sync_table_selection()

    def _sync_table_selection(self):
        names = list(self.table.value["planet"]) if "planet" in self.table.value else []
        wanted = [names.index(self.app.selected)] if self.app.selected in names else []
        if self.table.selection != wanted:
            self.table.selection = wanted

    def _table_selected(self, event):
        names = list(self.table.value["planet"]) if "planet" in self.table.value else []
        if event.new and 0 <= event.new[0] < len(names):
            self.app.selected = names[event.new[0]]

    def _caution_text(self) -> str:
        a = self.app.system.assumptions
        d = self.app.derived
        estimated = [str(n) for n, e in zip(d.planets["name"], d.planets["mass_estimated"]) if e]
        lines = [
            "<b>Model estimates, not measurements.</b> Composition curves and core mass fractions: Zeng, Sasselov "
            "&amp; Jacobsen 2016; H/He envelope fractions: Lopez &amp; Fortney 2014 at an assumed age of "
            f"{interiors.ENVELOPE_AGE_GYR:g} Gyr. A mass and radius fit many interiors.",
            f"Tidal heating for Q' = {a.tidal_q:g} (where a planet gives none of its own), synchronous rotation; "
            "a circular orbit (e = 0) gets none and no bar.",
            f"Escape: energy-limited, XUV flux {a.xuv_flux:g} of the bolometric flux, efficiency "
            f"{a.escape_efficiency:g}. Shoreline drawn through Mars (Zahnle &amp; Catling 2017's I \u221d v\u2074).",
            f"Spectroscopy: scale heights at Teq; transits for a {self.scale_heights:g}-scale-height feature seen at "
            f"{SIGNIFICANCE:g}\u03c3 with {self.precision_ppm:g} ppm per transit; eclipse of a bare black-body rock "
            f"(no heat transport) at {a.eclipse_wavelength_um:g} \u00b5m; mean molecular weight in the assumptions "
            f"{a.mean_molecular_weight:g}.",
        ]
        if estimated:
            lines.append("Masses of " + html.escape(", ".join(estimated)) + " are estimated from the radius (Chen "
                         "&amp; Kipping 2017, with the relation's scatter in the ranges): so is everything drawn "
                         "from them.")
        return "<br>".join(lines)

    def figure(self, backend: str | None = None):
        """The three plots as plain HoloViews objects of the current state (styled for ``backend`` if given)."""
        if backend is not None:
            for styles in STYLES.values():
                styles.register(backend)
        plots = {
            "mass_radius": (self._composition_curves() * self._reference_planets() * self._mass_radius_errors()
                            * self._mass_radius_points() * self._mass_radius_selected()),
            "shoreline": (self._shoreline_line() * self._shoreline_references() * self._shoreline_points()
                          * self._shoreline_selected()),
            "heat": self._heat_bars() * self._heat_references(),
        }
        if backend is not None:
            plots = {name: plot.opts(**STYLES[name].overlay_options(backend), backend=backend)
                     for name, plot in plots.items()}
        return hv.Layout(list(plots.values())).cols(1)

    def panel(self):
        return pn.Column(
            self.caution,
            pn.Row(self.panes["mass_radius"], self.panes["shoreline"], sizing_mode="stretch_width"),
            self.panes["heat"],
            pn.Row(self.scale_input, self.precision_input),
            self.table, sizing_mode="stretch_width")
