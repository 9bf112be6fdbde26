"""Timing of ``orbitdeck figures`` on the default demo: every view's plots as PNG files for slides.

Run as ``python tests/benchmarks/bench_figures.py [RUNS]``; prints figures, asserts nothing.
Target: ``orbitdeck figures -o DIR`` (PNG, 1600 px wide, the default 4000 Monte Carlo draws) under 20 s
from the command line, a fresh process each run (interpreter start, imports, the derivation, every view
built, each plot drawn through matplotlib and written). Also prints the parts, in one process.
"""

import os
import resource
import statistics
import subprocess
import sys
import sysconfig
import tempfile
import time
from pathlib import Path

RUNS = 3


def command_line_seconds(runs: int) -> tuple[list[float], list[float]]:
    """Wall and CPU (user + system) seconds of each run of the command, each into a new folder."""
    script = Path(sysconfig.get_path("scripts")) / "orbitdeck"
    times, cpu = [], []
    with tempfile.TemporaryDirectory(prefix="bench-figures-") as folder:
        for run in range(runs):
            before = resource.getrusage(resource.RUSAGE_CHILDREN)
            start = time.perf_counter()
            subprocess.run([str(script), "figures", "-o", str(Path(folder) / str(run))], check=True,
                           stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
            times.append(time.perf_counter() - start)
            after = resource.getrusage(resource.RUSAGE_CHILDREN)
            cpu.append(after.ru_utime - before.ru_utime + after.ru_stime - before.ru_stime)
    return times, cpu


def parts() -> None:
    """The parts of one run, in this process (imports first, so their cost shows)."""
    start = time.perf_counter()
    import orbitdeck.dashboard.app  # noqa: F401  (panel, holoviews, bokeh: what the command imports)
    from orbitdeck.dashboard.cli_figures import figures_app
    from orbitdeck.dashboard.figures import figures_of, render_figure
    from orbitdeck.models.files.sources import demo_source

    print(f"  imports (orbitdeck, panel, holoviews)       {time.perf_counter() - start:6.2f} s")
    source = demo_source()
    begin = time.perf_counter()
    app = figures_app(source, source.system([]), 4000, 1, None)
    print(f"  app with 4000 draws                         {time.perf_counter() - begin:6.2f} s")
    begin = time.perf_counter()
    figures, _ = figures_of(app)
    print(f"  every view built, its figures listed        {time.perf_counter() - begin:6.2f} s")
    for fmt in ("png", "svg", "pdf"):
        each = []
        for figure in figures:
            begin = time.perf_counter()
            render_figure(figure.plot, fmt)
            each.append(time.perf_counter() - begin)
        print(f"  {len(figures)} figures drawn as {fmt.upper()}                   {sum(each):6.2f} s "
              f"(median {statistics.median(each) * 1e3:.0f} ms, slowest {max(each) * 1e3:.0f} ms)")
    print(f"  load average while measuring: {', '.join(f'{x:.1f}' for x in os.getloadavg())} "
          "(on 2 cores: a loaded machine stretches the wall times, not the CPU times)")


def main():
    runs = int(sys.argv[1]) if len(sys.argv) > 1 else RUNS
    times, cpu = command_line_seconds(runs)
    print("orbitdeck figures -o DIR  (default demo, PNG 1600 px wide, 4000 draws)")
    print(f"  median of {runs} runs {statistics.median(times):.2f} s (min {min(times):.2f}, max {max(times):.2f}); "
          f"CPU median {statistics.median(cpu):.2f} s; target < 20 s")
    parts()


if __name__ == "__main__":
    sys.exit(main())
