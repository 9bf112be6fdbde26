"""``orbitdeck serve``: the dashboard on a local Panel server.

The server listens on 127.0.0.1 only, and answers no request from a page of
another website (:mod:`orbitdeck.dashboard.request_guard`). Every browser session gets its own
app object built around its own copy of the system (``System.copy()``), so
an edit in one tab never shows in another; the system read at start-up is
only ever copied, never edited.

Every module a session needs is imported before the first page is served
(:func:`warm_up`), so the first page opens as fast as the next, and a
closed page's session is released a few seconds after its last connection
(:func:`server_settings`).

Run as ``orbitdeck serve [FILE] [--port N] [--no-show]`` or
``python -m orbitdeck.dashboard.serve [FILE] [--port N] [--no-show]``.
"""

from __future__ import annotations

import argparse
import socket
import sys

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


def _source(path_or_none):
    """The bytes of the system file (the bundled demo when None), with their name and SHA-256."""
    from orbitdeck.models.files.sources import demo_source, read_source

    return read_source(path_or_none) if path_or_none else demo_source()


def _read(path_or_none):
    """The system to serve (the default demo for None); notes on the file are printed as warnings."""
    from .cli import _system

    return _system(_source(path_or_none))


def server_settings() -> dict:
    """Bokeh server options that release the session of a closed page promptly and bound a browser's messages."""
    return {"unused_session_lifetime_milliseconds": UNUSED_SESSION_LIFETIME_MS,
            "check_unused_sessions_milliseconds": CHECK_UNUSED_SESSIONS_MS,
            "websocket_max_message_size": WEBSOCKET_MAX_MESSAGE_BYTES}


def warm_up() -> None:
    """Import every module a session needs, so that the first page opens as fast as the next."""
    import panel as pn

    from . import app  # noqa: F401  (the views and models it imports)

    pn.extension("tabulator")
    app.load_plotting()


def page_title(system) -> str:
    """The browser tab's title of a page showing ``system`` (plain text: the page escapes it)."""
    return f"{system.name} \u2013 orbitdeck"


def session_factory(system, source=None, channel=None):
    """A function building one session's page around a fresh copy of ``system`` (read from ``source``);
    with a presenter ``channel``, the session joins it (see :mod:`orbitdeck.dashboard.presenter`)."""
    def make_app():
        import panel as pn

        from .app import OrbitDeckApp
        from .views.look import PAGE_CSS

        # inside a session Panel keeps this configuration for the session alone
        pn.extension("tabulator", raw_css=[PAGE_CSS])
        app = OrbitDeckApp(system.copy(), source=source)
        page = app.page()
        if channel is not None:
            from .presenter import PresenterLink, session_token

            link = PresenterLink(app, channel, pn.state.curdoc, session_token())
            app.main.insert(0, link.strip)
        return page

    return make_app


def serve(path_or_none=None, port: int | None = None, show: bool = True, share: list[str] | None = None,
          present: bool = False) -> int:
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
    present : bool
        Presenter mode: one session presents, the others follow read-only
        (see :mod:`orbitdeck.dashboard.presenter`); the token that lets a
        page present is printed.

    Returns
    -------
    int
        Exit code: 0 after a normal stop, 2 when the file or the port cannot be used.
    """
    from orbitdeck.models import SystemFileError

    from .cli import say

    try:
        from .cli import _system

        source = _source(path_or_none)
        system = _system(source)
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
    warm_up()
    url = f"http://{HOST}:{port}/{ROUTE}"
    print(f"orbitdeck: serving {system.name!r} at {url} (Ctrl+C to stop)", flush=True)
    notice = share_notice(settings, ROUTE)
    if notice:
        print(notice, flush=True)
    channel = None
    if present:
        from .presenter import QUERY_ARGUMENT, PresenterChannel

        channel = PresenterChannel()
        print(f"presenter mode: the first page opened presents and every other page follows it, read-only. "
              f"To present from another page, open {url}?{QUERY_ARGUMENT}={channel.token} or type the token "
              f"{channel.token} into the page.", flush=True)
    from .request_guard import guarded_server

    server = guarded_server({ROUTE: session_factory(system, source, channel)}, settings, show=show,
                            title={ROUTE: page_title(system)},
                            threaded=False, verbose=False, **server_settings())
    try:
        server.start()
        server.io_loop.start()
    except KeyboardInterrupt:
        pass
    return 0


def run(args) -> int:
    """The ``serve`` subcommand (argparse namespace -> exit code)."""
    return serve(args.file, port=args.port, show=not args.no_show, share=args.share, present=args.present)


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
    parser.add_argument("--present", action="store_true",
                        help="presenter mode: the first page (or one given the printed token) presents; every "
                             "other page follows it live and read-only; the presenter can hand over")
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
