"""Where ``orbitdeck serve`` listens and which pages may open a session.

By default the server listens on 127.0.0.1 and accepts session connections
only from pages whose origin is ``127.0.0.1:PORT`` or ``localhost:PORT``.
``--share ORIGIN[,ORIGIN...]`` makes it listen on every network interface
(0.0.0.0) and adds the listed origins to that allow-list: each entry is the
``host[:port]`` a colleague's browser shows in its address bar when it opens
the page (``mylaptop.local:5006``, ``192.168.1.20:5006``,
``[fd00::20]:5006``); without a port the serving port is meant. Wildcards,
schemes, paths and empty entries are refused, so that sharing is always
with named hosts.

:func:`share_settings` returns the keyword arguments of ``pn.serve`` for
both cases; :data:`SHARE_CAUTION` is the text to print when sharing.
"""

from __future__ import annotations

import argparse
import ipaddress
import re

LOCAL_ADDRESS = "127.0.0.1"
SHARED_ADDRESS = "0.0.0.0"
LOCAL_HOSTS = ("127.0.0.1", "localhost")
OPTION = "--share"

SHARE_CAUTION = (
    "CAUTION: this dashboard is shared. It listens on every network interface of this machine, and anyone "
    "on the network who can reach this port and whose browser opens the page from one of the origins listed "
    "can open a session and edit the system in it. There is no authentication and no encryption. Use "
    "--share only on a network you trust, and stop the server with Ctrl-C when you are done."
)

_LABEL = re.compile(r"^(?!-)[a-z0-9-]{1,63}(?<!-)$")
_PORT = re.compile(r"^[0-9]{1,5}$")
_SCHEMES = ("http:", "https:", "ws:", "wss:", "file:")


def _refuse(entry: str, reason: str) -> ValueError:
    return ValueError(f"{OPTION}: {entry!r} cannot be used as an origin: {reason}")


def _check_port(entry: str, text: str) -> int:
    if not _PORT.match(text):
        raise _refuse(entry, f"the port {text!r} is not a number")
    port = int(text)
    if not 1 <= port <= 65535:
        raise _refuse(entry, f"the port must be between 1 and 65535, not {port}")
    return port


def _check_host(entry: str, host: str) -> str:
    """``host`` in lower case (as the server compares it), or ValueError naming the entry."""
    if host.startswith("["):
        if not host.endswith("]"):
            raise _refuse(entry, "an IPv6 address must be closed with ']'")
        try:
            return f"[{ipaddress.IPv6Address(host[1:-1]).compressed}]"
        except ValueError:
            raise _refuse(entry, f"{host[1:-1]!r} is not an IPv6 address") from None
    host = host.lower()
    if not host:
        raise _refuse(entry, "the host name is missing")
    if len(host) > 253:
        raise _refuse(entry, "the host name is longer than 253 characters")
    labels = host.split(".")
    if all(label.isdigit() for label in labels):
        try:
            return str(ipaddress.IPv4Address(host))
        except ValueError:
            raise _refuse(entry, f"{host!r} is not an IPv4 address") from None
    for label in labels:
        if not _LABEL.match(label):
            raise _refuse(entry, "a host name is made of letters, digits, '-' and '.' (each part 1 to 63 "
                                 "characters, not starting or ending with '-')")
    return host


