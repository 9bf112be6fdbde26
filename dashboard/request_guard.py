"""Requests from other websites: refused before any session is built, and no framing by them.

Bokeh checks the origin of the session's websocket only; a page of any other
site could still load the dashboard's page (which builds a whole session,
about half a second of work and a few MB each), its scripts, or show it in a
frame. The server made by :func:`guarded_server` answers 403 to

* any request whose ``Origin`` header names an origin not allowed (the
  serving page's own, ``127.0.0.1:PORT`` and ``localhost:PORT``, and with
  ``--share`` the listed ones), or is ``null``;
* any request without ``Origin`` that the browser marks as sent by a page of
  another site (``Sec-Fetch-Site: cross-site`` or ``same-site``), except the
  opening of the page itself in a tab (``Sec-Fetch-Mode: navigate``,
  ``Sec-Fetch-Dest: document``: following a link is as good as typing it),

before the request reaches Bokeh; and every response carries
``Content-Security-Policy: frame-ancestors 'self' ...`` (the allowed origins)
and ``X-Frame-Options: SAMEORIGIN``, so that no other site can show the
dashboard in a frame.
"""

from __future__ import annotations

from urllib.parse import urlsplit

from .sharing import normalise_origin

REFUSAL = ("orbitdeck: refused: this request came from a page of another website. The dashboard answers only "
           "its own pages (start it with --share HOST:PORT to let a named origin in).\n")
_DEFAULT_PORTS = {"http": 80, "https": 443, "ws": 80, "wss": 443}


def origin_key(origin: str) -> str | None:
    """An ``Origin`` header as the ``host:port`` the allowed list holds, or None when it is not an origin."""
    parts = urlsplit(origin.strip())
    if parts.scheme not in _DEFAULT_PORTS or not parts.netloc or parts.path or parts.query or parts.fragment:
        return None
    try:
        port = parts.port or _DEFAULT_PORTS[parts.scheme]
        return normalise_origin(parts.netloc if parts.port else f"{parts.netloc}:{port}", port)
    except ValueError:
        return None


def request_refusal(headers, allowed) -> str | None:
    """Why a request with these headers is refused, or None when it may be answered.

    Parameters
    ----------
    headers : mapping
        The request's headers (case-insensitive names, as tornado gives them).
    allowed : iterable of str
        Allowed origins as ``host:port`` (``share_settings()["websocket_origin"]``).
    """
    origin = headers.get("Origin")
    if origin is not None:
        key = origin_key(origin)
        if key is None or key not in set(allowed):
            return f"Origin {origin!r} is not allowed"
        return None
    site = (headers.get("Sec-Fetch-Site") or "").lower()
    if site in ("cross-site", "same-site"):
        opening = ((headers.get("Sec-Fetch-Mode") or "").lower() == "navigate"
                   and (headers.get("Sec-Fetch-Dest") or "").lower() == "document")
        if not opening:
            return f"sent by a page of another site ({site}, {headers.get('Sec-Fetch-Dest') or 'no destination'})"
    return None


def frame_ancestors(allowed) -> str:
    """The ``frame-ancestors`` source list: the page's own origin and the allowed ones."""
    sources = ["'self'"]
    for key in allowed:
        sources += [f"http://{key}", f"https://{key}"]
    return " ".join(sources)


def _frame_headers(allowed):
    """A tornado output transform putting the frame headers on every response."""
    from tornado.web import OutputTransform

    policy = f"frame-ancestors {frame_ancestors(allowed)}"

    class FrameHeaders(OutputTransform):
        def transform_first_chunk(self, status_code, headers, chunk, finishing):
            headers["X-Frame-Options"] = "SAMEORIGIN"
            present = headers.get("Content-Security-Policy")
            headers["Content-Security-Policy"] = f"{present}; {policy}" if present else policy
            return status_code, headers, chunk

    return FrameHeaders


def _install(application, allowed) -> None:
    """Answer 403 to refused requests before any of ``application``'s own handlers sees them, and
    put the frame headers on every response."""
    from tornado.routing import Matcher, Rule
    from tornado.web import RequestHandler

    allowed = list(allowed)

    class Foreign(Matcher):
        def match(self, request):
            return {} if request_refusal(request.headers, allowed) else None

    class Refusal(RequestHandler):
        def prepare(self):
            self.set_status(403)
            self.set_header("Content-Type", "text/plain; charset=utf-8")
            self.finish(REFUSAL)

    # handlers added for a host pattern come before the application's own (tornado's add_handlers)
    application.add_handlers(r".*", [Rule(Foreign(), Refusal)])
    application.add_transform(_frame_headers(allowed))


def guarded_server(applications: dict, settings: dict, **options):
    """A Panel server (not started) for ``applications`` with the refusals and frame headers above.

    Parameters
    ----------
    applications : dict
        Route -> session factory, as for ``pn.serve``.
    settings : dict
        :func:`~orbitdeck.dashboard.sharing.share_settings` of the server.
    **options
        Further keyword arguments of ``pn.serve`` (``show``, ``title``, ...).

    Returns
    -------
    bokeh.server.server.Server
        Start it with ``server.start()`` and ``server.io_loop.start()``.
    """
    import panel as pn

    allowed = settings["websocket_origin"]
    server = pn.serve(applications, start=False, **settings, **options)
    application = getattr(server, "_tornado", None)  # Bokeh keeps its tornado application here
    if application is None or not hasattr(application, "add_handlers") or not hasattr(application, "add_transform"):
        server.stop()
        raise RuntimeError("this Bokeh release keeps no tornado application on its server: the refusal of "
                           "requests from other websites cannot be installed, so the server is not started")
    _install(application, allowed)
    return server
