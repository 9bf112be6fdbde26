"""Tables of the views, read from the registry of derived quantities.

A view's table shows, for one table of the derived document (planets,
pairs, triples, skies), every quantity whose ``views`` name that view: the
registry gives the column's heading, the number format, the description
(the heading's tooltip) and whether it is a model estimate (the heading
gets a dagger and the table a caution naming the source). With Monte Carlo
draws, each number carries its 16th-84th percentile range beneath it, and
a yes/no quantity the share of draws in which it holds.

The cells are pre-formatted text, so numbers read the same in the served
page, the snapshot and the text tables. A table wider than its place
scrolls sideways with its label columns frozen; headings wrap.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import panel as pn

from orbitdeck.models.engine.references import REFERENCES
from orbitdeck.models.engine.registry import Quantity, declared

from .common import MISSING, escape

ESTIMATE_MARK = "\u2020"
#: the look of the tables (Tabulator in its shadow root): wrapped headings, numbers in tabular figures,
#: the range under each value in a smaller, quieter type
TABLE_CSS = """
.tabulator { font-size: 12.5px; border: 1px solid #d8d2c4; background: #ffffff; }
.tabulator .tabulator-header { background: #f3f0e8; border-bottom: 1px solid #c9c2b3; }
.tabulator .tabulator-header .tabulator-col { background: #f3f0e8; }
.tabulator .tabulator-col .tabulator-col-title { white-space: normal; word-break: normal; overflow-wrap: anywhere;
  font-weight: 600; color: #1f2630; }
.tabulator-row .tabulator-cell { font-variant-numeric: tabular-nums; padding: 3px 6px; }
.tabulator-row.tabulator-selected { background: #e4e9f2 !important; }
.tabulator-row.tabulator-selected .tabulator-cell:first-child { box-shadow: inset 4px 0 0 #1f2630; }
.od-value { display: block; white-space: nowrap; }
.od-range { display: block; white-space: nowrap; font-size: 10.5px; color: #5a6270; }
"""


def quantities_of(view: str, table: str) -> list[Quantity]:
    """The quantities of document table ``table`` that view ``view`` shows, in registry order."""
    return [q for q in declared(table) if view in q.views]


def number_text(value, spec: str) -> str:
    """``value`` formatted with the format spec ``spec``; a dash for a missing value."""
    if value is None:
        return MISSING
    try:
        value = float(value)
    except (TypeError, ValueError):
        return str(value)
    if not math.isfinite(value):
        return MISSING
    return format(value, spec)


def _delta_text(value: float) -> str:
    """A distance to a percentile, to two significant digits (a range is known to no better)."""
    return f"{value:.2g}" if value != 0 else "0"


def range_text(value, low, high) -> str:
    """"+a \u2212b": how far the 84th percentile lies above ``value`` and the 16th below it."""
    if not all(isinstance(x, (int, float, np.floating, np.integer)) and math.isfinite(x)
               for x in (value, low, high)):
        return ""
    return f"+{_delta_text(max(high - value, 0.0))} \u2212{_delta_text(max(value - low, 0.0))}"


def cell_texts(quantity: Quantity, values, bounds=None, fractions=None, marks=None) -> list[str]:
    """The cells of one column: the value and, with draws, its range (floats) or share of draws (yes/no).

    ``marks`` (one text per row, may be empty) are put before the values: "≈ " for an estimate.
    """
    values = list(values)
    if quantity.kind == "label":
        return [MISSING if v is None else escape(v) for v in values]
    if quantity.kind == "bool":
        texts = ["yes" if bool(v) else "no" for v in values]
        if fractions is not None:
            return [f'<span class="od-value">{t}</span><span class="od-range">in {100 * f:.0f}% of draws</span>'
                    for t, f in zip(texts, fractions)]
        return texts
    if quantity.kind == "int":
        return [MISSING if v is None or (isinstance(v, float) and not math.isfinite(v)) else str(int(v))
                for v in values]
    texts = [number_text(v, quantity.fmt) for v in values]
    if marks is not None:
        texts = [m + t for m, t in zip(marks, texts)]
    if bounds is None:
        return texts
    low, high = (np.asarray(b, dtype=float) for b in bounds)
    out = []
    for text, v, lo, hi in zip(texts, values, low, high):
        spread = range_text(float(v) if v is not None else math.nan, float(lo), float(hi))
        out.append(f'<span class="od-value">{text}</span><span class="od-range">{spread or "&nbsp;"}</span>')
    return out


def table_frame(derived, view: str, table: str, labels: dict, quantities=None, marks=None) -> pd.DataFrame:
    """The rows of a view's table: the label columns given, then one text column per quantity (by key).

    ``marks`` maps a key to texts put before its values (see :func:`cell_texts`).
    """
    rows = getattr(derived, table)
    wanted = quantities_of(view, table) if quantities is None else quantities
    intervals = derived.intervals.get(table, {}) if derived.intervals else {}
    fractions = derived.fractions.get(table, {}) if derived.fractions else {}
    columns = {name: [str(v) for v in values] for name, values in labels.items()}
    for q in wanted:
        columns[q.key] = cell_texts(q, rows[q.key], intervals.get(q.key), fractions.get(q.key),
                                    (marks or {}).get(q.key))
    return pd.DataFrame(columns)


def headings(quantities) -> dict[str, str]:
    """Column titles: the registry's heading, with a dagger for a model estimate."""
    return {q.key: q.heading + (f" {ESTIMATE_MARK}" if q.estimate else "") for q in quantities}


def citation_of(quantity: Quantity) -> str:
    """The short citation of a quantity's published method ("" when it has none)."""
    source = REFERENCES.get(quantity.source) if quantity.source else None
    return source.citation if source is not None else ""


def descriptions(quantities) -> dict[str, str]:
    """Heading tooltips: the registry's one-line description, and its source."""
    return {q.key: q.description + (f" ({citation_of(q)})" if citation_of(q) else "") for q in quantities}


def caution_html(quantities, derived=None) -> str:
    """A line under a table: which columns are model estimates and after whom, and what the ranges are."""
    parts = []
    estimates = [q for q in quantities if q.estimate]
    if estimates:
        named = [escape(q.label) + (f": {escape(citation_of(q))}" if citation_of(q) else "") for q in estimates]
        parts.append(f"{ESTIMATE_MARK} model estimates under the stated assumptions: " + "; ".join(named) + ".")
    if derived is not None and derived.intervals:
        parts.append(f"Beneath each value: distance to the 16th and 84th percentiles of {derived.samples} Monte "
                     f"Carlo draws (seed {derived.seed}).")
    return " ".join(parts)


def table_widget(frame: pd.DataFrame, quantities, frozen=("planet",), height: int | None = None,
                 selectable=1) -> pn.widgets.Tabulator:
    """A read-only table of pre-formatted cells, label columns frozen, wrapped headings, no sorting."""
    options = {"height": height} if height else {}
    return pn.widgets.Tabulator(
        frame, disabled=True, show_index=False, selectable=selectable, sortable=False,
        frozen_columns=[c for c in frozen if c in frame.columns], layout="fit_data_table",
        titles=headings(quantities), header_tooltips=descriptions(quantities),
        formatters={q.key: {"type": "html"} for q in quantities if q.kind != "label"},
        text_align={q.key: "right" for q in quantities if q.kind in ("float", "int")},
        header_align={q.key: "right" for q in quantities if q.kind in ("float", "int")},
        stylesheets=[TABLE_CSS], sizing_mode="stretch_width", **options)


def link_selection(table: pn.widgets.Tabulator, app, names_of) -> callable:
    """Two-way link between a table's selected row and ``app.selected``.

    ``names_of()`` returns the planet name of each row, in row order.
    Returns the function that puts ``app.selected`` into the table; the view
    calls it after it has replaced the table's rows.
    """
    def from_table(event):
        if event.new:
            names = names_of()
            row = event.new[0]
            if 0 <= row < len(names) and names[row] in app.derived.planet_names:
                app.selected = str(names[row])

    def to_table(*_):
        names = list(names_of())
        wanted = [names.index(app.selected)] if app.selected in names else []
        if table.selection != wanted:
            table.selection = wanted

    table.param.watch(from_table, "selection")
    return to_table
