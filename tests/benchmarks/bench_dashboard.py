"""Speed of the dashboard. Prints figures only.

* server side: time from a parameter change (the stellar mass; also a
  selection and a time change) to every view having replaced its data, for
  the 7-planet demo and a 30-planet synthetic system; once with only the
  page as a browser first sees it attached to a Bokeh document (the Layout
  tab: the other tabs' views are built when shown) and once with all five views
  attached, so that every change is also turned into document events;
* the same for the 7-planet demo with Monte Carlo uncertainties on at
  4000 draws (the change then includes the draws and every interval drawn);
* cold start: from launching ``orbitdeck serve`` to the first full render
  of the page in headless Chromium.

Run: python tests/benchmarks/bench_dashboard.py
"""

from __future__ import annotations

import socket
import statistics
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

sys.path.insert(0, str(Path(__file__).parent))
from synthetic import synthetic_system  # noqa: E402

import panel as pn  # noqa: E402
from bokeh.document import Document  # noqa: E402

from orbitdeck.dashboard.app import OrbitDeckApp  # noqa: E402
from orbitdeck.demo_systems import demo_path  # noqa: E402
from orbitdeck.models import load_system  # noqa: E402

CHROMIUM = "/usr/bin/chromium"
CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update",
                 "--disable-sync", "--no-first-run"]


def timed(change, repeat: int = 25) -> tuple[float, float]:
    """Median and worst wall time [ms] of ``change(i)`` over ``repeat`` calls, after two warm-up calls."""
    change(-2)
    change(-1)
    times = []
    for i in range(repeat):
        start = time.perf_counter()
        change(i)
        times.append(1e3 * (time.perf_counter() - start))
    return statistics.median(times), max(times)


def server_side(label: str, system, all_views: bool, samples: int = 0) -> None:
    app = OrbitDeckApp(system, uncertainty=bool(samples), samples=samples or 4000)
    doc = Document()
    if all_views:
        for view in app.views.values():
            view.panel().get_root(doc)
        app.sidebar.get_root(doc)
    else:
        app.layout.get_root(doc)
    mass = system.star.mass
    names = system.planet_names
    where = ("all five views attached" if all_views else "page as first shown") + (
        f", {samples} draws" if samples else "")
    edit = timed(lambda i: setattr(system.star, "mass", mass * (1.0 + 0.01 * ((i % 5) + 1))))
    pick = timed(lambda i: setattr(app, "selected", names[i % len(names)] if i % 2 else names[-1 - i % len(names)]))
    clock = timed(lambda i: setattr(app, "time", system.epoch + 0.37 * (i + 3)))
    print(f"{label:>22} | {where:<38} | stellar mass {edit[0]:6.1f} ms (worst {edit[1]:6.1f}) | "
          f"selection {pick[0]:5.1f} ms | time {clock[0]:5.1f} ms")


def free_port() -> int:
    with socket.socket() as probe:
        probe.bind(("127.0.0.1", 0))
        return probe.getsockname()[1]


def cold_start() -> None:
    from playwright.sync_api import sync_playwright

    with sync_playwright() as playwright:
        browser = playwright.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS)
        page = browser.new_page(viewport={"width": 1500, "height": 1100})
        port = free_port()
        start = time.perf_counter()
        server = subprocess.Popen([sys.executable, "-m", "orbitdeck.dashboard.serve", "--no-show", "--port",
                                   str(port)], stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        try:
            while True:
                try:
                    with urllib.request.urlopen(f"http://127.0.0.1:{port}/static/js/bokeh.min.js", timeout=5):
                        break
                except OSError:
                    time.sleep(0.05)
            listening = time.perf_counter()
            page.goto(f"http://127.0.0.1:{port}/orbitdeck")
            page.wait_for_selector(".bk-Canvas", timeout=60_000)
            page.wait_for_function("""() => {
                const view = Bokeh.index.query_one(v => v.model.type == "Figure" && v.model.title
                                                   && v.model.title.text.startsWith("Top-down"));
                return view != null && view.is_idle && Bokeh.documents[0].is_idle;
            }""", timeout=60_000)
            rendered = time.perf_counter()
            page.reload()
            page.wait_for_selector(".bk-Canvas", timeout=60_000)
            warm = time.perf_counter()
        finally:
            server.terminate()
            server.wait(timeout=15)
            browser.close()
    print(f"cold `orbitdeck serve` to first full render in Chromium: {rendered - start:5.2f} s "
          f"(server listening after {listening - start:4.2f} s; page {rendered - listening:4.2f} s); "
          f"a second page load: {warm - rendered:4.2f} s")


def main() -> None:
    pn.extension("tabulator")
    print("server-side time from a change to every view rebuilt (median of 25; targets: 7 planets < 150 ms, "
          "30 planets < 400 ms)")
    for label, make in (("7-planet demo", lambda: load_system(demo_path())),
                        ("30-planet synthetic", lambda: synthetic_system(30, with_errors=False))):
        for all_views in (False, True):
            server_side(label, make(), all_views)
    print("with Monte Carlo uncertainties on (every view also shows intervals; target 7 planets < 150 ms)")
    for all_views in (False, True):
        server_side("7-planet demo", load_system(demo_path()), all_views, samples=4000)
    cold_start()


if __name__ == "__main__":
    main()
