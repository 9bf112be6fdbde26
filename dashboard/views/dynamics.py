"""Dynamics: TTV curves of a chosen pair, AMD stability and resonance overlap of every pair, N-body ensembles.

* The TTVs of the chosen adjacent pair's two planets over two super-periods
  (Lithwick, Xie & Wu 2012): the curves from ``ttv.ttv_curves`` (delta t = Im[V exp(i lambda^j)]) with the
  complex amplitudes of ``Derived.extra``, each in a band spanning the
  16th-84th percentile amplitudes of the Monte Carlo draws (the nominal
  phase); after an N-body ensemble (:mod:`.ensemble_run`), the median and
  16th-84th percentile TTVs of its stable draws at each transit beside them.
* beta = AMD / critical AMD of every pair against 1 (Laskar & Petit 2017
  with the resonance-overlap correction of Petit, Laskar & Boue 2017).
* each pair's period ratio against the zone where first-order resonances
  overlap, up to the edge ``overlap_period_ratio`` of the pairs table
  (Deck, Payne & Holman 2013), and the j:j-1 rungs.
* the registry's table of the pairs' dynamics quantities.

Choosing a pair (its list, a table row, a bar or a disc) selects its inner
planet everywhere; selecting a planet elsewhere chooses a pair it belongs
to (as the inner planet if it is one). Every number is a model estimate
under the assumptions said beside the figures.
"""

from __future__ import annotations

import holoviews as hv
import numpy as np
import panel as pn
import param

from orbitdeck.models.physics import ttv
from orbitdeck.models.constants import DAY, MINUTE

from . import palette
from .common import (View, as_floats, batched, escape, fmt, interval, interval_caption, note, section,
                     select_on_tap, set_section, span_texts, while_shown)
from .dynamics_plots import (BETA_LAYERS, BETA_STYLES, OVERLAP_LAYERS, OVERLAP_STYLES, TTV_LAYERS, TTV_STYLES,
                             pairs_note)
from .ensemble_run import EnsembleSection
from .entries import Picker
from .plotting import LayeredPlot, extent
from .tables import caution_html, quantities_of, table_frame, table_widget

VIEW = "dynamics"
#: points along each TTV curve
CURVE_POINTS = 600
#: beta bars are drawn up to this height; taller ones (and infinite ones) are clipped and labelled
BETA_AXIS_CAP = 5.0
MINUTES_PER_DAY = DAY / MINUTE
#: widths of the analytic TTV curves [px]: the selected planet's is wider
CURVE_WIDTH, SELECTED_CURVE_WIDTH = 2.2, 3.6
#: the largest j of the j:j-1 rungs drawn
MAX_RUNG_J = 12


def pair_labels(derived) -> list[str]:
    """"b–c", "c–d", ... of the adjacent pairs."""
    return [f"{a}\u2013{b}" for a, b in zip(derived.pairs["inner"], derived.pairs["outer"])]


