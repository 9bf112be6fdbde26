"""What a user feels: Enter pressed in an entry to the changed numbers painted, in headless Chromium.

For each tree measured (the Python interpreter of its checkout: this one by
default, another with ``--python``), the script serves the dashboard with
``python -m orbitdeck.dashboard.serve`` on a free loopback port, opens it in
Debian's Chromium, switches the Monte Carlo uncertainties on (4000 draws),
shows the "Flux & temperature" tab and then edits the star's mass again and
again. Each edit is timed in the page itself, from the Enter key's event to
the first frame painted after the first cell of the "a [au]" column has
changed (``performance.now()`` in a key listener, a mutation observer and
``requestAnimationFrame`` followed by a task, which runs once that frame is
painted). Median and 95th percentile over the edits are printed.

Only the page's DOM is used (the entry's label, the switch's label, the
tab's title, the table's heading and cell text), so the same script
measures an older tree: ``--python /path/to/other/checkout/.venv/bin/python``.

Cases: the default demo, and a 30-planet synthetic system
(``synthetic.py``, written to a system file here). The first opening of
each tab (the lazily built views) is timed as well: click to the tab's
plots and tables drawn.

Run: python tests/benchmarks/bench_dashboard.py [--python PY ...] [--edits N]
"""

from __future__ import annotations

import argparse
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).parent
sys.path.insert(0, str(HERE))
sys.path.insert(0, str(HERE.parent))
from browser_support import CHROMIUM_ARGS, CHROMIUM_PATH, free_port, stop, wait_until_serving  # noqa: E402
from synthetic import synthetic_system  # noqa: E402

from orbitdeck.models import dumps_system  # noqa: E402

ENTRY = "Mass [Msun]"
SWITCH = "Show Monte Carlo uncertainties"
DRAWS_SHOWN = "percentiles of 4000 Monte Carlo draws"
TAB = "Flux & temperature"
HEADING = "a [au]"
TABS = ("Neighbour skies", "Period ladder", "Flux & temperature", "Observability")
WARM_UP = 3

#: finds elements through every shadow root of the page
DEEP_QUERY = """
window.__odDeep = (selector, root = document) => {
    const found = root.querySelector(selector);
    if (found) return found;
    for (const el of root.querySelectorAll('*')) {
        if (el.shadowRoot) {
            const inner = window.__odDeep(selector, el.shadowRoot);
            if (inner) return inner;
        }
    }
    return null;
};
window.__odDeepAll = (selector, root = document, out = []) => {
    out.push(...root.querySelectorAll(selector));
    for (const el of root.querySelectorAll('*')) if (el.shadowRoot) window.__odDeepAll(selector, el.shadowRoot, out);
    return out;
};
"""

#: the field of the column headed ``heading``
FIELD_OF = """(heading) => {
    const titles = window.__odDeepAll('.tabulator-col');
    const col = titles.find(c => {
        const t = c.querySelector('.tabulator-col-title');
        return t && t.textContent.trim().replace(/\\s*\\u2020$/, '') === heading;
    });
    return col ? col.getAttribute('tabulator-field') : null;
}"""

#: arms the timer of one edit: Enter -> the cell's text changed -> the next frame painted
ARM = """(field) => {
    const selector = `.tabulator-row .tabulator-cell[tabulator-field="${field}"]`;
    const cell = () => window.__odDeep(selector);
    const before = cell().textContent;
    const state = window.__od = {t0: null, changed: null, t1: null};
    const onKey = (e) => {
        if (e.key === 'Enter' && state.t0 === null) { state.t0 = performance.now(); }
    };
    window.addEventListener('keydown', onKey, true);
    const done = () => {
        if (state.changed !== null) return;
        state.changed = performance.now();
        window.removeEventListener('keydown', onKey, true);
        // a frame callback runs before the frame is painted; a task queued from it runs after the paint
        requestAnimationFrame(() => setTimeout(() => { state.t1 = performance.now(); }, 0));
    };
    const changed = () => { const c = cell(); return c && c.textContent !== before; };
    const observer = new MutationObserver(() => { if (state.t0 !== null && changed()) { observer.disconnect(); done(); } });
    observer.observe(cell().getRootNode(), {subtree: true, childList: true, characterData: true});
    const poll = () => {
        if (state.changed !== null) return;
        if (state.t0 !== null && changed()) { observer.disconnect(); done(); return; }
        requestAnimationFrame(poll);
    };
    requestAnimationFrame(poll);
}"""


def serve(python: str, port: int, system_file: str | None, log):
    """Start ``python -m orbitdeck.dashboard.serve`` (of the tree ``python`` runs) and wait until it answers;
    returns the process."""
    command = [python, "-m", "orbitdeck.dashboard.serve", *([system_file] if system_file else []), "--no-show",
               "--port", str(port)]
    process = subprocess.Popen(command, stdout=log, stderr=subprocess.STDOUT, cwd=tempfile.gettempdir())
    wait_until_serving(process, port, log, timeout=120)
    return process


