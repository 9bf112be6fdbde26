"""The N-body ensemble of the Dynamics view: run in the background, shown with progress, cancellable.

:class:`EnsembleJob` integrates one ensemble at a time
(:func:`orbitdeck.models.nbody.run_ensemble`) on a thread of its own, so the
server's event loop and every other session go on; the thread only writes
plain attributes (the orbits done, then the outcome) and never touches a
widget. :class:`EnsembleSection` holds the controls, the progress bar and the
results of one session; while a run lasts, a periodic callback of the
session reads the job and updates the widgets on the session's own document
(no widget is changed from the thread).

The draws run with dask's synchronous scheduler inside that thread: on a
machine of two cores a pool of worker processes would take both from the
server, and numpy does little enough per call at these sizes that threads
would mostly wait for each other. The run is stopped when its session ends.

A finished run belongs to the state of the system it integrated: the
system-file text of that state is kept with it, and once the system differs
the results are marked as those of an earlier state (a later undo back to
that state makes them current again). Results are model estimates (point
masses, Newtonian gravity, a fixed step), as the section says.
"""

from __future__ import annotations

import threading
import time
from dataclasses import dataclass

import numpy as np
import panel as pn

from orbitdeck.models import dumps_system
from orbitdeck.models.nbody import EnsembleCancelled, EnsembleResult, run_ensemble
from orbitdeck.models.nbody.results import ASSUMPTIONS

from .common import MISSING, batched, escape, fmt, note, while_shown
from .dynamics_plots import SURVIVAL_LAYERS, SURVIVAL_STYLES
from .plotting import LayeredPlot

#: a run of the default demo with these takes about half a minute on two busy cores (see the README)
DEFAULT_DRAWS, DEFAULT_ORBITS = 40, 1200
MAX_DRAWS, MAX_ORBITS = 2000, 100_000
MIN_ORBITS = 10
#: how often a session looks at its running job [ms]
POLL_MS = 250
#: dask's scheduler inside the job's thread (see the module's docstring)
SCHEDULER = "synchronous"
#: bins of the survival-time histogram
SURVIVAL_BINS = 20


@dataclass(frozen=True)
class FinishedEnsemble:
    """An ensemble that ran to its end, with the state of the system it integrated."""

    result: EnsembleResult
    system_text: str
    seconds: float


class EnsembleJob:
    """One N-body ensemble at a time, integrated on a background thread.

    ``progress`` is (orbits done, orbits) and ``outcome`` becomes
    ("done", FinishedEnsemble), ("cancelled", None) or ("failed", message)
    when the thread ends; :meth:`take_outcome` hands it over once.
    """

    def __init__(self):
        self._thread: threading.Thread | None = None
        self._cancel = threading.Event()
        self.progress = (0, 0)
        self.outcome = None
        self.started = 0.0

    @property
    def running(self) -> bool:
        return self._thread is not None and self._thread.is_alive()

    def start(self, system, draws: int, orbits: int, seed: int | None) -> None:
        """Integrate ``system`` (a copy the job keeps to itself) in the background."""
        if self.running:
            raise RuntimeError("an ensemble is already running")
        self._cancel = threading.Event()
        self.progress, self.outcome, self.started = (0, orbits), None, time.perf_counter()
        self._thread = threading.Thread(target=self._work, args=(system, draws, orbits, seed, self._cancel),
                                        name="orbitdeck-ensemble", daemon=True)
        self._thread.start()

    def _work(self, system, draws, orbits, seed, cancel) -> None:
        text = dumps_system(system)
        try:
            result = run_ensemble(system, draws, orbits, seed, scheduler=SCHEDULER, progress=self._progressed,
                                  cancel=cancel)
        except EnsembleCancelled:
            self.outcome = ("cancelled", None)
        except Exception as error:  # shown in the page; the session goes on
            self.outcome = ("failed", f"{type(error).__name__}: {error}")
        else:
            self.outcome = ("done", FinishedEnsemble(result, text, time.perf_counter() - self.started))

    def _progressed(self, done: int, total: int) -> None:
        self.progress = (done, total)

    def cancel(self) -> None:
        """Stop the run at its next check (between blocks of orbits)."""
        self._cancel.set()

    def join(self, timeout: float | None = None) -> None:
        if self._thread is not None:
            self._thread.join(timeout)

    def take_outcome(self):
        """The outcome of the run that has ended (once), or None while it runs or when already taken."""
        if self.running:
            return None
        outcome, self.outcome = self.outcome, None
        return outcome


