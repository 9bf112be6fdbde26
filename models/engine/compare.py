"""What changed between two derivations: a pinned reference state and the current one.

Rows are matched by what labels them (a planet's name, a pair's two
planets, a sky row's observer and body), so that adding a planet does not
shift the others. A quantity is listed when its value or its interval
differs, or when its row exists in one state only.

The difference ``new - old`` is also given in units of the combined
uncertainty, ``(new - old) / sqrt(s_old^2 + s_new^2)``, where each ``s`` is
the side of that state's 16th-84th percentile interval facing the other
value (the usual way to combine asymmetric errors for a difference). It
treats the two states as independent, which they are not when they share
inputs: it says how large a change is against the spread of each state,
not how significant it is.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .registry import Quantity, declared

#: how each table's rows are named (from the derived columns)
_ROW_NAMES = {
    "planets": lambda t, i: str(t["name"][i]),
    "pairs": lambda t, i: f"{t['inner'][i]}\u2013{t['outer'][i]}",
    "triples": lambda t, i: "\u2013".join(str(n) for n in t["planets"][i]),
    "skies": lambda t, i: f"{t['body'][i]} seen from {t['observer'][i]}",
}


@dataclass(frozen=True)
class Change:
    """One derived quantity of one row whose value or interval differs between two states.

    ``old`` and ``new`` are None where the row or value does not exist in
    that state; ``old_interval``/``new_interval`` are (16th, 84th)
    percentiles or None; ``difference`` is ``new - old`` for numbers;
    ``sigmas`` is that difference in units of the combined uncertainty
    (None without intervals on both sides).
    """

    table: str
    row: str
    quantity: Quantity
    old: object
    new: object
    old_interval: tuple | None
    new_interval: tuple | None
    difference: float | None
    sigmas: float | None


def _number(value) -> float | None:
    if value is None or isinstance(value, (str, bool, np.bool_)):
        return None
    try:
        number = float(value)
    except (TypeError, ValueError):
        return None
    return number if math.isfinite(number) else None


def _plain(value):
    """A value as a plain Python object (None for NaN)."""
    if isinstance(value, np.generic):
        value = value.item()
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def _nested(node, key: str):
    for part in key.split("."):
        if not isinstance(node, dict):
            return None
        node = node.get(part)
    return node


def _rows(derived, table: str) -> dict:
    """Row name -> {key: (value, interval or None)} of one table of ``derived``."""
    quantities = declared(table)
    intervals = derived.intervals.get(table) if derived.intervals else None
    if table in ("system", "star"):
        values = getattr(derived, table)
        found = {}
        for q in quantities:
            bounds = _nested(intervals, q.key) if intervals else None
            found[q.key] = (_plain(_nested(values, q.key)), tuple(bounds) if bounds else None)
        return {table: found}
    columns = getattr(derived, table)
    count = len(columns[quantities[0].key]) if quantities else 0
    rows = {}
    for i in range(count):
        entry = {}
        for q in quantities:
            bounds = intervals.get(q.key) if intervals else None
            interval = (float(bounds[0][i]), float(bounds[1][i])) if bounds is not None else None
            entry[q.key] = (_plain(columns[q.key][i]), interval)
        rows[_ROW_NAMES[table](columns, i)] = entry
    return rows


def combined_sigmas(old: float, old_interval, new: float, new_interval) -> float | None:
    """``(new - old) / sqrt(s_old^2 + s_new^2)``, each ``s`` the side of its interval facing the other value.

    None when an interval is missing or both facing sides are zero.
    """
    if old_interval is None or new_interval is None:
        return None
    if not all(math.isfinite(x) for x in (*old_interval, *new_interval)):
        return None
    difference = new - old
    if difference >= 0:
        s_old, s_new = old_interval[1] - old, new - new_interval[0]
    else:
        s_old, s_new = old - old_interval[0], new_interval[1] - new
    scale = math.sqrt(max(s_old, 0.0) ** 2 + max(s_new, 0.0) ** 2)
    if scale == 0.0:
        return None
    return difference / scale


def _same(a, b) -> bool:
    if a is None or b is None:
        return a is b
    if isinstance(a, tuple) or isinstance(b, tuple):
        return a is not None and b is not None and all(_same(x, y) for x, y in zip(a, b))
    if isinstance(a, float) and isinstance(b, float) and math.isnan(a) and math.isnan(b):
        return True
    return a == b


def compare(pinned, current) -> list[Change]:
    """Every derived quantity whose value or interval differs between ``pinned`` and ``current``
    (two :class:`~orbitdeck.models.engine.derive.Derived`), in table, row and registry order."""
    changes = []
    for table in ("system", "star", "planets", "pairs", "triples", "skies"):
        old_rows, new_rows = _rows(pinned, table), _rows(current, table)
        names = list(old_rows) + [name for name in new_rows if name not in old_rows]
        for name in names:
            old_row, new_row = old_rows.get(name, {}), new_rows.get(name, {})
            for q in declared(table):
                old, old_interval = old_row.get(q.key, (None, None))
                new, new_interval = new_row.get(q.key, (None, None))
                # an interval counts only when both states have one (switching draws on is no change)
                both = old_interval is not None and new_interval is not None
                if _same(old, new) and (not both or _same(old_interval, new_interval)):
                    continue
                a, b = _number(old), _number(new)
                numeric = q.kind == "float" and a is not None and b is not None
                changes.append(Change(
                    table, name, q, old, new, old_interval, new_interval,
                    b - a if numeric else None,
                    combined_sigmas(a, old_interval, b, new_interval) if numeric else None))
    return changes
