"""Timing of transit forecasts: the default demo over one year, seen from a site.

Run as ``python tests/benchmarks/bench_transits.py``; prints figures, asserts nothing.
Target: ``orbitdeck transits --start 2026-01-01 --end 2027-01-01 --site=35,-105,2000 --json`` under 2 s
from the command line (a fresh process each time: interpreter start, imports, the bundled IERS table,
the forecast and the sky at the site). Also prints the parts, in one process.
"""

import os
import resource
import statistics
import subprocess
import sys
import sysconfig
import time
from pathlib import Path

RUNS = 5
COMMAND = ["transits", "--start", "2026-01-01", "--end", "2027-01-01", "--site=35.0,-105.0,2000", "--json"]


def command_line_seconds() -> tuple[list[float], list[float]]:
    """Wall and CPU (user + system) seconds of each run of the command."""
    script = Path(sysconfig.get_path("scripts")) / "orbitdeck"
    times, cpu = [], []
    for _ in range(RUNS):
        before = resource.getrusage(resource.RUSAGE_CHILDREN)
        start = time.perf_counter()
        subprocess.run([str(script), *COMMAND], check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        times.append(time.perf_counter() - start)
        after = resource.getrusage(resource.RUSAGE_CHILDREN)
        cpu.append(after.ru_utime - before.ru_utime + after.ru_stime - before.ru_stime)
    return times, cpu


def parts() -> None:
    from orbitdeck.demo_systems import demo_path
    from orbitdeck.models import load_system
    from orbitdeck.models.motion.earth_orientation import bundled_table
    from orbitdeck.models.motion.forecast import forecast_transits
    from orbitdeck.models.files.system import Site
    from orbitdeck.models.motion.visibility import nights, transit_sky

    system = load_system(demo_path())
    site = Site("bench", 35.0, -105.0, 2000.0)
    start = time.perf_counter()
    bundled_table()
    print(f"  reading the bundled IERS table (once per process): {(time.perf_counter() - start) * 1e3:7.1f} ms")
    for label, work in (
            (f"forecast, {len(system.planets)} planets x 1 year", lambda: forecast_transits(system, 2461041.5, 2461406.5)),
            ("sky of every transit at the site", lambda: transit_sky(forecast, system.star, site)),
            ("nights over the year (dashboard)", lambda: nights(system.star, site, 2461041.5, 2461406.5))):
        times = []
        for _ in range(3):
            begin = time.perf_counter()
            result = work()
            times.append(time.perf_counter() - begin)
        if label.startswith("forecast"):
            forecast = result
        print(f"  {label:34s} median {statistics.median(times) * 1e3:7.1f} ms")
    print(f"  ({len(forecast)} transits)")
    print(f"  load average while measuring: {', '.join(f'{x:.1f}' for x in os.getloadavg())} "
          "(on 2 cores: a loaded machine stretches the wall times, not the CPU times)")


def main():
    times, cpu = command_line_seconds()
    print(f"orbitdeck {' '.join(COMMAND)}")
    print(f"  median of {RUNS} runs {statistics.median(times):.2f} s (min {min(times):.2f}, max {max(times):.2f}); "
          f"CPU median {statistics.median(cpu):.2f} s; target < 2 s")
    parts()


if __name__ == "__main__":
    sys.exit(main())