class DynamicsView(View):
    """The "Dynamics" view of one app."""

    title = "Dynamics"
    pair = param.Integer(default=None, allow_None=True, doc="Index of the adjacent pair whose TTVs are shown")

    def __init__(self, app, **params):
        super().__init__(app, **params)
        self.quantities = quantities_of(VIEW, "pairs")
        self._labels = pair_labels(app.derived)
        with param.parameterized.discard_events(self):   # nothing is drawn yet
            self.pair = self._pair_of(app.selected)
        self.pair_select = Picker(label="pair for the TTV curves", options=self._options(), value=self.pair,
                                  width=200)
        self.pair_select.param.watch(self._on_pick, "value")
        assumptions = app.system.assumptions
        self.z_amplitude = pn.widgets.FloatInput(label="|Z_free| (free eccentricity, 0 to < 1)", step=0.001,
                                                 value=assumptions.free_eccentricity_amplitude, width=220)
        self.z_angle = pn.widgets.FloatInput(label="angle of Z_free [deg]", step=5.0,
                                             value=assumptions.free_eccentricity_angle, width=160)
        self.z_message = pn.pane.HTML("", styles={"color": palette.WARNING_INK, "font-size": "12px"})
        self.z_amplitude.param.watch(lambda e: self._set_free("free_eccentricity_amplitude", e.new), "value")
        self.z_angle.param.watch(lambda e: self._set_free("free_eccentricity_angle", e.new), "value")
        self.ensemble = EnsembleSection(app, self.title, self._on_ensemble)
        self.ttv = LayeredPlot(TTV_LAYERS, TTV_STYLES, self._ttv_data())
        self.beta = LayeredPlot(BETA_LAYERS, BETA_STYLES, self._beta_data())
        self.overlap = LayeredPlot(OVERLAP_LAYERS, OVERLAP_STYLES, self._overlap_data())
        inner_names = lambda: list(self.app.derived.pairs["inner"])   # noqa: E731  (a row picks its inner planet)
        self.taps = (select_on_tap(app, self.beta.dynamic["bars"], inner_names),
                     select_on_tap(app, self.overlap.dynamic["pairs"], inner_names))
        self.ttv_title, self.ttv_caption, self.pairs_caption = section(), note(), note()
        self.table = table_widget(self._frame(), self.quantities, frozen=("pair",))
        self.table.param.watch(self._on_row, "selection")
        self.caution = note()
        if "selected_pair" in app.param:
            app.param.watch(self._on_selected_pair, "selected_pair")
            app.selected_pair = self.pair
        self._refresh()

    # -- which pair ------------------------------------------------------------------------------
    def _options(self) -> dict:
        return {label: index for index, label in enumerate(self._labels)}

    def _pair_of(self, name):
        """The pair of planet ``name``: the one it is the inner planet of, else the one it ends; else the first."""
        d = self.app.derived
        inner, outer = list(d.pairs["inner"]), list(d.pairs["outer"])
        if name in inner:
            return inner.index(name)
        if name in outer:
            return outer.index(name)
        return 0 if inner else None

    def _choose(self, index) -> None:
        """A pair chosen here (list, table row): show it and select its inner planet everywhere."""
        if index is None or not 0 <= index < len(self._labels):
            return
        self.pair = index
        self.app.selected = str(self.app.derived.pairs["inner"][index])

    @batched
    def _on_pick(self, event):
        if event.new != self.pair:
            self._choose(event.new)

    @batched
    def _on_row(self, event):
        if event.new and event.new[0] != self.pair:
            self._choose(event.new[0])

    def _on_selected_pair(self, event):
        if event.new != self.pair and (event.new is None or 0 <= event.new < len(self._labels)):
            self.pair = event.new

    @param.depends("pair", watch=True)
    def _on_pair(self):
        if "selected_pair" in self.app.param:
            self.app.selected_pair = self.pair
        self._show()

    @param.depends("app.selected", watch=True)
    def _on_selected(self):
        d, name = self.app.derived, self.app.selected
        if self._labels != pair_labels(d):
            return   # a new derivation comes with it: _on_derived chooses the pair
        current = self.pair is not None and name in (d.pairs["inner"][self.pair], d.pairs["outer"][self.pair])
        if current or self.pair is None:
            self._show()
        else:
            self.pair = self._pair_of(name)

    @param.depends("app.derived", watch=True)
    def _on_derived(self):
        before = self._labels[self.pair] if self.pair is not None else None
        self._labels = pair_labels(self.app.derived)
        index = self._labels.index(before) if before in self._labels else self._pair_of(self.app.selected)
        with param.parameterized.discard_events(self):
            self.pair = index
        if "selected_pair" in self.app.param:
            self.app.selected_pair = index
        self._refresh()

    def _on_ensemble(self):
        """The N-body results shown changed (a run ended, a snapshot's results): redraw their TTVs."""
        self._show()

    def _set_free(self, field: str, value) -> None:
        """Put an entered free eccentricity into the system's assumptions, or say why not."""
        assumptions = self.app.system.assumptions
        if self.app.read_only:
            self.z_message.object = "This page follows a presenter: its system cannot be edited here."
            self.z_amplitude.value = assumptions.free_eccentricity_amplitude
            self.z_angle.value = assumptions.free_eccentricity_angle
            return
        if value == getattr(assumptions, field):
            return
        try:
            setattr(assumptions, field, value)
        except (ValueError, TypeError):
            declared = type(assumptions).param[field]
            self.z_message.object = escape(f"{field.replace('_', ' ')}: {value} is outside {declared.bounds}")
            return
        self.z_message.object = ""

    # -- showing -----------------------------------------------------------------------------------
    @while_shown
    @batched
    def _refresh(self):
        d = self.app.derived
        assumptions = self.app.system.assumptions
        self.z_amplitude.value = assumptions.free_eccentricity_amplitude   # a system loaded or edited elsewhere
        self.z_angle.value = assumptions.free_eccentricity_angle
        self.pair_select.param.update(options=self._options(), value=self.pair)
        self.table.value = self._frame()
        self.caution.object = caution_html(self.quantities, d)
        self.ensemble.follow_state()
        self._show()

    @while_shown
    @batched
    def _show(self):
        d = self.app.derived
        self.ttv.update(**self._ttv_data())
        self.beta.update(**self._beta_data())
        self.overlap.update(**self._overlap_data())
        if self.pair_select.value != self.pair:
            self.pair_select.value = self.pair
        wanted = [] if self.pair is None else [self.pair]
        if self.table.selection != wanted:
            self.table.selection = wanted
        set_section(self.ttv_title, self._ttv_heading(d))
        self.ttv_caption.object = self._ttv_note(d)
        self.pairs_caption.object = pairs_note(d, BETA_AXIS_CAP) if self._labels else ""

    # -- the TTV plot ------------------------------------------------------------------------------
    def _prediction(self, d, k):
        """(V, V' [min], super-period [d], j) of pair ``k``, or None where the formulae do not apply."""
        v_in = complex(d.extra["ttv_inner_complex"][k]) * MINUTES_PER_DAY
        v_out = complex(d.extra["ttv_outer_complex"][k]) * MINUTES_PER_DAY
        super_period = float(d.pairs["super_period_d"][k])
        if not all(np.isfinite(x) for x in (abs(v_in), abs(v_out), super_period)):
            return None
        return v_in, v_out, super_period, int(d.pairs["p"][k])

    def _ttv_data(self) -> dict:
        d, k = self.app.derived, self.pair
        lines = {"xs": [], "ys": [], "colour": [], "width": []}
        bands = {"xs": [], "ys": [], "colour": []}
        window, names, colours = (0.0, 1.0), [], []
        if k is not None:
            names = [str(d.pairs["inner"][k]), str(d.pairs["outer"][k])]
            colours = self.colours(names)
            epoch = self.app.system.epoch
            found = self._prediction(d, k)
            if found is not None:
                v_in, v_out, super_period, j = found
                window = (0.0, 2.0 * super_period)
                t = epoch + np.linspace(*window, CURVE_POINTS)
                period, tref = self.app.elements.period_d, self.app.elements.tref_d
                curves = ttv.ttv_curves(t, v_in, v_out, period[k], period[k + 1], tref[k], tref[k + 1], j)
                ranges = [interval(d, "pairs", key) for key in ("ttv_inner_min", "ttv_outer_min")]
                for name, colour, curve, amplitude, found_range in zip(names, colours, curves, (v_in, v_out), ranges):
                    lines["xs"].append(t - epoch)
                    lines["ys"].append(curve)
                    lines["colour"].append(colour)
                    lines["width"].append(SELECTED_CURVE_WIDTH if name == self.app.selected else CURVE_WIDTH)
                    if found_range is not None and np.isfinite([found_range[0][k], found_range[1][k]]).all():
                        # the nominal phase, the amplitude at the 16th and 84th percentiles of the draws
                        low, high = (curve * (r[k] / abs(amplitude)) for r in found_range)
                        bands["xs"].append(np.concatenate([t - epoch, (t - epoch)[::-1]]))
                        bands["ys"].append(np.concatenate([np.maximum(low, high), np.minimum(low, high)[::-1]]))
                        bands["colour"].append(colour)
            elif self.ensemble.current:
                r = self.ensemble.finished.result
                window = (0.0, float(r.orbits * np.median(r.inner_period)))
            nbody = self.ensemble.ttv_points(names, colours, window, epoch)
        else:
            nbody = self.ensemble.ttv_points([], [], window, 0.0)
        y_lo, y_hi = extent(*lines["ys"], *bands["ys"], nbody["low"], nbody["high"])
        pad = 0.08 * (y_hi - y_lo) if np.isfinite(y_lo) and y_hi > y_lo else 1.0
        x_range = window
        y_range = (y_lo - pad, y_hi + pad) if np.isfinite(y_lo) else (-1.0, 1.0)
        ranges = {"x_range": x_range, "y_range": y_range}
        nbody_ranges = {k_: nbody[k_] for k_ in ("x", "low", "high", "colour")}
        return {"bands": {**bands, **ranges}, "curves": {**lines, **ranges},
                "nbody_ranges": {**nbody_ranges, **ranges}, "nbody": {**nbody, **ranges}}

    def _ttv_heading(self, d) -> str:
        if self.pair is None:
            return "Transit-timing variations: no adjacent pairs"
        names = [str(d.pairs["inner"][self.pair]), str(d.pairs["outer"][self.pair])]
        keys = " and ".join(f'<span style="color:{c}">\u25a0</span> {escape(n)} ({role})'
                            for n, c, role in zip(names, self.colours(names), ("inner", "outer")))
        return f"Transit-timing variations of {keys}"

    def _ttv_note(self, d) -> str:
        if self.pair is None:
            return "A single planet: no adjacent pairs."
        a = self.app.system.assumptions
        parts = []
        if self._prediction(d, self.pair) is None:
            parts.append(f"{escape(self._labels[self.pair])}: no near-resonant TTV prediction (the nearest "
                         "commensurability is not first order, |Delta| is outside the formulae's range, or the pair "
                         "is in the overlap zone).")
        else:
            parts.append("Lines: the TTVs Lithwick, Xie &amp; Wu 2012 predict over two super-periods "
                         f"(super-period {fmt(d.pairs['super_period_d'][self.pair], 4)} d), for the assumed free "
                         f"eccentricity |Z_free| = {a.free_eccentricity_amplitude:g} at "
                         f"{a.free_eccentricity_angle:g} deg; time from the system epoch, BJD_TDB "
                         f"{self.app.system.epoch:.5f}.")
            caption = interval_caption(d)
            if caption:
                parts.append(f"Bands: the amplitudes' {escape(caption)}, at the nominal phase.")
        if self.ensemble.finished is not None:
            if self.ensemble.current:
                parts.append("Dots and bars: median and 16th\u201384th percentiles of the N-body ensemble's "
                             "stable draws at each transit (residuals from each draw's straight-line ephemeris "
                             "over the whole run). They hold every planet's pull, the lines only this pair's; the "
                             "draws start from the file's eccentricities, so their free eccentricity need not be "
                             "the one assumed above.")
                r = self.ensemble.finished.result
                span = r.orbits * float(np.median(r.inner_period))
                window = 2.0 * float(d.pairs["super_period_d"][self.pair])
                if np.isfinite(window) and span < window:
                    parts.append(f"The run spans {fmt(span, 4)} d, less than the two super-periods shown: each "
                                 "draw's straight line takes up part of the signal.")
            else:
                parts.append("The N-body results below belong to an earlier state of the system and are not drawn.")
        return " ".join(parts) + " Model estimates, not measurements."

    # -- the AMD and overlap plots ------------------------------------------------------------------
    def _marks(self, count: int) -> dict:
        chosen = [i == self.pair for i in range(count)]
        return {"line_colour": [palette.HIGHLIGHT_COLOUR if c else "#333333" for c in chosen],
                "line_width": np.array([3.0 if c else 0.6 for c in chosen])}

    def _beta_data(self) -> dict:
        d = self.app.derived
        labels = self._labels
        beta = as_floats(d.pairs["amd_beta"])
        shown = np.where(np.isfinite(beta), np.minimum(beta, BETA_AXIS_CAP), BETA_AXIS_CAP)
        found = interval(d, "pairs", "amd_beta")
        if found is not None:
            low, high = (np.minimum(np.nan_to_num(b, nan=0.0, posinf=BETA_AXIS_CAP), BETA_AXIS_CAP) for b in found)
        else:   # a bar of no length: Bokeh's whiskers must not start out empty (see DEVELOPERS)
            low, high = shown, shown
        top = max(1.2, 1.1 * float(np.max(np.concatenate([shown, high]), initial=0.0)))
        y_range = (0.0, top)
        texts = [("infinite (inside the overlap zone)" if b == np.inf else fmt(b, 3)) for b in beta]
        bars = {"pair": labels, "beta": shown, "colour": self.colours(d.pairs["inner"]), "beta_text": texts,
                "beta_range": span_texts(*found, digits=3) if found is not None else [""] * len(labels),
                "y_range": y_range, **self._marks(len(labels))}
        errors = {"pair": labels, "beta": shown, "minus": np.maximum(shown - low, 0.0),
                  "plus": np.maximum(high - shown, 0.0), "shown": found is not None, "y_range": y_range}
        clipped = [i for i, b in enumerate(beta) if not b < BETA_AXIS_CAP]
        labels_ = {"pair": [labels[i] for i in clipped], "position": np.array(clipped, dtype=float),
                   "all_pairs": labels, "beta": np.full(len(clipped), BETA_AXIS_CAP),
                   "text": ["\u221e" if beta[i] == np.inf else fmt(beta[i], 3) for i in clipped], "y_range": y_range}
        return {"bars": bars, "errors": errors, "one": {"y_range": y_range}, "clipped": labels_}

    def _overlap_data(self) -> dict:
        d = self.app.derived
        labels = self._labels
        n = len(labels)
        ratio = as_floats(d.pairs["period_ratio"])
        edge = as_floats(d.pairs["overlap_period_ratio"])
        top = max(1.1, 1.05 * float(np.max(ratio, initial=1.0)), 1.02 * float(np.max(edge, initial=1.0)))
        bottom = min(1.0, float(np.min(ratio, initial=1.0))) - 0.03 * (top - 1.0)
        x_range, y_range = (bottom, top), (-0.7, n - 0.1)
        rows = np.arange(n, dtype=float)
        ranges = {"x_range": x_range, "y_range": y_range}
        rung_j = [j for j in range(2, MAX_RUNG_J + 1) if j / (j - 1) <= top]
        rungs = np.array([j / (j - 1) for j in rung_j])
        # names of the rungs far enough apart to be read (the rungs crowd towards 1)
        named, last = [], np.inf
        for i, x in enumerate(rungs):
            if last - x > 0.05 * (top - bottom):
                named.append(i)
                last = x
        found = interval(d, "pairs", "overlap_period_ratio")
        inside = ["yes" if bool(v) else "no" for v in d.pairs["in_overlap_zone"]]
        chosen = [i == self.pair for i in range(n)]
        return {
            "zones": {"x0": np.full(n, 1.0), "y0": rows - 0.3, "x1": edge, "y1": rows + 0.3, **ranges},
            "rungs": {"x": rungs, "y0": np.full(rungs.size, -0.7), "y1": np.full(rungs.size, n - 0.45), **ranges},
            "rung_names": {"x": rungs[named], "y": np.full(len(named), n - 0.45),
                           "text": [f"{rung_j[i]}:{rung_j[i] - 1}" for i in named], **ranges},
            "pair_names": {"x": np.full(n, bottom + 0.01 * (top - bottom)), "y": rows + 0.3, "text": labels,
                           **ranges},
            "pairs": {"ratio": ratio, "row": rows, "pair": labels, "colour": self.colours(d.pairs["inner"]),
                      "size": np.array([15.0 if c else 11.0 for c in chosen]),
                      "nearest": [str(s) for s in d.pairs["nearest"]], "edge": edge,
                      "edge_range": span_texts(*found, digits=6) if found is not None else [""] * n,
                      "inside": inside, **self._marks(n), **ranges},
        }

    def _frame(self):
        d = self.app.derived
        return table_frame(d, VIEW, "pairs", {"pair": self._labels, "nearest p:q": d.pairs["nearest"]},
                           self.quantities)

    # -- pages and figures ---------------------------------------------------------------------------
    def panel(self):
        plot = lambda p: pn.pane.HoloViews(p.live(), sizing_mode="stretch_width", linked_axes=False)  # noqa: E731
        return pn.Column(
            pn.Row(self.pair_select, self.z_amplitude, self.z_angle, self.z_message),
            self.ttv_title, plot(self.ttv), self.ttv_caption,
            pn.Row(plot(self.beta), plot(self.overlap), sizing_mode="stretch_width"), self.pairs_caption,
            section("Adjacent pairs"), self.table, self.caution,
            section("N-body ensemble (model estimates)"), self.ensemble.panel(),
            sizing_mode="stretch_width")

    def figure(self, backend: str | None = None):
        plots = [self.ttv.figure(backend), self.beta.figure(backend), self.overlap.figure(backend)]
        if self.ensemble.finished is not None:
            plots.append(self.ensemble.survival.figure(backend))
        layout = hv.Layout(plots).cols(1)
        return layout.opts(sublabel_format="", vspace=0.35, backend=backend) if backend == "matplotlib" else layout


def finished_ensemble(app):
    """The N-body ensemble a session has run to its end (None when its Dynamics view holds none)."""
    if DynamicsView.title not in app.views.built():
        return None
    return app.views[DynamicsView.title].ensemble.finished
