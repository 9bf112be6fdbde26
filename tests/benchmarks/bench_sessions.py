"""Many sessions of the served dashboard at once, on loopback. Prints figures.

Starts ``orbitdeck serve`` in a subprocess on a free port of 127.0.0.1 and
opens N sessions with light clients (``bokeh.client.pull_session``, one
thread and one IO loop each; no browser). Every session changes the star's
mass entry about once a second, as a user pressing Enter in the box would,
and the update latency is the time from the change to the arrival, in that
session's document, of the server's patch of the view's data source whose
semi-major axes belong to the mass typed (a^3 proportional to M). When
changes arrive faster than the server handles them, Panel applies only the
latest; those merged changes are counted, not timed. After the run every
session is closed and the server's memory (VmRSS in /proc/PID/status) and
the sessions it still holds (from its log) are followed for a while.

Each client announces ``document_ready`` after pulling its document, as
BokehJS does once it has rendered: without it Panel treats the session as
not yet connected and sends no patch made inside ``pn.io.hold()``.

Run: python tests/benchmarks/bench_sessions.py [--sessions 20] [--seconds 60] [--linger 60]

``--unused-session-lifetime MS`` / ``--check-unused-sessions MS`` start the
same session factory with those Bokeh server settings instead of
``orbitdeck serve`` (which does not expose them), to compare; ``--trim MS``
also makes that server hand freed heap memory back to the system
(``gc.collect()`` and glibc's ``malloc_trim(0)``) every MS milliseconds.
``--waves N`` repeats open-change-close, to tell memory kept for reuse from
memory lost.
"""

from __future__ import annotations

import argparse
import itertools
import os
import random
import re
import statistics
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from browser_support import free_port, stop, wait_until_serving  # noqa: E402

TARGET_P95_MS = 500.0
TARGET_MEMORY_RETURN = 0.10
#: the entry changed, and the values typed in turn (valid stellar masses [Msun])
CONTROL_TITLE = "Mass [Msun]"
VALUES = ("0.110", "0.114", "0.118", "0.122", "0.126", "0.130")
#: a column only the view's planet source has, per tab
MARKER_COLUMNS = {"Layout": "f_deg", "Flux & temperature": "teq"}
RESPONSE_TIMEOUT_S = 10.0

LAUNCHER = """
import ctypes, gc, sys, threading
import panel as pn
from orbitdeck.dashboard.serve import ROUTE, _read, session_factory
import orbitdeck.dashboard.app  # imported before the first page, as orbitdeck serve does
port, lifetime, check, trim = (int(a) for a in sys.argv[1:5])
options = {}
if lifetime > 0:
    options["unused_session_lifetime_milliseconds"] = lifetime
if check > 0:
    options["check_unused_sessions_milliseconds"] = check
if trim:  # hand freed heap memory back to the system every few seconds (glibc malloc_trim)
    libc = ctypes.CDLL("libc.so.6")
    def trimmer():
        while True:
            threading.Event().wait(trim / 1000)
            gc.collect()
            libc.malloc_trim(0)
    threading.Thread(target=trimmer, daemon=True).start()
print("serving with", options, "and malloc_trim every", trim, "ms" if trim else "(never)", flush=True)
pn.serve({ROUTE: session_factory(_read(sys.argv[5] or None))}, port=port, address="127.0.0.1", show=False,
         start=True, threaded=False, verbose=False, title="orbitdeck",
         websocket_origin=[f"127.0.0.1:{port}", f"localhost:{port}"], **options)
"""


def rss_mib(pid: int) -> float | None:
    """Resident set size of process ``pid`` [MiB] from /proc/PID/status; None once it has gone."""
    try:
        with open(f"/proc/{pid}/status") as status:
            for line in status:
                if line.startswith("VmRSS:"):
                    return int(line.split()[1]) / 1024.0
    except OSError:
        return None
    return None