def normalise_origin(entry: str, port: int) -> str:
    """One ``--share`` entry as the ``host:port`` the server compares with a page's origin.

    Parameters
    ----------
    entry : str
        ``host``, ``host:port``, ``IPv4:port`` or ``[IPv6]:port``; without a
        port, ``port`` is used.
    port : int
        The port the dashboard is served on.

    Raises
    ------
    ValueError
        For a wildcard, an empty entry, a scheme, a path, a query, user
        information, spaces, a bad host name or a bad port; the message names
        the entry and the reason.
    """
    if not isinstance(entry, str):
        raise ValueError(f"{OPTION}: an origin must be text, not {type(entry).__name__}")
    text = entry.strip()
    if not text:
        raise ValueError(f"{OPTION}: an origin is empty (give host:port entries separated by commas, "
                         "with nothing between two commas)")
    if "*" in text:
        raise _refuse(entry, "wildcards are not allowed; name every host that may open the page")
    if "://" in text or text.lower().startswith(_SCHEMES):
        raise _refuse(entry, "leave out the scheme (http://, https://): give only host:port")
    if any(c in text for c in "/\\?#"):
        raise _refuse(entry, "leave out any path, query or fragment: give only host:port")
    if "@" in text:
        raise _refuse(entry, "user information (user@) is not part of an origin: give only host:port")
    if any(c.isspace() for c in text):
        raise _refuse(entry, "spaces are not allowed inside an origin")
    if text.startswith("["):
        host, sep, rest = text.partition("]")
        host += "]"
        if rest and not rest.startswith(":"):
            raise _refuse(entry, "after an IPv6 address in brackets only ':port' may follow")
        port_text = rest[1:] if rest else None
        if not sep:
            raise _refuse(entry, "an IPv6 address must be closed with ']'")
    elif text.count(":") > 1:
        raise _refuse(entry, "an IPv6 address must be written in brackets, as [address]:port")
    else:
        host, sep, port_text = text.partition(":")
        port_text = port_text if sep else None
    if port_text is not None and port_text == "":
        raise _refuse(entry, "the port after ':' is missing")
    shown_port = _check_port(entry, port_text) if port_text is not None else port
    return f"{_check_host(entry, host)}:{shown_port}"


def share_settings(origins: list[str], port: int) -> dict:
    """Keyword arguments of ``pn.serve`` for serving on ``port``, shared with ``origins`` or not.

    Parameters
    ----------
    origins : list of str
        The ``--share`` entries (``host[:port]``); empty for the default,
        local-only server.
    port : int
        The port the dashboard is served on.

    Returns
    -------
    dict
        ``address`` (``"127.0.0.1"``, or ``"0.0.0.0"`` when ``origins`` is
        not empty), ``port`` and ``websocket_origin`` (``127.0.0.1:PORT``,
        ``localhost:PORT`` and, when sharing, every entry of ``origins``,
        normalised to lower-case ``host:port``, without repeats).

    Raises
    ------
    ValueError
        When ``port`` is not a port number or an entry of ``origins`` is not
        a plain ``host[:port]`` (see :func:`normalise_origin`).
    """
    if isinstance(port, bool) or not isinstance(port, int) or not 1 <= port <= 65535:
        raise ValueError(f"the port must be a whole number between 1 and 65535, not {port!r}")
    if isinstance(origins, str):
        raise ValueError(f"{OPTION}: give the origins as a list (split {origins!r} with split_origins())")
    allowed = [f"{host}:{port}" for host in LOCAL_HOSTS]
    for entry in origins:
        origin = normalise_origin(entry, port)
        if origin not in allowed:
            allowed.append(origin)
    return {"address": SHARED_ADDRESS if origins else LOCAL_ADDRESS, "port": port,
            "websocket_origin": allowed}


def split_origins(text: str) -> list[str]:
    """The entries of ``--share ORIGIN[,ORIGIN...]``, split at commas (each checked later).

    Raises ValueError for an empty value or an empty entry (``a,,b``, a
    trailing comma), which would otherwise be silently dropped.
    """
    entries = [part.strip() for part in (text or "").split(",")]
    if not any(entries):
        raise ValueError(f"{OPTION} needs at least one host:port (for example {OPTION} mylaptop.local:5006)")
    if not all(entries):
        raise ValueError(f"{OPTION}: {text!r} has an empty entry (two commas in a row, or a comma at an end)")
    return entries


def origins_argument(text: str) -> list[str]:
    """``argparse`` type of ``--share``: the entries of ``text``, checked, or a clear usage error.

    The entries are checked with a placeholder port here (their final form
    depends on the serving port, see :func:`share_settings`), so that a bad
    entry is reported before the server starts.
    """
    try:
        entries = split_origins(text)
        for entry in entries:
            normalise_origin(entry, 1)
    except ValueError as error:
        raise argparse.ArgumentTypeError(str(error)) from None
    return entries


def share_notice(settings: dict, route: str) -> str:
    """What to print when sharing: the caution and the addresses colleagues may open."""
    if settings["address"] != SHARED_ADDRESS:
        return ""
    local = {f"{host}:{settings['port']}" for host in LOCAL_HOSTS}
    addresses = [f"  http://{origin}/{route}" for origin in settings["websocket_origin"] if origin not in local]
    return SHARE_CAUTION + "\nPages may be opened at:\n" + "\n".join(addresses)
