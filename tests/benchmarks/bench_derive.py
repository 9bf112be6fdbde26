"""Speed of derive(), nominal and with Monte Carlo intervals: prints medians and 95th percentiles.

Run: python tests/benchmarks/bench_derive.py [--repeat N]

What a user waits for: the derivation behind every edit in the page (the sky
table's intervals are worked out only when the Neighbour skies view, the
JSON or a snapshot reads them, so they are timed apart). Every bundled demo
is timed; the load average beside each figure tells how busy the shared
machine was.
"""

from __future__ import annotations

import argparse
import os
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).parent))
from synthetic import synthetic_system  # noqa: E402

from orbitdeck.demo_systems import DEFAULT_DEMO, demo_names, demo_path  # noqa: E402
from orbitdeck.models import derive, load_system  # noqa: E402


def timings(function, repeat: int) -> np.ndarray:
    """Wall times [ms] of ``repeat`` calls, after one warm-up call.

    Each call's result is held until the next call has returned, as the
    dashboard holds the derivation it shows while it works out the next
    (a result dropped before the next call lets the allocator hand its
    memory back to the system, and the next call pays ~1 us a page to
    fault it in again: about 2.5 ms of a Monte Carlo derivation).
    """
    held = [function()]   # the previous result, let go only once the next call has returned
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        result = function()
        times.append(time.perf_counter() - start)
        held[0] = result
    return 1e3 * np.array(times)


def report(label: str, times: np.ndarray) -> None:
    print(f"{label:<58} median {np.median(times):8.2f} ms   p95 {np.percentile(times, 95):8.2f} ms"
          f"   (load average {os.getloadavg()[0]:.1f})")


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=30)
    repeat = parser.parse_args(argv).repeat
    demo = load_system(demo_path())
    thirty = synthetic_system(30)
    n_demo = len(demo.planets)
    report(f"default demo ({n_demo} planets), nominal", timings(lambda: derive(demo), repeat))
    report("default demo, 4000 draws (no sky intervals)", timings(lambda: derive(demo, 4000, 1), repeat))
    report("default demo, 4000 draws, sky intervals read",
           timings(lambda: derive(demo, 4000, 1).intervals["skies"], repeat))
    for name in demo_names():
        if name != DEFAULT_DEMO:
            other = load_system(demo_path(name))
            report(f"{name} ({len(other.planets)} planets), 4000 draws (no sky intervals)",
                   timings(lambda system=other: derive(system, 4000, 1), repeat))
    seven = synthetic_system(7)   # a compact chain of seven small planets
    report("7 planets (synthetic), nominal", timings(lambda: derive(seven), repeat))
    report("7 planets (synthetic), 4000 draws (no sky intervals)", timings(lambda: derive(seven, 4000, 1), repeat))
    circular = synthetic_system(7, eccentric=False)   # the same chain, eccentricities not measured
    report("7 planets, circular orbits taken as exact, 4000 draws", timings(lambda: derive(circular, 4000, 1), repeat))
    report("30 planets, nominal", timings(lambda: derive(thirty), repeat))
    report("30 planets, 4000 draws (no sky intervals)", timings(lambda: derive(thirty, 4000, 1), repeat))
    report("30 planets, 4000 draws, sky intervals read",
           timings(lambda: derive(thirty, 4000, 1).intervals["skies"], max(3, repeat // 5)))
    report("100 planets, nominal", timings(lambda: derive(synthetic_system(100)), max(3, repeat // 5)))


if __name__ == "__main__":
    main()