def cpu_seconds(pid: int) -> float:
    """User + system CPU time of process ``pid`` so far [s] (/proc/PID/stat, fields 14 and 15)."""
    with open(f"/proc/{pid}/stat") as stat:
        fields = stat.read().rsplit(")", 1)[1].split()
    return (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK")


def start_server(args, log):
    port = free_port()
    # INFO lines of Bokeh (connections) and Panel (sessions created, rendered, destroyed) go to the log
    env = {**os.environ, "BOKEH_PY_LOG_LEVEL": "info", "PANEL_LOG_LEVEL": "info", "PYTHONUNBUFFERED": "1"}
    if args.unused_session_lifetime or args.check_unused_sessions or args.trim:
        command = [sys.executable, "-c", LAUNCHER, str(port), str(args.unused_session_lifetime or 0),
                   str(args.check_unused_sessions or 0), str(args.trim or 0), args.file or ""]
    else:
        command = [sys.executable, "-m", "orbitdeck.dashboard.serve", *([args.file] if args.file else []),
                   "--no-show", "--port", str(port)]
    server = subprocess.Popen(command, stdout=log, stderr=subprocess.STDOUT, env=env)
    wait_until_serving(server, port, log)
    return server, port


class Session:
    """One client session in its own thread and IO loop."""

    def __init__(self, index: int, url: str, tab: str):
        self.index, self.url, self.tab = index, url, tab
        self.latencies: list[float] = []
        self.errors: list[str] = []
        self.ready = threading.Event()
        self.closed = threading.Event()
        self._pending: list[tuple[float, float]] = []  # (start time, mass typed) not answered yet, oldest first
        self.superseded = 0  # changes the server merged into a later one (only the later value was shown)
        self._values = itertools.cycle(VALUES)
        self.changes = 0  # changes sent while measuring
        self.received = 0  # bytes of the server's messages while measuring (JSON text and binary buffers)
        self.messages = 0
        self.by_model: dict[str, int] = {}  # JSON bytes per patched model type and attribute (with --detail)
        self.detail = False
        self.thread = threading.Thread(target=self._run, name=f"session-{index}", daemon=True)

    # -- in the session's thread -------------------------------------------------
    def _run(self):
        from bokeh.client import pull_session
        from tornado.ioloop import IOLoop

        self.loop = IOLoop()
        try:
            self.session = pull_session(url=self.url, io_loop=self.loop)
            self._count_bytes(self.session._connection)
            self.loop.add_callback(self._set_up)
            # the connection reads the server's messages only while this runs, until it closes
            self.session._connection.loop_until_closed()
        except Exception as error:  # reported as an error of this session
            self.errors.append(f"session {self.index}: {type(error).__name__}: {error}")
        finally:
            self.ready.set()
            self.closed.set()

    async def _set_up(self):
        from bokeh.events import DocumentReady

        try:
            doc = self.session.document
            # a browser announces that it has rendered the document; until then Panel treats the session
            # as not yet connected and leaves changes made inside pn.io.hold() for the next full render
            doc.callbacks.send_event(DocumentReady())
            self.entry = self._find(doc, lambda m: getattr(m, "title", None) == CONTROL_TITLE, CONTROL_TITLE)
            if self.tab != "Layout":  # tabs are built when shown: show the measured one first
                tabs = self._find(doc, lambda m: type(m).__name__ == "Tabs", "the tabs")
                tabs.active = [p.title for p in tabs.tabs].index(self.tab)
                await self._until(lambda: any(self._is_source(m) for m in doc.models), 20, "the tab's view")
            self.source = self._find(doc, self._is_source, f"the {self.tab} data source")
            self._last_axes = self._axes()
            self._reference = None
            doc.on_change(self._changed)
            # changes first, not counted, until one is answered: the server handles the announcement
            # above asynchronously, and a change it handles before that is never sent back
            for attempt in range(10):
                self._pending.clear()
                self._change()
                try:
                    await self._until(lambda: not self._pending, 3.0, "answer to the first change")
                    break
                except TimeoutError:
                    if attempt == 9:
                        raise
            self.latencies.clear()
            self.superseded = 0
        except Exception as error:
            self.errors.append(f"session {self.index}: {type(error).__name__}: {error}")
            self.session.close()
        finally:
            self.ready.set()

    def _count_bytes(self, connection) -> None:
        """Count the bytes of every message fragment the server sends on ``connection``."""
        receiver = connection._receiver
        consume = receiver.consume

        async def counting(fragment):
            self.received += len(fragment.encode("utf-8") if isinstance(fragment, str) else fragment)
            message = await consume(fragment)
            if message is not None:
                self.messages += 1
                if self.detail:
                    self._itemise(message)
            return message

        receiver.consume = counting

    def _itemise(self, message) -> None:
        """Add the JSON size of each event of a PATCH-DOC message to ``by_model`` (buffers apart)."""
        import json

        content = message.content if isinstance(message.content, dict) else {}
        types = {}
        for event in content.get("events", []):
            model = event.get("model", {}) or {}
            mid = model.get("id") if isinstance(model, dict) else None
            found = self.session.document.get_model_by_id(mid) if mid else None
            name = type(found).__name__ if found is not None else "?"
            if name == "ColumnDataSource" and found is not None:
                name += "[" + ",".join(sorted(found.data)[:4]) + "]"
            key = f"{event.get('kind')} {name}.{event.get('attr', '')}"
            types[key] = types.get(key, 0) + len(json.dumps(event))
        for key, size in types.items():
            self.by_model[key] = self.by_model.get(key, 0) + size
        buffers = sum(len(b.data) if hasattr(b, "data") else len(b[1]) for b in message.buffers)
        if buffers:
            self.by_model["(binary buffers)"] = self.by_model.get("(binary buffers)", 0) + buffers

    def start_measuring(self) -> None:
        self.received = self.messages = self.changes = 0
        self.by_model.clear()

    @staticmethod
    async def _until(condition, seconds: float, what: str):
        import asyncio

        deadline = time.monotonic() + seconds
        while not condition():
            if time.monotonic() > deadline:
                raise TimeoutError(f"{what}: nothing within {seconds:g} s")
            await asyncio.sleep(0.02)

    def _is_source(self, model) -> bool:
        return type(model).__name__ == "ColumnDataSource" and MARKER_COLUMNS[self.tab] in model.data

    @staticmethod
    def _find(doc, match, what):
        found = [m for m in doc.models if match(m)]
        if not found:
            raise LookupError(f"no {what} in the session's document")
        return found[0]

    def _axes(self) -> tuple:
        return tuple(float(x) for x in self.source.data.get("a", ()))

    def _change(self):
        value = next(self._values)
        if value == self.entry.value:
            value = next(self._values)
        self._pending.append((time.perf_counter(), float(value)))
        self.changes += 1
        self.entry.value = value

    def _shown_mass(self, axes) -> float | None:
        """The stellar mass the shown semi-major axes belong to, a^3 proportional to M (Kepler's third law)."""
        if self._reference is None or not axes:
            return None
        mass, a0 = self._reference
        return mass * (axes[0] / a0) ** 3

    def _changed(self, event):
        """A change of the document: new semi-major axes answer the change that typed their mass.

        Changes typed before it and still waiting were merged by the server into this one (it shows
        only the latest value when several arrive while it is busy); they are counted, not timed.
        """
        if getattr(event, "model", None) is not self.source:
            return
        axes = self._axes()
        if axes == self._last_axes or not axes:
            return
        self._last_axes = axes
        now = time.perf_counter()
        if self._reference is None:  # the first answer: the oldest change, and the scale for the rest
            if self._pending:
                start, mass = self._pending.pop(0)
                self._reference = (mass, axes[0])
                self.latencies.append(now - start)
            return
        shown = self._shown_mass(axes)
        for i, (start, mass) in enumerate(self._pending):
            if abs(mass - shown) < 0.005 * mass:  # the typed values differ by 3 % or more
                self.latencies.append(now - start)
                self.superseded += i
                del self._pending[:i + 1]
                return

    def _check_timeout(self):
        now = time.perf_counter()
        while self._pending and now - self._pending[0][0] > RESPONSE_TIMEOUT_S:
            self._pending.pop(0)
            self.errors.append(f"session {self.index}: no update within {RESPONSE_TIMEOUT_S:g} s of a change")

    # -- from the driver ---------------------------------------------------------
    @property
    def waiting(self) -> int:
        return len(self._pending)

    def change(self):
        if not self.closed.is_set():
            self.loop.add_callback(self._check_timeout)
            self.loop.add_callback(self._change)

    def expire(self):
        if not self.closed.is_set():
            self.loop.add_callback(self._check_timeout)

    def close(self):
        if hasattr(self, "session") and not self.closed.is_set():
            self.loop.add_callback(self.session.close)


def percentile(values, q: float) -> float:
    ordered = sorted(values)
    if not ordered:
        return float("nan")
    position = (len(ordered) - 1) * q
    low, high = int(position), min(int(position) + 1, len(ordered) - 1)
    return ordered[low] + (ordered[high] - ordered[low]) * (position - low)


def session_counts(log_path) -> dict:
    """What the server has logged so far: connections opened and closed, sessions launched and destroyed."""
    with open(log_path, errors="replace") as handle:
        text = handle.read()
    return {"connections opened": len(re.findall(r"WebSocket connection opened", text)),
            "connections closed": len(re.findall(r"WebSocket connection closed", text)),
            "sessions launched": len(set(re.findall(r"Session (\d+) launching", text))),
            "sessions destroyed": len(set(re.findall(r"Session (\d+) destroyed", text)))}


def verdict(flag: bool) -> str:
    return "met" if flag else "NOT met"


def run_wave(args, url: str, server_pid: int, log_path: str, wave: int) -> dict:
    """Open the sessions, change the control in each for ``args.seconds``, close them, watch the memory."""
    peak = [0.0]
    sampling = threading.Event()

    def sample():
        while not sampling.is_set():
            peak[0] = max(peak[0], rss_mib(server_pid) or 0.0)
            sampling.wait(0.25)

    before = rss_mib(server_pid)
    opened = time.monotonic()
    sessions = [Session(i, url, args.tab) for i in range(args.sessions)]
    for s in sessions:
        s.thread.start()
    for s in sessions:
        s.ready.wait(120)
    live = [s for s in sessions if not s.closed.is_set()]
    print(f"wave {wave}: opened {len(live)}/{len(sessions)} sessions in {time.monotonic() - opened:.1f} s")
    all_open = rss_mib(server_pid)
    sampler = threading.Thread(target=sample, daemon=True)
    sampler.start()

    for s in sessions:
        s.detail = args.detail and s is sessions[0]
        s.loop.add_callback(s.start_measuring)
    time.sleep(0.2)
    phases = sorted(random.Random(wave).uniform(0, args.interval) for _ in sessions)
    cpu_start, load_start = cpu_seconds(server_pid), os.getloadavg()[0]
    client_start = time.process_time()
    start = time.monotonic()
    rounds = 0
    while time.monotonic() - start < args.seconds:
        for s, phase in zip(sessions, phases):
            delay = start + rounds * args.interval + phase - time.monotonic()
            if delay > 0:
                time.sleep(delay)
            s.change()
        rounds += 1
        rest = start + rounds * args.interval - time.monotonic()
        if rest > 0:
            time.sleep(rest)
    ended = time.monotonic()
    while any(s.waiting for s in sessions) and time.monotonic() - ended < RESPONSE_TIMEOUT_S + 1:
        time.sleep(0.1)  # the last answers
    for s in sessions:
        s.expire()
    time.sleep(0.2)
    sampling.set()
    cpu = cpu_seconds(server_pid) - cpu_start
    client_cpu = time.process_time() - client_start
    busy = time.monotonic() - start
    print(f"wave {wave}: changes sent for {ended - start:.1f} s; closing the sessions")

    for s in sessions:
        s.close()
    for s in sessions:
        s.closed.wait(15)
        s.thread.join(5)
    closed = time.monotonic()
    after = {0: (rss_mib(server_pid), session_counts(log_path))}
    for mark in (15, 30, 45, 60, 90, 120, 180):
        if mark > args.linger:
            break
        time.sleep(max(0.0, closed + mark - time.monotonic()))
        after[mark] = (rss_mib(server_pid), session_counts(log_path))
    return {"latencies": [1e3 * x for s in sessions for x in s.latencies],
            "errors": [e for s in sessions for e in s.errors], "live": len(live), "before": before,
            "superseded": sum(s.superseded for s in sessions),
            "all_open": all_open, "peak": max(peak[0], all_open or 0.0), "after": after,
            "changes": sum(s.changes for s in sessions), "received": sum(s.received for s in sessions),
            "messages": sum(s.messages for s in sessions), "by_model": sessions[0].by_model,
            "cpu": cpu, "client_cpu": client_cpu, "busy": busy, "load": (load_start, os.getloadavg()[0])}


def report(result: dict, start_rss: float, wave: int) -> None:
    latencies, errors = result["latencies"], result["errors"]
    print()
    print(f"-- wave {wave}: {result['live']} sessions")
    print(f"updates measured       {len(latencies)}; {result['superseded']} more changes were merged by the "
          f"server into a later one (shown only with the later value)")
    if latencies:
        p50, p95 = percentile(latencies, 0.5), percentile(latencies, 0.95)
        print(f"update latency p50     {p50:8.1f} ms")
        print(f"update latency p95     {p95:8.1f} ms   target < {TARGET_P95_MS:.0f} ms: "
              f"{verdict(p95 < TARGET_P95_MS)}")
        print(f"update latency max     {max(latencies):8.1f} ms   mean {statistics.fmean(latencies):.1f} ms")
    print(f"errors                 {len(errors):8d}      target 0: {verdict(not errors)}")
    answered = max(len(latencies), 1)
    print(f"server CPU             {result['cpu']:8.1f} s in {result['busy']:.1f} s "
          f"({100 * result['cpu'] / result['busy']:.0f} % of one core; {1e3 * result['cpu'] / answered:.0f} ms "
          f"per update); load average {result['load'][0]:.2f} -> {result['load'][1]:.2f} on "
          f"{os.cpu_count()} cores")
    print(f"client CPU             {result['client_cpu']:8.1f} s ({100 * result['client_cpu'] / result['busy']:.0f} % "
          "of one core: this process reads every patch in Python, which adds to the latencies)")
    changes = max(result["changes"], 1)
    print(f"sent per change        {result['received'] / changes / 1024:8.1f} KiB in "
          f"{result['messages'] / changes:.2f} messages ({result['received'] / 2**20:.1f} MiB to "
          f"{result['live']} sessions for {result['changes']} changes)")
    if result["by_model"]:
        print("  one session's messages by patched model (JSON bytes; buffers apart):")
        for key, size in sorted(result["by_model"].items(), key=lambda kv: -kv[1])[:15]:
            print(f"  {size / changes * result['live']:10.0f} B/change  {key}")
    for line in errors[:10]:
        print(f"  {line}")
    if len(errors) > 10:
        print(f"  ... and {len(errors) - 10} more")
    print(f"server RSS before      {result['before']:8.1f} MiB")
    print(f"server RSS, all open   {result['all_open']:8.1f} MiB (before the changes)")
    print(f"server RSS peak        {result['peak']:8.1f} MiB (during the changes)")
    for mark, (rss, counts) in result["after"].items():
        alive = counts["sessions launched"] - counts["sessions destroyed"]
        print(f"server RSS close+{mark:3d}s {rss:8.1f} MiB   sessions still held by the server: {alive}")
    rss_end, counts = result["after"][max(result["after"])]
    print(f"memory after close     {100 * (rss_end / start_rss - 1):+7.1f} % of the server's start "
          f"({start_rss:.1f} MiB)   target within {100 * TARGET_MEMORY_RETURN:.0f} %: "
          f"{verdict(rss_end <= start_rss * (1 + TARGET_MEMORY_RETURN))}")
    print("server log             " + ", ".join(f"{v} {k}" for k, v in counts.items()))


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sessions", type=int, default=20, help="concurrent sessions (default 20)")
    parser.add_argument("--seconds", type=float, default=60.0, help="length of the run (default 60)")
    parser.add_argument("--interval", type=float, default=1.0, help="seconds between changes per session")
    parser.add_argument("--linger", type=float, default=60.0,
                        help="seconds to follow the server's memory after the sessions close (default 60)")
    parser.add_argument("--waves", type=int, default=1,
                        help="repeat open-change-close this many times (memory growth per wave, default 1)")
    parser.add_argument("--tab", choices=sorted(MARKER_COLUMNS), default="Layout", help="the view measured")
    parser.add_argument("--file", default=None, help="system file (default: the bundled demo)")
    parser.add_argument("--detail", action="store_true",
                        help="itemise the first session's messages by the model they patch")
    parser.add_argument("--unused-session-lifetime", type=int, default=0, metavar="MS")
    parser.add_argument("--check-unused-sessions", type=int, default=0, metavar="MS")
    parser.add_argument("--trim", type=int, default=0, metavar="MS",
                        help="in the server, gc.collect() and malloc_trim(0) every MS milliseconds")
    args = parser.parse_args(argv)
    args.sessions = min(max(1, args.sessions), 200)
    args.seconds = min(max(1.0, args.seconds), 600.0)
    args.linger = min(max(0.0, args.linger), 180.0)
    args.waves = min(max(1, args.waves), 5)

    import panel.models  # noqa: F401  (the client must know Panel's model types to read the documents)
    import panel.models.location  # noqa: F401
    import panel.models.tabulator  # noqa: F401
    import panel.models.widgets  # noqa: F401

    log = tempfile.NamedTemporaryFile("w+", prefix="bench_sessions_", suffix=".log", delete=False)
    server, port = start_server(args, log)
    url = f"http://127.0.0.1:{port}/orbitdeck"
    try:
        time.sleep(1.0)
        start_rss = rss_mib(server.pid)
        print(f"server pid {server.pid} on port {port}, RSS {start_rss:.1f} MiB with no session; log {log.name}")
        print(f"{args.sessions} sessions for {args.seconds:g} s, each changing '{CONTROL_TITLE}' every "
              f"~{args.interval:g} s, measured on the {args.tab} view; {args.waves} wave(s)")
        results = [run_wave(args, url, server.pid, log.name, wave) for wave in range(1, args.waves + 1)]
    finally:
        stop(server)
        log.close()
    for wave, result in enumerate(results, 1):
        report(result, start_rss, wave)
    counts = result["after"][max(result["after"])][1]
    if counts["sessions destroyed"] < counts["sessions launched"]:
        print("\nnot every closed session was released within the linger time: Bokeh releases a session once "
              "it has had no connection for unused_session_lifetime_milliseconds (default 15000), checking "
              "every check_unused_sessions_milliseconds (default 17000)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
