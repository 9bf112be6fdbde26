"""Shared tools for browser tests: headless Chromium through Playwright.

* :func:`chromium` starts the system Chromium (Debian package ``chromium``)
  headless and yields a Playwright ``Browser``; the test is skipped with a
  clear reason when Chromium or Playwright is missing, and fails instead when
  ``CI`` is set to true (the test command has installed both there).
* :class:`PageLog` collects console errors, uncaught page errors, dialogs
  (dismissed) and every request that tried to leave the machine; its
  listeners are attached when the page is made, before any navigation.
* :func:`colour_pixels` and :func:`canvas_colour_pixels` count the pixels of
  given colours in a screenshot (of the visible plots), so that a test can
  tell a drawn plot from a blank one without knowing where anything is.
* :func:`offline_page` opens a page in a fresh browser context in which every
  request whose scheme is not ``file:`` or ``data:`` (or ``blob:``) is
  aborted and recorded.
* :func:`open_page` does the same but lets requests to the given local origin
  (a test server on 127.0.0.1) through.
"""
from __future__ import annotations

import io
import os
import socket
import subprocess
import sys
import time
import urllib.request
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path
from urllib.parse import urlsplit

import numpy as np
import pytest
from PIL import Image

CHROMIUM_PATH = "/usr/bin/chromium"
CHROMIUM_ARGS = [
    "--no-sandbox",
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
]
LOCAL_SCHEMES = ("file", "data", "blob", "about")
ARTIFACTS = Path(__file__).parent / "artifacts"


@dataclass
class PageLog:
    """What a page reported while it was open."""

    console_errors: list[str] = field(default_factory=list)
    page_errors: list[str] = field(default_factory=list)
    blocked_requests: list[str] = field(default_factory=list)
    websockets: list[str] = field(default_factory=list)
    dialogs: list[str] = field(default_factory=list)

    def problems(self) -> list[str]:
        """Every error, dialog and attempted outside request, one line each."""
        return ([f"console error: {m}" for m in self.console_errors]
                + [f"page error: {m}" for m in self.page_errors]
                + [f"dialog: {m}" for m in self.dialogs]
                + [f"blocked request: {u}" for u in self.blocked_requests]
                + [f"websocket: {u}" for u in self.websockets])

    def problems_on_server(self, origin: str) -> list[str]:
        """Like :meth:`problems`, for a served page: its websocket back to ``origin`` is expected."""
        own_socket = origin.replace("http", "ws", 1)
        return [line for line in self.problems()
                if not (line.startswith("websocket: ") and line[len("websocket: "):].startswith(own_socket))]


def running_in_ci() -> bool:
    """Whether the ``CI`` environment variable says this is a CI run (``true``, ``1`` or ``yes``)."""
    return os.environ.get("CI", "").strip().lower() in ("true", "1", "yes")


@contextmanager
def chromium():
    """Headless system Chromium as a Playwright ``Browser`` (skipped when missing, failed under CI)."""
    missing = None
    try:
        from playwright import sync_api
    except ImportError:
        missing = "Python playwright is not installed (the package's test extra)"
    if missing is None and not os.path.exists(CHROMIUM_PATH):
        missing = f"{CHROMIUM_PATH} not installed (Debian package 'chromium')"
    if missing:
        # tests/run_all.sh installs both, so under CI a missing browser is a failure, not a skip
        (pytest.fail if running_in_ci() else pytest.skip)(missing)
    with sync_api.sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=CHROMIUM_PATH,
                                     args=CHROMIUM_ARGS, headless=True)
        try:
            yield browser
        finally:
            browser.close()


def _attach(page, log: PageLog) -> None:
    """Listen to everything a page may report, before it loads anything (called before any ``goto``)."""
    def dialog(d):
        log.dialogs.append(f"{d.type}: {d.message}")
        d.dismiss()

    page.on("console", lambda msg: log.console_errors.append(msg.text)
            if msg.type == "error" else None)
    page.on("pageerror", lambda exc: log.page_errors.append(str(exc)))
    page.on("websocket", lambda ws: log.websockets.append(ws.url))
    page.on("dialog", dialog)


def _allowed(url: str, origins: tuple[str, ...]) -> bool:
    parts = urlsplit(url)
    if parts.scheme in LOCAL_SCHEMES:
        return True
    return f"{parts.scheme}://{parts.netloc}" in origins


@contextmanager
def open_page(browser, allowed_origins: tuple[str, ...] = (),
              viewport: dict | None = None):
    """A page where only local schemes and `allowed_origins` may be fetched.

    Yields ``(page, log)``.  Every other request is aborted and its URL kept
    in ``log.blocked_requests``.
    """
    context = browser.new_context(viewport=viewport or {"width": 1280, "height": 900})
    log = PageLog()

    def _route(route):
        url = route.request.url
        if _allowed(url, allowed_origins):
            route.continue_()
        else:
            if url not in log.blocked_requests:
                log.blocked_requests.append(url)
            route.abort()

    context.route("**/*", _route)
    # Requests the router does not see (e.g. from workers) still show here.
    context.on("request", lambda req: None if _allowed(req.url, allowed_origins)
               or req.url in log.blocked_requests else log.blocked_requests.append(req.url))
    page = context.new_page()
    _attach(page, log)
    try:
        yield page, log
    finally:
        context.close()