class EnsembleSection:
    """The controls, progress and results of the N-body ensemble of one session's Dynamics view.

    ``on_results()`` is called (on the session's thread) when the results shown change, or become those
    of an earlier state, so the view can redraw the N-body TTVs.
    """

    def __init__(self, app, tab: str, on_results):
        self.app, self.tab, self._on_results = app, tab, on_results
        self.job = EnsembleJob()
        self.finished: FinishedEnsemble | None = None
        self.static = False           # a snapshot: no controls, and says when there are no results
        self._poller = None
        self._closing_watched = False
        self._last = ""               # how the last run ended: "", "done", "cancelled", "failed: ..."
        self._current_for = (None, None)   # (state key, whether the results belong to that state)
        self.draws = pn.widgets.IntInput(label=f"N-body draws (1 to {MAX_DRAWS})", value=DEFAULT_DRAWS, start=1,
                                         end=MAX_DRAWS, step=10, width=170)
        self.orbits = pn.widgets.IntInput(label=f"orbits of the innermost planet ({MIN_ORBITS} to {MAX_ORBITS})",
                                          value=DEFAULT_ORBITS, start=MIN_ORBITS, end=MAX_ORBITS, step=100,
                                          width=250)
        self.run_button = pn.widgets.Button(label="Run the N-body ensemble", color="primary", width=210,
                                            align="end")
        self.cancel_button = pn.widgets.Button(label="Cancel the run", disabled=True, width=130, align="end")
        self.run_button.on_click(lambda _event: self.start())
        self.cancel_button.on_click(lambda _event: self.cancel())
        self.progress = pn.indicators.Progress(value=0, max=DEFAULT_ORBITS, visible=False, width=420,
                                               bar_color="primary", margin=(4, 12))
        self.status = note()
        self.summary = pn.pane.HTML("", sizing_mode="stretch_width", margin=(2, 12))
        self.survival = LayeredPlot(SURVIVAL_LAYERS, SURVIVAL_STYLES, self._survival_data())
        self.survival_pane = pn.pane.HoloViews(self.survival.live(), sizing_mode="stretch_width", linked_axes=False,
                                               visible=False)
        self.caution = note(escape(ASSUMPTIONS) + " The N-body draws are the system's own Monte Carlo draws "
                            "(of its stated uncertainties), independent of the uncertainty switch.")
        self.controls = pn.Row(self.draws, self.orbits, self.run_button, self.cancel_button)
        self._paint()

    # -- running ---------------------------------------------------------------------------------
    def start(self) -> None:
        """Start a run of the current system with the entered draws and orbits (one at a time)."""
        if self.job.running or self.static:
            return
        system = self.app.system
        if not system.planets:
            self.status.object = "No planets to integrate."
            return
        draws = int(min(max(self.draws.value or 1, 1), MAX_DRAWS))
        orbits = int(min(max(self.orbits.value or MIN_ORBITS, MIN_ORBITS), MAX_ORBITS))
        self.job.start(system.copy(), draws, orbits, self.app.seed)
        self._watch_session_end()
        self._poll_while_running()
        self._paint()

    def cancel(self) -> None:
        self.job.cancel()

    def _poll_while_running(self) -> None:
        """Look at the job every POLL_MS on the session's own loop (no loop, as in a test: :meth:`poll` by hand)."""
        if self._poller is None:
            self._poller = pn.state.add_periodic_callback(self.poll, period=POLL_MS, start=True)

    def _watch_session_end(self) -> None:
        """Cancel the run when the session's page is closed."""
        doc = pn.state.curdoc
        if not self._closing_watched and doc is not None and doc.session_context is not None:
            doc.on_session_destroyed(lambda _context: self.job.cancel())
            self._closing_watched = True

    def poll(self) -> None:
        """Show the running job's progress, or take its outcome once it has ended."""
        outcome = self.job.take_outcome()
        if outcome is not None:
            if self._poller is not None:
                self._poller.stop()
                self._poller = None
            kind, value = outcome
            if kind == "done":
                self.finished = value
                self._last = "done"
                self._on_results()
            else:
                self._last = kind if kind == "cancelled" else f"failed: {value}"
        self._paint()

    # -- state -----------------------------------------------------------------------------------
    @property
    def current(self) -> bool:
        """Whether the results shown belong to the system as it is now (worked out once per state)."""
        if self.finished is None:
            return False
        system = self.app.system
        key = (id(system), system.revision, id(self.finished))
        if self._current_for[0] != key:
            self._current_for = (key, self.finished.system_text == dumps_system(system))
        return self._current_for[1]

    def show(self, finished: FinishedEnsemble | None, static: bool = False) -> None:
        """Show ``finished`` as this section's results (a snapshot's: ``static``, without controls)."""
        self.finished, self.static = finished, static
        self.controls.visible = not static
        self._on_results()
        self._paint()

    def follow_state(self) -> None:
        """The system changed: say whether the results still belong to it."""
        self._paint()

    # -- painting --------------------------------------------------------------------------------
    @while_shown
    @batched
    def _paint(self) -> None:
        running = self.job.running
        done, total = self.job.progress
        self.run_button.disabled = running
        self.cancel_button.disabled = not running
        self.progress.visible = running
        if running:
            self.progress.param.update(max=max(total, 1), value=min(done, total))
            elapsed = time.perf_counter() - self.job.started
            self.status.object = (f"Integrating: {done} of {total} orbits ({100 * done / max(total, 1):.0f} %, "
                                  f"{elapsed:.0f} s).")
        elif self._last == "cancelled":
            self.status.object = "The last run was cancelled" + (
                "; the results below are those of an earlier run." if self.finished else ".")
        elif self._last.startswith("failed"):
            self.status.object = escape(f"The last run {self._last}")
        else:
            self.status.object = ""
        self.summary.object = self._summary_html()
        self.survival.update(**self._survival_data())
        self.survival_pane.visible = self.finished is not None

    def _summary_html(self) -> str:
        found = self.finished
        if found is None:
            if self.static:
                return ("<p><b>No N-body ensemble was run for this state</b> before this snapshot was taken: "
                        "it holds no N-body results.</p>")
            return "<p>No N-body ensemble has been run in this session yet.</p>"
        r = found.result
        low, high = r.stable_interval
        stale = "" if self.current else (
            '<p class="od-stale" style="color:#8a2d00"><b>These results belong to an earlier state of the '
            "system</b> (it has been edited since the run): they are not the current state's, and the TTV plot "
            "leaves them out. Run again for the current state.</p>")
        stopped = {name: n for name, n in r.outcome_counts().items() if name != "survived" and n}
        stops = ("; stopped: " + ", ".join(f"{n} by {escape(name)}" for name, n in stopped.items())) if stopped else ""
        megno = r.megno[r.stable]
        chaos = (f" Median MEGNO &lt;Y&gt; of the stable draws: {fmt(np.nanmedian(megno), 3)} (about 2: "
                 "quasi-periodic; larger: chaotic)." if np.isfinite(megno).any() else "")
        seed = r.seed if r.seed is not None else MISSING
        return (f"{stale}<p><b>Stable to the end: {100 * r.stable_fraction:.1f} %</b> of {r.draws} draws "
                f"(68.27 % Wilson interval {100 * low:.1f}\u2013{100 * high:.1f} %) over {r.orbits} orbits of the "
                f"innermost planet{stops}.{chaos} Model estimates, not measurements. "
                f"(Seed {seed}; {found.seconds:.1f} s.)</p>")

    def _survival_data(self) -> dict:
        found = self.finished
        if found is None:
            empty = {"edges": np.array([0.0, 1.0]), "counts": np.zeros(1), "x_range": (0.0, 1.0),
                     "y_range": (0.0, 1.0)}
            return {"stopped": empty, "survived": empty}
        r = found.result
        orbits = float(r.orbits)
        edges = np.linspace(0.0, orbits, SURVIVAL_BINS + 1)
        width = edges[1] - edges[0]
        stopped, _ = np.histogram(r.survival_orbits[~r.stable], bins=edges)
        survived = float(np.count_nonzero(r.stable))
        # room on the right for the legend (in the plot's top right corner), beyond the survivors' bar
        x_range, y_range = (0.0, 1.3 * orbits), (0.0, 1.1 * max(float(stopped.max(initial=0)), survived, 1))
        return {"stopped": {"edges": edges, "counts": stopped.astype(float), "x_range": x_range, "y_range": y_range},
                "survived": {"edges": np.array([orbits + 0.25 * width, orbits + 1.25 * width]),
                             "counts": np.array([survived]), "x_range": x_range, "y_range": y_range}}

    # -- the N-body TTVs of two planets ---------------------------------------------------------
    def ttv_points(self, names, colours, window, epoch) -> dict:
        """Median and 16th-84th percentile TTVs [min] of the stable draws at each transit of the planets
        ``names`` within ``window`` (days from ``epoch``); empty without current results."""
        x, median, low, high, colour, planet, transit, bjd = ([] for _ in range(8))
        found = self.finished
        if found is not None and self.current:
            r = found.result
            for name, shade in zip(names, colours):
                if name not in r.names:
                    continue
                times, band = r.ttv_band(r.names.index(name))
                days = times - epoch
                keep = np.flatnonzero(np.isfinite(days) & (days >= window[0]) & (days <= window[1])
                                      & np.isfinite(band).all(axis=0))
                x.append(days[keep])
                low.append(band[0, keep])
                median.append(band[1, keep])
                high.append(band[2, keep])
                colour += [shade] * keep.size
                planet += [name] * keep.size
                transit.append(keep.astype(float))
                bjd.append(times[keep])
        joined = [np.concatenate(v) if v else np.zeros(0) for v in (x, median, low, high, transit, bjd)]
        x, median, low, high, transit, bjd = joined
        span = [f"{fmt(a, 3)}\u2013{fmt(b, 3)}" for a, b in zip(low, high)]
        return {"x": x, "median": median, "low": low, "high": high, "colour": colour, "planet": planet,
                "transit": transit, "bjd": bjd, "span": span}

    def panel(self):
        return pn.Column(self.controls, self.progress, self.status, self.summary, self.survival_pane, self.caution,
                         sizing_mode="stretch_width")
