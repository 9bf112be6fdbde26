"""``orbitdeck serve``: the dashboard on a local Panel server.

The server listens on 127.0.0.1 only, and answers no request from a page of
another website (:mod:`orbitdeck.dashboard.request_guard`). Every browser session gets its own
app object built around its own copy of the system (``System.copy()``), so
an edit in one tab never shows in another; the system read at start-up is
only ever copied, never edited.

The server keeps its memory in check for a room of users: one app is built
and thrown away before the first session (:func:`warm_up`, so every lazily
imported module is loaded up front), a closed page's session is released a
few seconds after its last connection (:func:`server_settings`), and after
sessions are released the freed heap is handed back to the system
(:class:`ServerMemory`, which also keeps full garbage collections from
stalling the other sessions). On Linux with glibc the command runs itself
again, once and in the same process, with Python's system allocator
(``PYTHONMALLOC=malloc``, :func:`run_with_system_allocator`), under which
that freed memory can actually go back; a ``PYTHONMALLOC`` already set is
left as it is.

Run as ``orbitdeck serve [FILE] [--port N] [--no-show]`` or
``python -m orbitdeck.dashboard.serve [FILE] [--port N] [--no-show]``.
"""

from __future__ import annotations

import argparse
import ctypes
import ctypes.util
import gc
import os
import platform
import socket
import sys
from pathlib import Path

from .sharing import origins_argument

HOST = "127.0.0.1"
DEFAULT_PORT = 5006
#: how many ports above the default are tried before giving up
PORT_SEARCH = 50
ROUTE = "orbitdeck"
EXIT_BAD_INPUT = 2
#: a session with no connection is released after this long [ms] (Bokeh's default 15000); a page's
#: websocket opens within a few seconds of the page being served, so this leaves ample room
UNUSED_SESSION_LIFETIME_MS = 10_000
#: how often the server looks for such sessions [ms] (Bokeh's default 17000)
CHECK_UNUSED_SESSIONS_MS = 2_000
#: largest message the server takes from a browser [bytes]: a system file of the largest size (2 MiB) takes
#: 2.8 MB in base64; larger files are refused by the page before they are sent (views.upload)
WEBSOCKET_MAX_MESSAGE_BYTES = 8 * 1024 * 1024
#: quiet time after the last released session before freed memory is handed back [s]
MEMORY_RETURN_DELAY_S = 2.0
#: time after a session is built before its objects are frozen (see ServerMemory) [s]
FREEZE_DELAY_S = 1.0


#: modules (``python -m``) and script names (console scripts) that are the orbitdeck command itself
COMMAND_MODULES = ("orbitdeck.dashboard.serve", "orbitdeck.dashboard.cli")
COMMAND_SCRIPTS = ("orbitdeck",)


def _is_the_command() -> bool:
    """True when this process runs the orbitdeck command (not a test runner or a notebook calling serve())."""
    main = sys.modules.get("__main__")
    spec = getattr(main, "__spec__", None)
    if spec is not None:
        return spec.name in COMMAND_MODULES
    return Path(getattr(main, "__file__", "") or "").stem in COMMAND_SCRIPTS


def wants_system_allocator() -> bool:
    """True when ``orbitdeck serve`` should run again with Python's system allocator (see below).

    Only on Linux with glibc, only for the command itself, and only when
    ``PYTHONMALLOC`` is not set (set it, to ``pymalloc`` for instance, to keep
    another allocator).
    """
    return (sys.platform.startswith("linux") and platform.libc_ver()[0] == "glibc"
            and "PYTHONMALLOC" not in os.environ and bool(getattr(sys, "orig_argv", None)) and _is_the_command())


def run_with_system_allocator() -> None:
    """Replace this process by the same command line with ``PYTHONMALLOC=malloc``; returns only on failure.

    Python's own allocator keeps small objects in 1 MiB arenas that go back
    to the system only when every object in them is gone, so after a room of
    sessions closes a few survivors pin most of the arenas. Under glibc's
    malloc the freed memory is handed back by ``malloc_trim``
    (:func:`release_memory`). The process is the same (``exec``): same id,
    same arguments, same terminal, so Ctrl+C and the exit status are those
    of the server.
    """
    argv = [sys.executable, *sys.orig_argv[1:]]
    sys.stdout.flush()
    sys.stderr.flush()
    try:
        os.execve(sys.executable, argv, {**os.environ, "PYTHONMALLOC": "malloc"})
    except OSError:
        pass  # served with the allocator already in use


