"""The Dynamics tab's N-body ensemble in the background: how long the button's default run takes, and how
much it slows the server's event loop and another session's edit meanwhile. Prints medians (p95 for
latencies); asserts nothing.

Run: python tests/benchmarks/bench_dynamics_run.py [draws orbits]

* run: wall time of one ensemble of the default demo started as the Run button starts it
  (``EnsembleJob``: dask's synchronous scheduler on a thread of its own), default draws and orbits;
* loop lag: how late an asyncio timer of 10 ms fires on the main thread, idle and during the run
  (the server's event loop shares the interpreter with the run's thread);
* edit: another session's edit of the star's mass (derivation and the update of its Layout and Dynamics
  views), idle and during the run.

The machine's load average is printed: other work on a shared machine slows every figure.
"""

from __future__ import annotations

import asyncio
import os
import statistics
import sys
import time

from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.dashboard.views.ensemble_run import DEFAULT_DRAWS, DEFAULT_ORBITS, EnsembleJob
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import load_system

SEED = 20261201
TICK = 0.010


def load() -> str:
    return "load average " + " ".join(f"{x:.2f}" for x in os.getloadavg())


def p95(values) -> float:
    return sorted(values)[int(0.95 * (len(values) - 1))]


async def loop_lag(seconds: float, until=None) -> list[float]:
    """Lateness of a 10 ms timer [ms], for ``seconds`` or while ``until()`` holds."""
    lags, end = [], time.perf_counter() + seconds
    while (until() if until else time.perf_counter() < end):
        start = time.perf_counter()
        await asyncio.sleep(TICK)
        lags.append((time.perf_counter() - start - TICK) * 1e3)
    return lags


def edit_ms(app, mass: float) -> float:
    start = time.perf_counter()
    app.system.star.mass = mass
    return (time.perf_counter() - start) * 1e3


def edits(app, count: int = 8) -> list[float]:
    return [edit_ms(app, 0.231 + 0.001 * (i % 2)) for i in range(count)]


def main() -> None:
    draws, orbits = (int(sys.argv[1]), int(sys.argv[2])) if len(sys.argv) == 3 else (DEFAULT_DRAWS, DEFAULT_ORBITS)
    other = OrbitDeckApp(load_system(demo_path()))
    other.views["Dynamics"]
    edits(other, 2)   # warm
    idle_lag = asyncio.run(loop_lag(3.0))
    idle_edit = edits(other)
    print(f"idle: loop lag median {statistics.median(idle_lag):.2f} ms, p95 {p95(idle_lag):.2f} ms; "
          f"another session's edit median {statistics.median(idle_edit):.0f} ms, p95 {p95(idle_edit):.0f} ms "
          f"({load()})")
    job = EnsembleJob()
    start = time.perf_counter()
    job.start(load_system(demo_path()), draws, orbits, SEED)
    busy_lag = asyncio.run(loop_lag(0.0, until=lambda: job.running and time.perf_counter() - start < 8.0))
    busy_edit = edits(other) if job.running else []
    job.join()
    seconds = time.perf_counter() - start
    kind, _ = job.take_outcome()
    print(f"during the run: loop lag median {statistics.median(busy_lag):.2f} ms, p95 {p95(busy_lag):.2f} ms"
          + (f"; another session's edit median {statistics.median(busy_edit):.0f} ms, p95 {p95(busy_edit):.0f} ms"
             if busy_edit else ""))
    print(f"run of {draws} draws x {orbits} orbits of the default demo: {seconds:.1f} s ({kind}; {load()})")


if __name__ == "__main__":
    main()
