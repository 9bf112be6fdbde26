"""Timing of the N-body ensembles on the default demo (seven planets).

Run as ``python tests/benchmarks/bench_nbody.py [--quick] [steps] [cluster] [full]`` (the parts to
run, all by default); prints figures, asserts nothing.
Targets: 7 planets x 1000 draws x 1000 orbits of the innermost planet under 60 s on this
2-core machine (default settings: MEGNO on, which integrates a shadow of every draw); the
dask LocalCluster of 2 workers no slower than 1.2 x the single-process path.
The machine's load average is printed beside each figure: other work on a shared machine
slows every figure here.
"""

from __future__ import annotations

import os
import resource
import statistics
import sys
import time

from orbitdeck.demo_systems import demo_path
from orbitdeck.models import load_system
from orbitdeck.models.nbody import Settings, run_ensemble

SEED = 20261201


def cpu_seconds() -> float:
    """CPU time of this process and of its finished children (worker processes) [s]."""
    own, children = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    return own.ru_utime + own.ru_stime + children.ru_utime + children.ru_stime


def timed(**kwargs) -> tuple[float, float]:
    """Wall time and CPU time (this process and its worker processes) [s] of one ensemble run."""
    start, start_cpu = time.perf_counter(), cpu_seconds()
    run_ensemble(SYSTEM, seed=SEED, **kwargs)
    return time.perf_counter() - start, cpu_seconds() - start_cpu


def load() -> str:
    return f"(load average {os.getloadavg()[0]:.1f})"


def planet_steps(draws: int, orbits: int, chaos: bool = True) -> float:
    """Planet-steps integrated, shadows included."""
    return 7 * draws * orbits * Settings().steps_per_orbit * (2 if chaos else 1)


def per_step_cost(quick: bool) -> None:
    print("time per planet-step against the step count (one process, 256 draws, shadows counted):")
    for orbits in (5, 20, 80) if quick else (10, 40, 160, 640):
        repeats = 3 if orbits <= 160 else 1
        runs = [timed(draws=256, orbits=orbits, scheduler="synchronous") for _ in range(repeats)]
        wall, cpu = (statistics.median(r[k] for r in runs) for k in (0, 1))
        steps = orbits * Settings().steps_per_orbit
        print(f"  {steps:6d} steps: {1e9 * wall / planet_steps(256, orbits):6.1f} ns per planet-step wall, "
              f"{1e9 * cpu / planet_steps(256, orbits):6.1f} CPU (median of {repeats}; {wall:.2f} s) {load()}")


def cluster_against_single_process(quick: bool) -> None:
    from distributed import Client, LocalCluster

    draws, orbits = (256, 20) if quick else (1000, 100)
    single = statistics.median(timed(draws=draws, orbits=orbits, scheduler="synchronous")[0] for _ in range(3))
    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None) as cluster, \
            Client(cluster) as client:
        timed(draws=8, orbits=2, scheduler=client)                  # workers import orbitdeck once
        on_cluster = statistics.median(timed(draws=draws, orbits=orbits, scheduler=client)[0] for _ in range(3))
    print(f"{draws} draws x {orbits} orbits: single process {single:.2f} s, LocalCluster(2 workers) "
          f"{on_cluster:.2f} s, ratio {on_cluster / single:.2f} (target <= 1.2) {load()}")


def full_size(quick: bool) -> None:
    draws, orbits = (100, 100) if quick else (1000, 1000)
    for chaos in (True, False):
        wall, cpu = timed(draws=draws, orbits=orbits, scheduler="processes", settings=Settings(chaos=chaos))
        print(f"7 planets x {draws} draws x {orbits} orbits, MEGNO {'on' if chaos else 'off'}, worker processes: "
              f"{wall:.1f} s wall, {cpu:.1f} s CPU ({1e9 * cpu / planet_steps(draws, orbits, chaos):.0f} ns CPU "
              f"per planet-step) {load()}")


SYSTEM = load_system(demo_path())

if __name__ == "__main__":
    quick = "--quick" in sys.argv
    parts = [arg for arg in sys.argv[1:] if not arg.startswith("--")] or ["steps", "cluster", "full"]
    print(f"{os.cpu_count()} cores {load()}")
    for part, run in (("steps", per_step_cost), ("cluster", cluster_against_single_process), ("full", full_size)):
        if part in parts:
            run(quick)