def port_is_free(port: int, host: str = HOST) -> bool:
    """True when ``host:port`` can be served on now.

    The probe binds as the server does, with ``SO_REUSEADDR``: a port whose
    last connections are in TIME_WAIT (the server stopped while a page was
    open) can be served on at once, while one that another process listens on
    still counts as taken.
    """
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as probe:
        probe.setsockopt(socket.SOL_SOCKET, socket.SO_REUSEADDR, 1)
        try:
            probe.bind((host, port))
        except OSError:
            return False
    return True


def choose_port(requested: int | None) -> int:
    """The requested port, or the first free one from 5006 upwards.

    Raises
    ------
    OSError
        When the requested port is taken, or no port in the search range is free.
    """
    if requested is not None:
        if not port_is_free(requested):
            raise OSError(f"port {requested} on {HOST} is already in use")
        return requested
    for port in range(DEFAULT_PORT, DEFAULT_PORT + PORT_SEARCH):
        if port_is_free(port):
            return port
    raise OSError(f"no free port in {DEFAULT_PORT}-{DEFAULT_PORT + PORT_SEARCH - 1} on {HOST}")


def _read(path_or_none):
    """The system to serve (the default demo for None); notes on the file are printed as warnings."""
    from .cli import _load

    return _load(path_or_none)


def server_settings() -> dict:
    """Bokeh server options that release the session of a closed page promptly and bound a browser's messages."""
    return {"unused_session_lifetime_milliseconds": UNUSED_SESSION_LIFETIME_MS,
            "check_unused_sessions_milliseconds": CHECK_UNUSED_SESSIONS_MS,
            "websocket_max_message_size": WEBSOCKET_MAX_MESSAGE_BYTES}


def _libc_malloc_trim():
    """glibc's ``malloc_trim``, or None where the C library has none (musl, macOS, Windows)."""
    name = ctypes.util.find_library("c") or "libc.so.6"
    try:
        return ctypes.CDLL(name).malloc_trim
    except (OSError, AttributeError):
        return None


def release_memory() -> None:
    """Collect every unreachable object and hand the C heap's free pages back to the system (glibc only)."""
    gc.collect()
    trim = _libc_malloc_trim()
    if trim is not None:
        trim(0)


class ServerMemory:
    """Keeps the garbage collector off the interactive path and returns memory after sessions close.

    A session builds a few hundred thousand long-lived Python objects, and a
    full collection of twenty sessions' worth stops the server for most of a
    second, in the middle of other users' changes. So the objects of the
    warm-up and of each new session are frozen (``gc.freeze``, moved out of
    the collector's reach; reference counting still frees them) shortly after
    the session opens, and collections see only what changes create. Once
    sessions have been released (and none followed for ``delay_s``), the
    objects are unfrozen, everything unreachable is collected, the heap's free
    pages are handed back (:func:`release_memory`) and the survivors frozen
    again.

    ``session_opened`` is called while a session is built and
    ``session_closed`` is a Bokeh ``on_session_destroyed`` callback; both run
    on the server's IO loop, where the work is scheduled (and pushed back by
    each further call, so that a room opening or closing at once costs one
    pass).
    """

    def __init__(self, delay_s: float = MEMORY_RETURN_DELAY_S, freeze_delay_s: float = FREEZE_DELAY_S):
        self.delay_s, self.freeze_delay_s = delay_s, freeze_delay_s
        self._release_pending = self._freeze_pending = None
        self.releases = 0

    @staticmethod
    def freeze() -> None:
        """Collect the young generations, then freeze every object now alive."""
        gc.collect(1)
        gc.freeze()

    def _later(self, pending, delay_s: float, work):
        from tornado.ioloop import IOLoop

        loop = IOLoop.current()
        if pending is not None:
            loop.remove_timeout(pending)
        return loop.call_later(delay_s, work)

    def session_opened(self) -> None:
        self._freeze_pending = self._later(self._freeze_pending, self.freeze_delay_s, self._freeze)

    def session_closed(self, session_context) -> None:
        self._release_pending = self._later(self._release_pending, self.delay_s, self._release)

    def _freeze(self) -> None:
        self._freeze_pending = None
        self.freeze()

    def _release(self) -> None:
        self._release_pending = None
        gc.unfreeze()
        release_memory()
        gc.freeze()
        self.releases += 1


def warm_up(system) -> None:
    """Build one app with every tab rendered into a document, serialise it and throw it away.

    Loads every module a session needs before the first one opens, so that
    the first page is as quick as the next and the server's memory at rest
    already includes them.
    """
    import panel as pn
    from bokeh.document import Document

    from .app import OrbitDeckApp

    pn.extension("tabulator")
    app = OrbitDeckApp(system.copy())
    doc = Document()
    root = app.layout.get_root(doc)
    doc.add_root(root)
    for index in range(len(app.views)):
        app.tabs.active = index
    doc.to_json()
    app.layout._cleanup(root)
    pn.state._views.pop(root.ref["id"], None)
    doc.clear()
    del app, doc, root
    release_memory()


