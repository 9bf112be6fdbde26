"""Shared tools for browser tests: headless Chromium through Playwright.

* :func:`chromium` starts the system Chromium (Debian package ``chromium``)
  headless and yields a Playwright ``Browser``; the test is skipped with a
  clear reason when Chromium or Playwright is missing (and fails under CI,
  where the test command has installed both).
* :class:`PageLog` collects console errors, uncaught page errors and every
  request that tried to leave the machine.
* :func:`offline_page` opens a page in a fresh browser context in which every
  request whose scheme is not ``file:`` or ``data:`` (or ``blob:``) is
  aborted and recorded.
* :func:`open_page` does the same but lets requests to the given local origin
  (a test server on 127.0.0.1) through.
"""
from __future__ import annotations

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

import pytest

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

    def problems(self) -> list[str]:
        """Every error and every attempted outside request, one line each."""
        return ([f"console error: {m}" for m in self.console_errors]
                + [f"page error: {m}" for m in self.page_errors]
                + [f"blocked request: {u}" for u in self.blocked_requests]
                + [f"websocket: {u}" for u in self.websockets])

    def problems_on_server(self, origin: str) -> list[str]:
        """Like :meth:`problems`, for a served page: its websocket back to ``origin`` is expected."""
        own_socket = origin.replace("http", "ws", 1)
        return [line for line in self.problems()
                if not (line.startswith("websocket: ") and line[len("websocket: "):].startswith(own_socket))]


@contextmanager
def chromium():
    """Headless system Chromium as a Playwright ``Browser``."""
    missing = None
    try:
        from playwright import sync_api
    except ImportError:
        missing = "Python playwright is not installed (the package's test extra)"
    if missing is None and not os.path.exists(CHROMIUM_PATH):
        missing = f"{CHROMIUM_PATH} not installed (Debian package 'chromium')"
    if missing:
        # tests/run_all.sh installs both, so under CI a missing browser is a failure, not a skip
        (pytest.fail if os.environ.get("CI") else pytest.skip)(missing)
    with sync_api.sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=CHROMIUM_PATH,
                                     args=CHROMIUM_ARGS, headless=True)
        try:
            yield browser
        finally:
            browser.close()


def _attach(page, log: PageLog) -> None:
    page.on("console", lambda msg: log.console_errors.append(msg.text)
            if msg.type == "error" else None)
    page.on("pageerror", lambda exc: log.page_errors.append(str(exc)))
    page.on("websocket", lambda ws: log.websockets.append(ws.url))


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
