"""``--share``: the listening address and the origin allow-list of ``orbitdeck serve``.

The settings are checked as values, and then on a real Panel server started
with them in a subprocess: a WebSocket handshake from a listed origin is
upgraded (HTTP 101), one from any other origin is refused (HTTP 403, the
Bokeh server's origin check), and the server answers on a non-loopback
address of this machine only when sharing.
"""

from __future__ import annotations

import argparse
import base64
import contextlib
import http.client
import os
import socket
import subprocess
import sys

import pytest

from browser_support import stop, wait_until_serving
from orbitdeck.dashboard.sharing import (SHARE_CAUTION, normalise_origin, origins_argument, share_notice,
                                         share_settings, split_origins)

PORT = 5123


def test_the_default_listens_on_loopback_for_local_pages_only():
    assert share_settings([], PORT) == {"address": "127.0.0.1", "port": PORT,
                                        "websocket_origin": ["127.0.0.1:5123", "localhost:5123"]}


def test_sharing_listens_everywhere_and_adds_the_listed_origins():
    settings = share_settings(["MyLaptop.Local", "192.168.1.20:8000", "[FD00::0020]:5123",
                               "mylaptop.local:5123", "localhost"], PORT)
    assert settings["address"] == "0.0.0.0" and settings["port"] == PORT
    # lower case, as the server lower-cases a page's origin before comparing; the serving port when none
    # is given; repeats (also of the local entries) dropped; IPv6 in its compressed form (RFC 5952)
    assert settings["websocket_origin"] == ["127.0.0.1:5123", "localhost:5123", "mylaptop.local:5123",
                                            "192.168.1.20:8000", "[fd00::20]:5123"]


@pytest.mark.parametrize("entry, reason", [
    ("*", "wildcards are not allowed"),
    ("*:5123", "wildcards are not allowed"),
    ("192.168.*.*", "wildcards are not allowed"),
    ("", "empty"),
    ("   ", "empty"),
    ("http://mylaptop.local:5123", "leave out the scheme"),
    ("https://mylaptop.local", "leave out the scheme"),
    ("ws:mylaptop.local", "leave out the scheme"),
    ("mylaptop.local:5123/orbitdeck", "leave out any path"),
    ("mylaptop.local/", "leave out any path"),
    ("mylaptop.local?x=1", "leave out any path, query"),
    ("user@mylaptop.local", "user information"),
    ("my laptop", "spaces are not allowed"),
    ("mylaptop.local:", "port after ':' is missing"),
    ("mylaptop.local:http", "is not a number"),
    ("mylaptop.local:0", "between 1 and 65535"),
    ("mylaptop.local:65536", "between 1 and 65535"),
    ("192.168.1.300", "is not an IPv4 address"),
    ("fd00::20", "must be written in brackets"),
    ("[fd00::20", "must be closed"),
    ("[fd00::zz]:5123", "is not an IPv6 address"),
    ("-laptop.local", "letters, digits"),
    ("laptop..local", "letters, digits"),
    ("lap_top.local", "letters, digits"),
])
def test_an_unusable_origin_is_refused_with_the_reason(entry, reason):
    with pytest.raises(ValueError) as caught:
        share_settings(["mylaptop.local:5123", entry], PORT)
    message = str(caught.value)
    assert reason in message and message.startswith("--share")
    if entry.strip():
        assert repr(entry) in message  # names the entry given


def test_a_bad_port_or_a_bare_string_is_refused():
    for port in (0, 70000, "5006", True, 5006.0):
        with pytest.raises(ValueError, match="port"):
            share_settings([], port)
    with pytest.raises(ValueError, match="as a list"):
        share_settings("mylaptop.local:5006", PORT)  # would otherwise be read letter by letter


def test_the_option_text_is_split_at_commas_and_empty_entries_are_refused():
    assert split_origins(" a.local:1 , b.local ") == ["a.local:1", "b.local"]
    for text in ("", " ", "a.local,,b.local", "a.local,", ",a.local"):
        with pytest.raises(ValueError, match="--share"):
            split_origins(text)


def test_argparse_reports_a_bad_share_entry_as_a_usage_error(capsys):
    parser = argparse.ArgumentParser(prog="orbitdeck serve")
    parser.add_argument("--share", type=origins_argument, default=[])
    assert parser.parse_args(["--share", "a.local:5006,b.local"]).share == ["a.local:5006", "b.local"]
    with pytest.raises(SystemExit) as stopped:
        parser.parse_args(["--share", "http://a.local:5006"])
    assert stopped.value.code == 2
    error = capsys.readouterr().err
    assert "leave out the scheme" in error and "Traceback" not in error


