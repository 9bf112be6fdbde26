"""Presenter mode: from a change on the presenter's page to the change painted on every follower's page.

Starts ``orbitdeck serve --present`` in a subprocess on a free port of
127.0.0.1 and opens the presenter's page and N followers' pages in headless
Chromium (one browser context each, so one session each). Each change is
made in the presenter's page as its text box would send it (the value of the
star-mass box, or of the planet selector, set in the page's document); the
clock starts there. Every follower page watches, once per animation frame,
the model that shows the change (the header with the star's mass, or the
planet selector): when the change arrives in its document, and when the
frame after that has been painted. All pages run in one browser on this
machine and read the same wall clock; the browsers' work of eleven pages
shares the machine's cores with the server, which a room of laptops would
not.

Prints, per kind of change, the median and 95th percentile of the latency
of every follower and of the last follower of each change.

With ``--light-clients`` the pages are Bokeh client sessions in this
process (``bokeh.client.pull_session``, one thread and IO loop each), not
browsers: the figures are then the server's part alone, from the
presenter's change sent to its arrival in each follower's document.

Run: python tests/benchmarks/bench_presenter.py [--followers 10] [--changes 20] [--file FILE] [--light-clients]
"""

from __future__ import annotations

import argparse
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from browser_support import CHROMIUM_ARGS, CHROMIUM_PATH, free_port, stop, wait_until_serving  # noqa: E402

TARGET_MEDIAN_MS = 300.0
TIMEOUT_S = 20.0

#: in a follower page: note when the model that shows the change has it (the document changed) and when the
#: frame after that has been painted (the second animation frame from then)
WATCH = """([kind, target]) => {
    const doc = Bokeh.documents[0];
    const models = [...doc._all_models.values()];
    const model = kind == "mass"
        ? models.find(m => typeof m.text === "string" && m.text.includes("star ") && m.text.includes(" Msun"))
        : models.find(m => m.type.endsWith("Select") && String(m.title).startsWith("Planet"));
    const shown = () => kind == "mass" ? model.text.includes(target) : model.value == target;
    const now = () => performance.timeOrigin + performance.now();
    window.__arrived = window.__painted = null;
    const seen = () => {
        if (window.__arrived !== null || !shown()) return;
        window.__arrived = now();
        doc.remove_on_change(seen);
        requestAnimationFrame(() => requestAnimationFrame(() => { window.__painted = now(); }));
    };
    doc.on_change(seen);
}"""
#: in the presenter's page: make the change and return the time it was made
CHANGE = """([kind, value]) => {
    const models = [...Bokeh.documents[0]._all_models.values()];
    const box = kind == "mass"
        ? models.find(m => m.type.endsWith("TextInput") && m.title == "Mass [Msun]")
        : models.find(m => m.type.endsWith("Select") && String(m.title).startsWith("Planet"));
    const start = performance.timeOrigin + performance.now();
    box.value = value;
    return start;
}"""


def _open(browser, url):
    context = browser.new_context(viewport={"width": 1400, "height": 900})
    page = context.new_page()
    page.goto(url)
    page.wait_for_selector(".bk-Canvas", timeout=120_000)
    return page


def _role(page) -> str:
    return page.evaluate("""() => {
        const m = [...Bokeh.documents[0]._all_models.values()].find(m => typeof m.text === "string"
                                                                      && m.text.includes("data-role="));
        const found = m && m.text.match(/data-role=(?:"|&quot;)(\\w+)/);
        return found ? found[1] : "";
    }""")


def measure(presenter, followers, kind: str, values) -> tuple[list[float], list[float], list[float]]:
    """Latencies [ms] of every follower (to the change painted), of the last follower of each change,
    and of every follower to the change's arrival in its document."""
    each, last, arrived = [], [], []
    for value in values:
        target = f"M = {float(value):.4g} Msun" if kind == "mass" else value
        for page in followers:
            page.evaluate(WATCH, [kind, target])
        start = presenter.evaluate(CHANGE, [kind, value])
        deadline = time.monotonic() + TIMEOUT_S
        painted = [None] * len(followers)
        while None in painted:
            if time.monotonic() > deadline:
                raise RuntimeError(f"a follower did not show {target!r} within {TIMEOUT_S} s")
            time.sleep(0.02)
            for i, page in enumerate(followers):
                if painted[i] is None:
                    painted[i] = page.evaluate("() => window.__painted")
        latencies = [p - start for p in painted]
        each += latencies
        last.append(max(latencies))
        arrived += [page.evaluate("() => window.__arrived") - start for page in followers]
        time.sleep(0.3)
    return each, last, arrived