def open_dashboard(browser, url: str):
    page = browser.new_page(viewport={"width": 1500, "height": 1000})
    errors = []
    page.on("pageerror", lambda exc: errors.append(str(exc)))
    page.goto(url)
    page.wait_for_selector(".bk-Canvas", timeout=120_000)
    page.evaluate(DEEP_QUERY)
    return page, errors


def show_tab(page, title: str) -> float:
    """Open tab ``title``; returns the seconds until its plots and tables are drawn."""
    start = time.perf_counter()
    page.locator(".bk-tab", has_text=title).first.click()
    page.locator(".bk-Canvas:visible").first.wait_for(timeout=120_000)
    page.wait_for_function("() => !window.Bokeh || Bokeh.documents.every(d => d.is_idle)", timeout=120_000)
    return time.perf_counter() - start


def switch_uncertainties_on(page) -> None:
    """Tick the checkbox labelled ``SWITCH`` (its label may sit around it or beside it) and wait for the draws."""
    boxes = page.locator("input[type=checkbox]")
    for i in range(boxes.count()):
        box = boxes.nth(i)
        if SWITCH in box.evaluate("e => (e.closest('label') || e.getRootNode()).textContent"):
            box.check()
            break
    else:
        raise RuntimeError(f"no checkbox labelled {SWITCH!r}")
    page.get_by_text(DRAWS_SHOWN, exact=False).first.wait_for(timeout=120_000)


def edit_latencies(page, edits: int, base_mass: float) -> list[float]:
    """Enter ``edits`` (after a few warm-up ones) different star masses; the milliseconds of each."""
    field = page.evaluate(FIELD_OF, HEADING)
    if not field:
        raise RuntimeError(f"no table column headed {HEADING!r}")
    box = page.get_by_label(ENTRY, exact=True)
    times = []
    for i in range(WARM_UP + edits):
        page.wait_for_timeout(250)
        page.evaluate(ARM, field)
        box.fill(f"{base_mass * (1.0 + 0.004 * (i % 9 + 1)):.6g}")
        box.press("Enter")
        page.wait_for_function("() => window.__od.t1 !== null", timeout=60_000)
        if i >= WARM_UP:
            times.append(page.evaluate("() => window.__od.t1 - window.__od.t0"))
    return times


def summary(times) -> str:
    times = np.asarray(times, dtype=float)
    return (f"median {statistics.median(times):6.1f} ms, p95 {np.percentile(times, 95):6.1f} ms "
            f"(min {times.min():5.1f}, max {times.max():6.1f}; {times.size} edits)")


def measure(python: str, edits: int, scratch: Path) -> None:
    from playwright.sync_api import sync_playwright

    synthetic = scratch / "synthetic30.toml"
    synthetic.write_text(dumps_system(synthetic_system(30)))
    cases = (("default demo", None, 0.118), ("30-planet synthetic", str(synthetic), 0.2))
    print(f"\n== {python}")
    with sync_playwright() as playwright:
        browser = playwright.chromium.launch(executable_path=CHROMIUM_PATH, args=CHROMIUM_ARGS)
        try:
            for label, system_file, mass in cases:
                port = free_port()
                with open(scratch / f"serve-{port}.log", "w+") as log:
                    server = serve(python, port, system_file, log)
                    try:
                        page, errors = open_dashboard(browser, f"http://127.0.0.1:{port}/orbitdeck")
                        if system_file is None:
                            opened = {title: show_tab(page, title) for title in TABS}
                            print("first opening of each tab (built when first shown): "
                                  + ", ".join(f"{t} {1e3 * s:.0f} ms" for t, s in opened.items()))
                        switch_uncertainties_on(page)
                        show_tab(page, TAB)
                        times = edit_latencies(page, edits, mass)
                        print(f"{label:>22}, uncertainties on, {TAB} shown: {summary(times)}"
                              + (f"  [page errors: {errors}]" if errors else ""))
                        page.close()
                    finally:
                        stop(server)
        finally:
            browser.close()


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--python", action="append", default=None,
                        help="interpreter of the tree to measure (repeat to measure several); default this one")
    parser.add_argument("--edits", type=int, default=24, help="edits timed per case (default 24)")
    args = parser.parse_args()
    print("Enter in the star's mass entry -> the changed semi-major axes painted (targets: default demo median <= "
          "100 ms, p95 <= 150 ms; 30 planets median <= 200 ms)")
    with tempfile.TemporaryDirectory() as scratch:
        for python in args.python or [sys.executable]:
            measure(python, args.edits, Path(scratch))


if __name__ == "__main__":
    main()