def session_factory(system, memory: ServerMemory | None = None):
    """A function building one session's page around a fresh copy of ``system``.

    With ``memory``, every session's opening and release are reported to it.
    """
    def make_app():
        import panel as pn

        from .app import OrbitDeckApp

        pn.extension("tabulator")
        page = OrbitDeckApp(system.copy()).page()
        if memory is not None:
            memory.session_opened()
            pn.state.on_session_destroyed(memory.session_closed)
        return page

    return make_app


def serve(path_or_none=None, port: int | None = None, show: bool = True, share: list[str] | None = None) -> int:
    """Serve the dashboard of a system file (the bundled demo when None) until interrupted.

    Parameters
    ----------
    path_or_none : str or os.PathLike or None
        The system file; None for the default demo system.
    port : int, optional
        Port on 127.0.0.1; by default 5006 or the next free one.
    show : bool
        Open the page in the default web browser.
    share : list of str, optional
        ``host:port`` origins allowed to open sessions; when given, the
        server listens on every interface (see :mod:`orbitdeck.dashboard.sharing`).

    Returns
    -------
    int
        Exit code: 0 after a normal stop, 2 when the file or the port cannot be used.
    """
    from orbitdeck.models import SystemFileError

    from .cli import say

    try:
        system = _read(path_or_none)
    except SystemFileError as error:
        for problem in error.problems:
            say(str(problem))
        return EXIT_BAD_INPUT
    try:
        port = choose_port(port)
    except OSError as error:
        say(f"orbitdeck serve: {error}")
        return EXIT_BAD_INPUT

    from .sharing import share_notice, share_settings

    try:
        settings = share_settings(list(share or []), port)
    except ValueError as error:
        say(f"orbitdeck serve: {error}")
        return EXIT_BAD_INPUT
    if wants_system_allocator():  # once the arguments are known to be good
        run_with_system_allocator()

    import importlib

    import panel as pn

    importlib.import_module(".app", __package__)
    warm_up(system)  # every module a session needs is loaded now, so that the first page opens as fast as the next
    memory = ServerMemory()
    memory.freeze()
    url = f"http://{HOST}:{port}/{ROUTE}"
    print(f"orbitdeck: serving {system.name!r} at {url} (Ctrl+C to stop)", flush=True)
    notice = share_notice(settings, ROUTE)
    if notice:
        print(notice, flush=True)
    from .request_guard import guarded_server

    server = guarded_server({ROUTE: session_factory(system, memory)}, settings, show=show, title="orbitdeck",
                            threaded=False, verbose=False, **server_settings())
    try:
        server.start()
        server.io_loop.start()
    except KeyboardInterrupt:
        pass
    return 0


def run(args) -> int:
    """The ``serve`` subcommand (argparse namespace -> exit code)."""
    return serve(args.file, port=args.port, show=not args.no_show, share=args.share)


def _port(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r} is not a port number") from None
    if not 1 <= value <= 65535:
        raise argparse.ArgumentTypeError(f"port must be between 1 and 65535, not {value}")
    return value


def add_arguments(parser: argparse.ArgumentParser) -> None:
    """The arguments of ``serve``."""
    parser.add_argument("file", nargs="?", metavar="FILE",
                        help="system file (orbitdeck-system/1 TOML); default: the bundled demo system")
    parser.add_argument("--port", type=_port, default=None, metavar="N",
                        help=f"port on {HOST} (default {DEFAULT_PORT}, or the next free one)")
    parser.add_argument("--no-show", action="store_true", help="do not open a web browser")
    parser.add_argument("--share", type=origins_argument, default=None, metavar="HOST:PORT[,HOST:PORT...]",
                        help="let browsers at these origins open sessions: listens on every interface, with no "
                             "log-in; only on a trusted network (a caution is printed)")
    parser.set_defaults(run=run)


def register_serve(subparsers) -> argparse.ArgumentParser:
    """Add the ``serve`` subcommand to an ``argparse`` subparsers object."""
    parser = subparsers.add_parser(
        "serve", help="serve the interactive dashboard of a system on this machine",
        description=f"Serve the linked views of a system (Layout, Neighbour skies, Period ladder, Flux & "
                    f"temperature, Observability) with a local Panel server on {HOST}. Every browser tab gets "
                    f"its own copy of the system to edit; the file itself is never changed (download the "
                    f"edited system from the page).")
    add_arguments(parser)
    return parser


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(prog="python -m orbitdeck.dashboard.serve",
                                     description="Serve the orbitdeck dashboard of a system on this machine.")
    add_arguments(parser)
    args = parser.parse_args(argv)
    return args.run(args)


if __name__ == "__main__":
    sys.exit(main())
