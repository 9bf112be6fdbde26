"""Entries: text boxes for numbers, checked against a parameter's bounds before anything is applied."""

from __future__ import annotations

import math
import re

import panel as pn


class Entry(pn.widgets.TextInput):
    """A text box whose value (sent on Enter or on leaving the box) is applied at once.

    Panel holds back a change from the browser for 50 ms (``_debounce``) so
    that a burst of changes (a dragged slider) is handled once; an entry sends
    one value per Enter, so the wait would only add to every edit's latency.
    """

    _debounce = 0


class Rejected(ValueError):
    """An entry that cannot be applied; the message is shown to the user."""


#: a decimal number as people type it: digits with an optional point and exponent, ASCII only
_PLAIN_NUMBER = re.compile(r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")


def parse_entry(text: str, parameter, label: str, unit: str, optional: bool = False):
    """The value of an entry's ``text`` for ``parameter``, checked against its bounds.

    Returns None for a blank optional entry. Raises :class:`Rejected` with a
    message naming the field and the reason.
    """
    text = (text or "").strip()
    if not text:
        if optional:
            return None
        raise Rejected(f"{label}: a value is needed")
    if not _PLAIN_NUMBER.fullmatch(text):   # float() also takes "1_0", "infinity" and non-ASCII digits
        if text.lower().lstrip("+-") not in ("nan", "inf", "infinity"):
            raise Rejected(f"{label}: {text!r} is not a number")
    value = float(text)
    if not math.isfinite(value):
        raise Rejected(f"{label}: must be a finite number, not {text!r}")
    lo, hi = getattr(parameter, "bounds", None) or (None, None)
    lo_in, hi_in = getattr(parameter, "inclusive_bounds", (True, True))
    if lo is not None and (value < lo or (value == lo and not lo_in)):
        raise Rejected(f"{label}: must be {'>=' if lo_in else '>'} {lo:g} {unit}, not {value:g}")
    if hi is not None and (value > hi or (value == hi and not hi_in)):
        raise Rejected(f"{label}: must be {'<=' if hi_in else '<'} {hi:g} {unit}, not {value:g}")
    return value


def entry_text(value) -> str:
    """How a model value is shown in an entry."""
    if value is None:
        return ""
    return f"{value:.10g}" if isinstance(value, (int, float)) else str(value)


class Picker(pn.widgets.Select):
    """A drop-down list whose choice is applied at once (one choice per pick: no burst to wait for)."""

    _debounce = 0