class LightClient:
    """One session as a Bokeh client in its own thread and IO loop (no browser)."""

    def __init__(self, url: str):
        self.url, self.ready, self.error = url, threading.Event(), None
        self.arrived: float | None = None
        self._want = None
        threading.Thread(target=self._run, daemon=True).start()
        if not self.ready.wait(120) or self.error:
            raise RuntimeError(f"a client session did not open: {self.error}")

    def _run(self):
        from bokeh.client import pull_session
        from bokeh.events import DocumentReady
        from tornado.ioloop import IOLoop

        try:
            self.loop = IOLoop()
            self.session = pull_session(url=self.url, io_loop=self.loop)
            self.doc = self.session.document
            # as a browser does once it has rendered: until then Panel keeps held changes back
            self.doc.callbacks.send_event(DocumentReady())
            models = list(self.doc.models)
            self.header = next(m for m in models if isinstance(getattr(m, "text", None), str)
                               and "star " in m.text and " Msun" in m.text)
            self.mass = next(m for m in models if getattr(m, "title", None) == "Mass [Msun]")
            self.planet = next(m for m in models if type(m).__name__.endswith("Select")
                               and str(getattr(m, "title", "")).startswith("Planet"))
            self.doc.on_change(self._changed)
        except Exception as error:   # reported by the constructor
            self.error = f"{type(error).__name__}: {error}"
            self.ready.set()
            return
        self.ready.set()
        self.session._connection.loop_until_closed()

    def _changed(self, event):
        if self.arrived is None and self._want is not None and self._want():
            self.arrived = time.perf_counter()

    def expect(self, kind: str, target: str) -> None:
        self.arrived = None
        self._want = ((lambda: target in self.header.text) if kind == "mass"
                      else (lambda: self.planet.value == target))

    def change(self, kind: str, value: str) -> float:
        start = time.perf_counter()
        model = self.mass if kind == "mass" else self.planet
        self.loop.add_callback(lambda: setattr(model, "value", value))
        return start


def measure_light(presenter: LightClient, followers, kind: str, values) -> tuple[list[float], list[float]]:
    """Latencies [ms] of every follower document, and of the last one of each change."""
    each, last = [], []
    for value in values:
        target = f"M = {float(value):.4g} Msun" if kind == "mass" else value
        for client in followers:
            client.expect(kind, target)
        start = presenter.change(kind, value)
        deadline = time.monotonic() + TIMEOUT_S
        while any(c.arrived is None for c in followers):
            if time.monotonic() > deadline:
                raise RuntimeError(f"a follower did not receive {target!r} within {TIMEOUT_S} s")
            time.sleep(0.005)
        latencies = [(c.arrived - start) * 1000 for c in followers]
        each += latencies
        last.append(max(latencies))
        time.sleep(0.3)
    return each, last


def _summary(name: str, values: list[float]) -> str:
    ordered = sorted(values)
    p95 = ordered[min(len(ordered) - 1, int(round(0.95 * (len(ordered) - 1))))]
    return f"{name}: median {statistics.median(values):.0f} ms, p95 {p95:.0f} ms (n = {len(values)})"


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--followers", type=int, default=10)
    parser.add_argument("--changes", type=int, default=20)
    parser.add_argument("--file", default=None, help="system file (default: the bundled demo)")
    parser.add_argument("--light-clients", action="store_true", help="Bokeh client sessions instead of browsers")
    args = parser.parse_args(argv)

    from playwright.sync_api import sync_playwright

    port = free_port()
    with tempfile.TemporaryDirectory() as folder:
        log = open(Path(folder) / "serve.log", "w+")
        command = [sys.executable, "-m", "orbitdeck.dashboard.serve", *([args.file] if args.file else []),
                   "--present", "--no-show", "--port", str(port)]
        server = subprocess.Popen(command, stdout=log, stderr=subprocess.STDOUT)
        try:
            wait_until_serving(server, port, log)
            url = f"http://127.0.0.1:{port}/orbitdeck"
            masses = [f"{0.1101 + 0.0007 * i:.4f}" for i in range(args.changes)]
            planets = [("c", "e", "b", "g")[i % 4] for i in range(args.changes)]
            kinds = (("mass", masses, "star mass edited (derive, every view of the tab)"),
                     ("planet", planets, "planet selected"))
            if args.light_clients:
                # the client must know Panel's model types to read the documents
                import panel.models  # noqa: F401
                import panel.models.location  # noqa: F401
                import panel.models.tabulator  # noqa: F401
                import panel.models.widgets  # noqa: F401

                presenter = LightClient(url)
                time.sleep(1.0)   # the first session presents
                followers = [LightClient(url) for _ in range(args.followers)]
                time.sleep(2.0)
                print(f"presenter mode, {args.followers} followers as Bokeh client sessions (no browser), "
                      f"{args.changes} changes of each kind: the server's part, from the change sent to its "
                      "arrival in each follower's document")
                for kind, values, what in kinds:
                    each, last = measure_light(presenter, followers, kind, values)
                    print(f"  {what}")
                    print("    " + _summary("each follower", each))
                    print("    " + _summary("last follower of a change", last))
                return 0
            with sync_playwright() as pw:
                browser = pw.chromium.launch(executable_path=CHROMIUM_PATH, args=CHROMIUM_ARGS, headless=True)
                presenter = _open(browser, url)
                followers = [_open(browser, url) for _ in range(args.followers)]
                time.sleep(2.0)
                roles = [_role(p) for p in (presenter, *followers)]
                if roles[0] != "presenter" or set(roles[1:]) != {"follower"}:
                    raise RuntimeError(f"unexpected roles {roles}")
                print(f"presenter mode, {args.followers} followers, {args.changes} changes of each kind "
                      f"(target: median under {TARGET_MEDIAN_MS:.0f} ms from the presenter's change to every "
                      "follower painted)")
                for kind, values, what in kinds:
                    each, last, arrived = measure(presenter, followers, kind, values)
                    print(f"  {what}")
                    print("    " + _summary("each follower, painted", each))
                    print("    " + _summary("last follower of a change, painted", last))
                    print("    " + _summary("each follower, in its document (before painting)", arrived))
                browser.close()
        finally:
            stop(server)
            log.close()
    return 0


if __name__ == "__main__":
    sys.exit(main())