def test_the_caution_says_who_can_edit_and_how_to_stop():
    text = SHARE_CAUTION.lower()
    for words in ("anyone on the network", "reach this port", "origins listed", "edit", "no authentication",
                  "trust", "ctrl-c"):
        assert words in text, words
    notice = share_notice(share_settings(["mylaptop.local"], PORT), "orbitdeck")
    assert notice.startswith(SHARE_CAUTION) and "http://mylaptop.local:5123/orbitdeck" in notice
    assert "localhost:5123" not in notice
    assert share_notice(share_settings([], PORT), "orbitdeck") == ""
    assert normalise_origin("Box.Lan", 8080) == "box.lan:8080"


# -- a real server started with the settings ------------------------------------------------------------

SERVER = """
import sys
from orbitdeck.dashboard.request_guard import guarded_server
from orbitdeck.dashboard.serve import session_factory, _read
from orbitdeck.dashboard.sharing import share_settings
port, origins = int(sys.argv[1]), [o for o in sys.argv[2].split(",") if o]
server = guarded_server({"orbitdeck": session_factory(_read(None))}, share_settings(origins, port), show=False,
                        threaded=False, verbose=False)
server.start()
server.io_loop.start()
"""


def free_port() -> int:
    with socket.socket() as probe:
        probe.bind(("0.0.0.0", 0))
        return probe.getsockname()[1]


def outside_address() -> str | None:
    """An IPv4 address of this machine that is not loopback, or None (no packet is sent)."""
    with socket.socket(socket.AF_INET, socket.SOCK_DGRAM) as probe:
        try:
            probe.connect(("10.255.255.255", 1))
        except OSError:
            return None
        address = probe.getsockname()[0]
    return None if address.startswith("127.") else address


@contextlib.contextmanager
def server(tmp_path, origins: list[str]):
    port = free_port()
    log = open(tmp_path / f"server-{port}.log", "w+")
    process = subprocess.Popen([sys.executable, "-c", SERVER, str(port), ",".join(origins)],
                               stdout=log, stderr=subprocess.STDOUT, env={**os.environ, "PYTHONUNBUFFERED": "1"})
    try:
        wait_until_serving(process, port, log, timeout=60)
        yield port
    finally:
        stop(process)
        log.close()


def handshake(host: str, port: int, origin: str) -> int:
    """HTTP status of a WebSocket upgrade of the session socket sent with ``Origin: origin`` (RFC 6455)."""
    connection = http.client.HTTPConnection(host, port, timeout=10)
    try:
        connection.request("GET", "/orbitdeck/ws", headers={
            "Upgrade": "websocket", "Connection": "Upgrade", "Sec-WebSocket-Version": "13",
            "Sec-WebSocket-Key": base64.b64encode(os.urandom(16)).decode(), "Origin": origin})
        return connection.getresponse().status
    finally:
        connection.close()


def reachable(host: str, port: int) -> bool:
    try:
        with socket.create_connection((host, port), timeout=3):
            return True
    except OSError:
        return False


def test_a_local_server_refuses_other_origins_and_other_interfaces(tmp_path):
    with server(tmp_path, []) as port:
        assert handshake("127.0.0.1", port, f"http://127.0.0.1:{port}") == 101
        assert handshake("127.0.0.1", port, f"http://localhost:{port}") == 101
        assert handshake("127.0.0.1", port, f"http://mylaptop.local:{port}") == 403
        assert handshake("127.0.0.1", port, f"http://127.0.0.1:{port + 1}") == 403  # another local server's page
        address = outside_address()
        if address is not None:
            assert not reachable(address, port)


def test_a_shared_server_accepts_exactly_the_listed_origins(tmp_path):
    address = outside_address()
    origins = ["MyLaptop.local", "192.168.77.5:8443"] + ([address] if address else [])
    with server(tmp_path, origins) as port:
        assert handshake("127.0.0.1", port, f"http://localhost:{port}") == 101
        assert handshake("127.0.0.1", port, f"http://mylaptop.local:{port}") == 101
        assert handshake("127.0.0.1", port, f"http://MYLAPTOP.LOCAL:{port}") == 101
        assert handshake("127.0.0.1", port, "https://192.168.77.5:8443") == 101
        assert handshake("127.0.0.1", port, "http://192.168.77.5") == 403  # the port is part of the origin
        assert handshake("127.0.0.1", port, f"http://evil.example:{port}") == 403
        assert handshake("127.0.0.1", port, f"http://mylaptop.local.evil.example:{port}") == 403
        if address is None:
            pytest.skip("this machine has no non-loopback IPv4 address to reach the server on")
        assert reachable(address, port)
        assert handshake(address, port, f"http://{address}:{port}") == 101
