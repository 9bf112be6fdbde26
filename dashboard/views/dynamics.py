"""Dynamics: predicted TTV curves, AMD stability and resonance-overlap zones of the adjacent pairs.

Three HoloViews figures rendered with Bokeh, rebuilt when the derived state
changes (only while the tab is shown in a served page):

* the TTV curves of the chosen pair's two planets over two super-periods
  (Lithwick, Xie & Wu 2012), delta t = Im[V exp(i lambda^j)], the band
  spanning the 16th-84th percentile amplitudes of the Monte Carlo draws;
* beta = C / C_c of every pair against 1 (Laskar & Petit 2017 with the
  resonance-overlap correction of Petit, Laskar & Boue 2017);
* each pair's period ratio against the shaded zone where first-order
  resonances overlap (Deck, Payne & Holman 2013) and the first-order rungs.

The view is self-contained: it reads ``app.derived``, ``app.system`` and
``app.selected`` and sets ``app.selected`` to the inner planet of the pair
chosen here (in its list or its table), so every other view highlights it. Every number is a model
estimate under the assumptions said beside the figures.
"""

from __future__ import annotations

import html

import holoviews as hv
import numpy as np
import pandas as pd
import panel as pn
import param

from orbitdeck.models import dynamics, ttv
from orbitdeck.models.constants import M_EARTH, M_SUN

from . import palette
from .plotting import load_backend

#: points along each TTV curve
CURVE_POINTS = 600
#: beta bars are drawn up to this height; taller ones are clipped and labelled with their value
BETA_AXIS_CAP = 5.0
FIGURE_HEIGHT = 300


def pair_labels(derived) -> list[str]:
    """"b-c", "c-d", ... of the adjacent pairs."""
    return [f"{a}-{b}" for a, b in zip(derived.pairs["inner"], derived.pairs["outer"])]


def complex_amplitudes(derived, system, index: int) -> tuple[complex, complex]:
    """The complex TTV amplitudes V and V' [min] of pair ``index`` (Lithwick, Xie & Wu 2012, eqs. 8-9),
    with the moduli derive() gives; NaN where the formulae do not apply."""
    pairs, planets = derived.pairs, derived.planets
    size_in, size_out = pairs["ttv_inner_min"][index], pairs["ttv_outer_min"][index]
    if not (np.isfinite(size_in) and np.isfinite(size_out)):
        return complex(np.nan, np.nan), complex(np.nan, np.nan)
    j, delta = int(pairs["p"][index]), float(pairs["delta"][index])
    a = planets["semi_major_axis_au"]
    mass = planets["mass_mearth"] * M_EARTH / (derived.star["mass_msun"] * M_SUN)
    alpha = a[index] / a[index + 1]
    z_free = ttv.free_eccentricity(system.assumptions.free_eccentricity_amplitude,
                                   system.assumptions.free_eccentricity_angle)
    inner = ttv.ttv_amplitude_inner(1.0, mass[index + 1], j, delta, ttv.resonance_coefficient_f(alpha, j), z_free)
    outer = ttv.ttv_amplitude_outer(1.0, mass[index], j, delta, ttv.resonance_coefficient_g(alpha, j), z_free)
    # the phases from the formulae, the moduli as derived (the same numbers, one source for the tables)
    return complex(size_in * inner / abs(inner)), complex(size_out * outer / abs(outer))


