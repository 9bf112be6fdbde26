"""The server's share of an edit: the star's mass set to the views' Bokeh models updated, no browser. Prints medians.

Run: python tests/benchmarks/bench_server_edit.py [--edits N] [--profile]

The dashboard of the default demo is built into a Bokeh ``Document`` in
this process, with the Monte Carlo uncertainties on (4000 draws) and the
"Flux & temperature" tab shown, as ``bench_dashboard.py`` has it in the
browser. Each edit sets the star's mass, as Enter in its entry does, and is
timed until every watcher has run: the derivation, the app's update and the
shown views' HoloViews and Bokeh updates. What the websocket and the
browser add is not in it (``bench_dashboard.py`` measures the whole). The
derivation alone is timed beside it. ``--profile`` prints where the edits'
time goes (cProfile, cumulative).
"""

from __future__ import annotations

import argparse
import cProfile
import os
import pstats
import time

import numpy as np
import panel as pn
from bokeh.document import Document

from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import derive, load_system

TAB = "Flux & temperature"
#: star masses typed in turn [Msun]
MASSES = (0.110, 0.114, 0.118, 0.122, 0.126, 0.130)


def summary(times_s) -> str:
    times = 1e3 * np.asarray(times_s)
    return f"median {np.median(times):7.1f} ms   p95 {np.percentile(times, 95):7.1f} ms"


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--edits", type=int, default=30)
    parser.add_argument("--profile", action="store_true", help="print the 30 costliest calls of the edits")
    args = parser.parse_args()
    pn.extension("tabulator")
    app = OrbitDeckApp(load_system(demo_path()))
    document = Document()
    document.add_root(app.page().get_root(document))
    app.uncertainty = True
    app.tabs.active = list(app.views).index(TAB)
    star = app.system.star
    for mass in MASSES[:3]:   # warm-up: the views' first updates build what later ones reuse
        star.mass = mass
    profile = cProfile.Profile() if args.profile else None
    edits = []
    for k in range(args.edits):
        start = time.perf_counter()
        if profile:
            profile.enable()
        star.mass = MASSES[k % len(MASSES)]
        if profile:
            profile.disable()
        edits.append(time.perf_counter() - start)
    derivations = []
    for _ in range(args.edits):
        start = time.perf_counter()
        derive(app.system, app.draws, app.seed)
        derivations.append(time.perf_counter() - start)
    load = os.getloadavg()[0]
    print(f"default demo, {app.draws} draws, {TAB} shown (load average {load:.1f})")
    print(f"  the star's mass set -> the views' models updated: {summary(edits)}"
          + ("   (under cProfile: slower)" if profile else ""))
    print(f"  of which the derivation alone:                   {summary(derivations)}")
    if profile:
        pstats.Stats(profile).sort_stats("cumulative").print_stats(30)


if __name__ == "__main__":
    main()
