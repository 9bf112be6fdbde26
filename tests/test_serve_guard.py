"""The server's port check and the requests it refuses.

* A port left in TIME_WAIT by a stopped server (a tab was still open) is
  free to serve on again at once; a port someone listens on is not.
* Without ``--share``, a request carrying another site's Origin, or sent by a
  page of another site (``Sec-Fetch-Site``) for anything but opening the page
  itself, is refused before any session is built, and every response forbids
  framing by other origins; with ``--share``, the listed origins are accepted too.
"""

from __future__ import annotations

import http.client
import socket
import time

import pytest

from orbitdeck.dashboard.serve import port_is_free


def test_a_port_left_in_time_wait_is_free_and_a_listened_one_is_not():
    with socket.socket() as listener:
        listener.setsockopt(socket.SOL_SOCKET, socket.SO_REUSEADDR, 1)
        listener.bind(("127.0.0.1", 0))
        listener.listen()
        port = listener.getsockname()[1]
        assert not port_is_free(port)  # a server is listening
        client = socket.create_connection(("127.0.0.1", port))
        accepted, _ = listener.accept()
        accepted.close()  # the server's side closes first, so its address stays in TIME_WAIT
        time.sleep(0.2)
        client.close()
    with socket.socket() as probe:  # the situation the check must see through: a plain bind fails
        with pytest.raises(OSError):
            probe.bind(("127.0.0.1", port))
    assert port_is_free(port)


# -- requests from other websites --------------------------------------------------------------------

from test_sharing import server  # noqa: E402  (a real server on the settings, in a subprocess)


def fetch(port: int, path: str, headers: dict, method: str = "GET"):
    """Status, headers and body of one HTTP request to the server."""
    connection = http.client.HTTPConnection("127.0.0.1", port, timeout=30)
    try:
        connection.request(method, path, headers=headers, body=b"" if method == "POST" else None)
        response = connection.getresponse()
        return response.status, response.headers, response.read().decode("utf-8", "replace")
    finally:
        connection.close()


#: headers a browser sends for the page, a script, a frame and an image of another site
OPENING = {"Sec-Fetch-Site": "cross-site", "Sec-Fetch-Mode": "navigate", "Sec-Fetch-Dest": "document"}
FRAMED = {"Sec-Fetch-Site": "cross-site", "Sec-Fetch-Mode": "navigate", "Sec-Fetch-Dest": "iframe"}
IMAGE = {"Sec-Fetch-Site": "cross-site", "Sec-Fetch-Mode": "no-cors", "Sec-Fetch-Dest": "image"}
SCRIPT = {"Sec-Fetch-Site": "same-site", "Sec-Fetch-Mode": "no-cors", "Sec-Fetch-Dest": "script"}


def test_a_local_server_refuses_every_request_of_another_site(tmp_path):
    with server(tmp_path, []) as port:
        own = f"http://127.0.0.1:{port}"
        for path in ("/orbitdeck", "/static/js/bokeh.min.js", "/orbitdeck/autoload.js", "/"):
            for headers in ({"Origin": "http://evil.example"}, {"Origin": "null"},
                            {"Origin": f"http://127.0.0.1:{port + 1}"}, {"Origin": "http://localhost"},
                            FRAMED, IMAGE, SCRIPT):
                status, _, body = fetch(port, path, headers)
                assert status == 403 and body.startswith("orbitdeck: refused"), (path, headers, status)
        status, _, _ = fetch(port, "/orbitdeck", {"Origin": "http://evil.example"}, method="POST")
        assert status == 403
        # the page's own requests, a typed address and a followed link are answered
        for headers in ({}, {"Origin": own}, {"Origin": f"http://localhost:{port}"}, OPENING,
                        {"Sec-Fetch-Site": "same-origin", "Sec-Fetch-Dest": "script", "Sec-Fetch-Mode": "no-cors"},
                        {"Sec-Fetch-Site": "none", "Sec-Fetch-Mode": "navigate", "Sec-Fetch-Dest": "document"}):
            status, _, _ = fetch(port, "/static/js/bokeh.min.js", headers)
            assert status == 200, headers
        status, headers, body = fetch(port, "/orbitdeck", {})
        assert status == 200 and "Bokeh" in body
        assert headers["X-Frame-Options"] == "SAMEORIGIN"
        assert headers["Content-Security-Policy"] == (f"frame-ancestors 'self' http://127.0.0.1:{port} "
                                                      f"https://127.0.0.1:{port} http://localhost:{port} "
                                                      f"https://localhost:{port}")


def test_a_shared_server_answers_the_listed_origins_only(tmp_path):
    with server(tmp_path, ["MyLaptop.local"]) as port:
        assert fetch(port, "/static/js/bokeh.min.js", {"Origin": f"http://mylaptop.local:{port}"})[0] == 200
        assert fetch(port, "/static/js/bokeh.min.js", {"Origin": f"https://MYLAPTOP.local:{port}"})[0] == 200
        assert fetch(port, "/static/js/bokeh.min.js", {"Origin": "http://mylaptop.local"})[0] == 403
        assert fetch(port, "/orbitdeck", {"Origin": f"http://evil.example:{port}"})[0] == 403
        assert fetch(port, "/orbitdeck", FRAMED)[0] == 403
        _, headers, _ = fetch(port, "/static/js/bokeh.min.js", {})
        assert f"http://mylaptop.local:{port}" in headers["Content-Security-Policy"]