@contextmanager
def offline_page(browser, viewport: dict | None = None):
    """A page that may fetch nothing but ``file:``/``data:``/``blob:`` URLs."""
    with open_page(browser, (), viewport) as (page, log):
        yield page, log


def screenshot(page, name: str) -> Path:
    """Full-page screenshot to ``tests/artifacts/<name>``; returns the path."""
    ARTIFACTS.mkdir(parents=True, exist_ok=True)
    path = ARTIFACTS / name
    page.screenshot(path=str(path), full_page=True)
    return path


def _rgb(colour: str):
    """``#rrggbb`` as three integers, 0-255."""
    return [int(colour[i:i + 2], 16) for i in (1, 3, 5)]


def colour_pixels(png: bytes, colours: dict[str, str], strength: tuple[float, float] = (0.6, 1.0),
                  tolerance: float = 12.0) -> dict[str, int]:
    """Pixels of a PNG drawn in each of ``colours`` (name -> ``#rrggbb``).

    A pixel counts for a colour when it is that colour laid over white with an
    opacity within ``strength`` (plots draw glyphs, some translucent, on a
    white background): it lies on the segment from white towards the colour,
    at that fraction of the way, within ``tolerance`` (RGB units) of it.
    """
    pixels = np.asarray(Image.open(io.BytesIO(png)).convert("RGB"), dtype=float).reshape(-1, 3) - 255.0
    counts = {}
    for name, colour in colours.items():
        towards = np.array(_rgb(colour), dtype=float) - 255.0
        fraction = pixels @ towards / (towards @ towards)
        off = np.linalg.norm(pixels - fraction[:, None] * towards, axis=1)
        low, high = strength
        counts[name] = int(np.count_nonzero((fraction >= low) & (fraction <= high + 0.02) & (off <= tolerance)))
    return counts


def canvas_colour_pixels(page, colours: dict[str, str], **options) -> dict[str, int]:
    """:func:`colour_pixels` summed over every visible plot canvas of ``page`` (each scrolled into view and
    photographed on its own, so controls and tables around the plots count for nothing)."""
    totals = dict.fromkeys(colours, 0)
    canvases = page.locator(".bk-Canvas:visible")
    for index in range(canvases.count()):
        canvas = canvases.nth(index)
        box = canvas.bounding_box()
        if not box or box["width"] < 10 or box["height"] < 10:
            continue
        for name, count in colour_pixels(canvas.screenshot(), colours, **options).items():
            totals[name] += count
    return totals


def habitable_zone_pixels(page, derived) -> dict[str, int]:
    """Pixels of the habitable-zone band's conservative and optimistic steps over every visible plot
    canvas (each step's colour laid over white at the opacity the views give it)."""
    from orbitdeck.dashboard.views import habitable

    limits = habitable.limits_of(derived)
    _, _, colours, zone = habitable.steps(list(limits.values()))
    totals = {}
    for kind, wanted in (("conservative", zone == 1), ("optimistic", zone != 1)):
        alpha = habitable.alphas(zone[wanted][:1], habitable.extrapolated(derived))[0]
        step_colours = {str(i): c for i, c in enumerate(np.asarray(colours)[wanted])}
        totals[kind] = sum(canvas_colour_pixels(page, step_colours, strength=(alpha - 0.08, alpha + 0.05),
                                                tolerance=4.0).values())
    return totals


def free_port() -> int:
    with socket.socket() as probe:
        probe.bind(("127.0.0.1", 0))
        return probe.getsockname()[1]


def wait_until_serving(process, port: int, log, timeout: float = 90.0) -> None:
    """Poll until a server on 127.0.0.1:``port`` answers (a static file, so no session opens).

    Raises RuntimeError with the server's log when the process ends first.
    """
    deadline = time.monotonic() + timeout
    while True:
        if process.poll() is not None:
            log.seek(0)
            raise RuntimeError(f"the server exited with {process.returncode}: {log.read()}")
        try:
            with urllib.request.urlopen(f"http://127.0.0.1:{port}/static/js/bokeh.min.js", timeout=5):
                return
        except OSError:
            if time.monotonic() > deadline:
                raise
            time.sleep(0.3)


def stop(process) -> None:
    """Terminate a server process, killing it if it does not end within 15 s."""
    process.terminate()
    try:
        process.wait(timeout=15)
    except subprocess.TimeoutExpired:
        process.kill()
        process.wait()


@contextmanager
def served(tmp_path: Path, *arguments: str):
    """Run ``orbitdeck serve`` in a subprocess; yields the page URL; stops the server afterwards."""
    port = free_port()
    log = open(tmp_path / f"serve-{port}.log", "w+")
    server = subprocess.Popen([sys.executable, "-m", "orbitdeck.dashboard.serve", *arguments, "--no-show",
                               "--port", str(port)], stdout=log, stderr=subprocess.STDOUT)
    try:
        wait_until_serving(server, port, log)
        yield f"http://127.0.0.1:{port}/orbitdeck"
    finally:
        stop(server)
        log.close()


def wait_for(condition, timeout: float = 15.0, what: str = "the page to update") -> None:
    """Poll ``condition()`` every 0.1 s until it is true; AssertionError naming ``what`` after ``timeout`` s."""
    deadline = time.monotonic() + timeout
    while not condition():
        if time.monotonic() > deadline:
            raise AssertionError(f"timed out waiting for {what}")
        time.sleep(0.1)