class DynamicsView(param.Parameterized):
    """The "Dynamics" view of one app: TTV curves of one pair, AMD beta of all, overlap zones."""

    title = "Dynamics"
    tab = title

    pair = param.Selector(default=None, objects=[], allow_None=True, doc="The pair whose TTV curves are shown")

    def __init__(self, app, **params):
        super().__init__(**params)
        load_backend("bokeh")   # HoloViews' Bokeh options, without changing the current backend
        self.app = app
        self.pair_select = pn.widgets.Select(label="pair for the TTV curves", options=[], width=220)
        self.pair_select.param.watch(lambda event: setattr(self, "pair", event.new), "value")
        self.ttv_pane = pn.pane.HoloViews(None, backend="bokeh", sizing_mode="stretch_width")
        self.beta_pane = pn.pane.HoloViews(None, backend="bokeh", sizing_mode="stretch_width")
        self.overlap_pane = pn.pane.HoloViews(None, backend="bokeh", sizing_mode="stretch_width")
        assumptions = app.system.assumptions
        self.z_amplitude = pn.widgets.FloatInput(label="|Z_free| (free eccentricity, 0 to < 1)", step=0.001,
                                                 value=assumptions.free_eccentricity_amplitude, width=220)
        self.z_angle = pn.widgets.FloatInput(label="angle of Z_free [deg]", step=5.0,
                                             value=assumptions.free_eccentricity_angle, width=160)
        self.z_message = pn.pane.HTML("", styles={"color": "#8a2d00", "font-size": "12px"})
        self.z_amplitude.param.watch(lambda e: self._set_free("free_eccentricity_amplitude", e.new), "value")
        self.z_angle.param.watch(lambda e: self._set_free("free_eccentricity_angle", e.new), "value")
        self.note = pn.pane.HTML("", sizing_mode="stretch_width", styles={"font-size": "12px", "color": "#444"})
        self.table = pn.widgets.Tabulator(pd.DataFrame(), disabled=True, show_index=False, height=230,
                                          selectable=1, sizing_mode="stretch_width")
        self.table.param.watch(self._on_row, "selection")
        app.param.watch(self._on_derived, "derived")
        app.param.watch(self._on_selected, "selected")
        self.param.watch(self._on_pair, "pair")
        self.update()

    # -- following the app ---------------------------------------------------------------------
    def _deferred(self, method) -> bool:
        """True (and ``method`` kept for later) while the view's tab is hidden in a served page."""
        if self.app.tab_hidden(self.tab):
            self.app.mark_stale(self.tab, (id(self), method.__name__), method)
            return True
        return False

    def _on_derived(self, *_):
        if not self._deferred(self.update):
            self.update()

    def _on_selected(self, *_):
        labels = list(self.param.pair.objects)
        name = self.app.selected
        if not labels or name is None or (self.pair and name in self.pair.split("-")):
            return
        # the pair where the planet is the inner one, else the one where it is the outer
        touching = sorted((label.split("-").index(name), label) for label in labels if name in label.split("-"))
        if touching:
            self.pair = touching[0][1]

    def _set_free(self, field: str, value) -> None:
        """Put an entered free eccentricity into the system's assumptions, or say why not."""
        try:
            setattr(self.app.system.assumptions, field, value)
        except (ValueError, TypeError):
            declared = type(self.app.system.assumptions).param[field]
            self.z_message.object = html.escape(f"{field.replace('_', ' ')}: {value} is outside {declared.bounds}")
            return
        self.z_message.object = ""

    def _on_row(self, event):
        """A row picked in the table chooses its pair."""
        labels = list(self.param.pair.objects)
        if event.new and 0 <= event.new[0] < len(labels):
            self.pair = labels[event.new[0]]

    def _on_pair(self, *_):
        if self.pair is not None:
            inner = self.pair.split("-")[0]
            if self.app.selected not in self.pair.split("-"):
                self.app.selected = inner
        if not self._deferred(self.update_figures):
            self.update_figures()

    def update(self, *_):
        """Refresh the pair choices and then everything shown."""
        d = self.app.derived
        assumptions = self.app.system.assumptions
        self.z_amplitude.value = assumptions.free_eccentricity_amplitude   # a system loaded or edited elsewhere
        self.z_angle.value = assumptions.free_eccentricity_angle
        labels = pair_labels(d) if d is not None else []
        keep = self.pair if self.pair in labels else None
        if keep is None and labels:
            chosen = [label for label in labels if self.app.selected in label.split("-")]
            keep = chosen[0] if chosen else labels[0]
        with param.parameterized.discard_events(self):
            self.param.pair.objects = labels
            self.pair = keep
        self.pair_select.param.update(options=labels, value=keep)   # at once: no passing value fires
        self.update_figures()

    def update_figures(self, *_):
        d = self.app.derived
        if d is None or not len(d.pairs["inner"]):
            for pane in (self.ttv_pane, self.beta_pane, self.overlap_pane):
                pane.object = None
            self.note.object = "A single planet: no adjacent pairs."
            return
        index = pair_labels(d).index(self.pair) if self.pair in pair_labels(d) else 0
        self.ttv_pane.object = self.ttv_figure(d, index)
        self.beta_pane.object = self.beta_figure(d, index)
        self.overlap_pane.object = self.overlap_figure(d, index)
        self.note.object = self.caution(d)
        self.table.value = self.pair_frame(d)
        if self.table.selection != [index]:
            self.table.selection = [index]

    # -- figures --------------------------------------------------------------------------------
    def ttv_figure(self, d, index: int):
        system = self.app.system
        v_in, v_out = complex_amplitudes(d, system, index)
        labels = pair_labels(d)
        title = f"Predicted TTVs of {labels[index]} over two super-periods (Lithwick, Xie & Wu 2012)"
        if not np.isfinite(abs(v_in)):
            return hv.Text(0.5, 0.5, f"{labels[index]}: no near-resonant TTV prediction (the nearest "
                                     "commensurability is not first order, or |Delta| is outside the formula's "
                                     "range)").opts(title=title, height=FIGURE_HEIGHT, responsive=True,
                                                     xaxis=None, yaxis=None, toolbar=None)
        inner, outer = system.planets[index], system.planets[index + 1]
        period_in, period_out = inner.period, outer.period
        super_period = float(d.pairs["super_period_d"][index])
        start = system.epoch
        t = np.linspace(start, start + 2.0 * super_period, CURVE_POINTS)
        j = int(d.pairs["p"][index])
        longitude = ttv.longitude_of_conjunctions(
            t, period_in, period_out, inner.transit_time if inner.transit_time is not None else start,
            outer.transit_time if outer.transit_time is not None else start, j)
        colours = self.app.colours.colours(system.planet_names)
        bands = (d.intervals or {}).get("pairs", {})
        layers = []
        for name, amplitude, key, colour in ((inner.name, v_in, "ttv_inner_min", colours[index]),
                                            (outer.name, v_out, "ttv_outer_min", colours[index + 1])):
            curve = ttv.ttv_signal(amplitude, longitude)
            if key in bands:
                low, high = (float(b[index]) for b in bands[key])
                unit = curve / abs(amplitude)
                lower, upper = np.minimum(low * unit, high * unit), np.maximum(low * unit, high * unit)
                layers.append(hv.Spread((t, curve, curve - lower, upper - curve), kdims="time",
                                        vdims=["ttv", "below", "above"], label=f"{name} 16-84 %")
                              .opts(color=colour, alpha=0.2, line_alpha=0))
            layers.append(hv.Curve((t, curve), kdims="time", vdims="ttv", label=f"planet {name}")
                          .opts(color=colour, line_width=2.5 if name == self.app.selected else 1.6))
        return hv.Overlay(layers).opts(
            title=title, height=FIGURE_HEIGHT, responsive=True, xlabel="time [BJD_TDB, d]", xformatter="%.1f",
            ylabel="TTV (model estimate) [min]", legend_position="top_right", show_grid=True)

    def beta_figure(self, d, index: int):
        labels = pair_labels(d)
        beta = np.asarray(d.pairs["amd_beta"], dtype=float)
        shown = np.where(np.isfinite(beta), np.minimum(beta, BETA_AXIS_CAP), BETA_AXIS_CAP)
        inner_colours = self.app.colours.colours(d.planet_names)
        colours = [inner_colours[i] if i == index else palette.MUTED_INK for i in range(len(labels))]
        frame = pd.DataFrame({"pair": labels, "beta": shown, "colour": colours})
        bars = hv.Bars(frame, kdims="pair", vdims=["beta", "colour"]).opts(color="colour", alpha=0.8)
        layers = [bars, hv.HLine(1.0).opts(color=palette.HIGHLIGHT_COLOUR, line_width=1.5, line_dash="dashed")]
        bounds = (d.intervals or {}).get("pairs", {}).get("amd_beta")
        if bounds is not None:
            low, high = (np.minimum(np.nan_to_num(np.asarray(b, dtype=float), nan=0.0, posinf=BETA_AXIS_CAP),
                                    BETA_AXIS_CAP) for b in bounds)
            layers.append(hv.ErrorBars((labels, shown, shown - low, high - shown), kdims="pair",
                                       vdims=["beta", "below", "above"]).opts(color="#333333"))
        clipped = [(label, BETA_AXIS_CAP, "\u221e" if not np.isfinite(b) else f"{b:.3g}")
                   for label, b in zip(labels, beta) if not b < BETA_AXIS_CAP]
        if clipped:
            layers.append(hv.Labels(clipped, kdims=["pair", "beta"], vdims="text").opts(text_font_size="10px",
                                                                                         yoffset=-0.25))
        if not d.system.get("amd_kg_m2_s"):
            layers.append(hv.Text(labels[(len(labels) - 1) // 2], 0.5, "AMD = 0 (circular orbits): beta = 0")
                          .opts(text_font_size="11px", text_color=palette.MUTED_INK))
        stable = d.system.get("amd_stable")
        share = (d.fractions or {}).get("system", {}).get("amd_stable")
        verdict = ("AMD-stable" if stable else "not AMD-stable") + (f", {100 * share:.0f} % of draws" if share
                                                                    is not None else "")
        return hv.Overlay(layers).opts(
            title=f"AMD: beta = C / C_c per pair against 1 (system {verdict})", height=FIGURE_HEIGHT,
            responsive=True, ylim=(0, max(1.2, float(np.max(shown, initial=0.0)) * 1.1)),
            ylabel="beta (model estimate)", xlabel="adjacent pair", show_legend=False)

    def overlap_figure(self, d, index: int):
        labels = pair_labels(d)
        ratio = np.asarray(d.pairs["period_ratio"], dtype=float)
        mass = d.planets["mass_mearth"] * M_EARTH / (d.star["mass_msun"] * M_SUN)
        epsilon = mass[:-1] + mass[1:]
        # Kepler's third law for nearly equal central masses: P2/P1 = (a2/a1)^(3/2)
        edge = (1.0 + dynamics.overlap_spacing(epsilon)) ** 1.5
        rows = np.arange(len(labels))
        zones = hv.Rectangles([(1.0, r - 0.35, e, r + 0.35) for r, e in zip(rows, edge)],
                              label="overlap zone").opts(color=palette.REFERENCE_COLOUR, alpha=0.4, line_alpha=0)
        top = max(float(np.max(ratio)) * 1.05, float(np.max(edge)) * 1.02, 1.1)
        rungs = [j / (j - 1) for j in range(2, 13) if j / (j - 1) <= top]
        layers = [zones, *[hv.VLine(r).opts(color=palette.MUTED_INK, line_width=1, line_dash="dotted")
                           for r in rungs]]
        colours = self.app.colours.colours(d.planet_names)
        points = pd.DataFrame({"ratio": ratio, "row": rows, "pair": labels, "colour": colours[:len(labels)],
                               "size": [14 if i == index else 9 for i in rows]})
        layers.append(hv.Scatter(points, kdims="ratio", vdims=["row", "pair", "colour", "size"])
                      .opts(color="colour", size="size", line_color=palette.HIGHLIGHT_COLOUR, tools=["hover"]))
        return hv.Overlay(layers).opts(
            title="Period ratios and first-order resonance overlap zones (Deck et al. 2013)",
            height=FIGURE_HEIGHT, responsive=True, xlim=(1.0, top), ylim=(-0.7, len(labels) - 0.3),
            xlabel="period ratio P_outer / P_inner (dotted: j:j-1)", ylabel="adjacent pair",
            yticks=list(zip(rows.tolist(), labels)), show_legend=False)

    # -- texts ------------------------------------------------------------------------------------
    def caution(self, d) -> str:
        a = self.app.system.assumptions
        estimated = [str(n) for n, e in zip(d.planets["name"], d.planets["mass_estimated"]) if e]
        parts = [f"Model estimates. TTV amplitudes near first-order commensurabilities (Lithwick, Xie &amp; Wu "
                 f"2012) for the assumed free eccentricity |Z_free| = {a.free_eccentricity_amplitude:g} at "
                 f"{a.free_eccentricity_angle:g} deg; bands show the 16th\u201384th percentile amplitudes "
                 "(the phase is the nominal one).",
                 "AMD (Laskar &amp; Petit 2017; Petit, Laskar &amp; Bou\u00e9 2017), Hill stability (Gladman 1993) and "
                 "resonance overlap (Deck, Payne &amp; Holman 2013) take mutual inclinations as zero."]
        if estimated:
            parts.append("Masses of " + html.escape(", ".join(estimated)) + " are estimated from their radii "
                         "(Chen &amp; Kipping 2017), and so are the numbers that rest on them.")
        return " ".join(parts)

    def pair_frame(self, d) -> pd.DataFrame:
        pairs = d.pairs
        bounds = (d.intervals or {}).get("pairs", {})
        shares = (d.fractions or {}).get("pairs", {})

        def with_range(key, digits=3):
            values = np.asarray(pairs[key], dtype=float)
            if key not in bounds:
                return [f"{v:.{digits}g}" if np.isfinite(v) else "\u2013" for v in values]
            low, high = bounds[key]
            return [f"{v:.{digits}g} ({lo:.{digits}g}\u2013{hi:.{digits}g})" if np.isfinite(v) else "\u2013"
                    for v, lo, hi in zip(values, low, high)]

        def yes_no(key):
            verdicts = ["yes" if bool(v) else "no" for v in pairs[key]]
            if key in shares:
                verdicts = [f"{v} ({100 * s:.0f} %)" for v, s in zip(verdicts, shares[key])]
            return verdicts

        return pd.DataFrame({
            "pair": pair_labels(d), "nearest": list(pairs["nearest"]), "Delta": with_range("delta"),
            "P_super [d]": with_range("super_period_d", 4), "TTV inner [min]": with_range("ttv_inner_min"),
            "TTV outer [min]": with_range("ttv_outer_min"), "beta (AMD)": with_range("amd_beta"),
            "Hill stable": yes_no("hill_stable"), "overlap zone": yes_no("in_overlap_zone")})

    def panel(self):
        return pn.Column(pn.Row(self.pair_select, self.z_amplitude, self.z_angle, self.z_message), self.note,
                         self.ttv_pane,
                         pn.Row(self.beta_pane, self.overlap_pane, sizing_mode="stretch_width"), self.table,
                         sizing_mode="stretch_width")
