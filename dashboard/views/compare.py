"""Compare: every derived quantity that differs between the pinned reference state and the current one.

One row per changed quantity: the pinned and the current value with their
16th-84th percentile intervals (rounded by the Particle Data Group's rule),
the change with its sign, and the change in units of the combined
uncertainty of the two states (:mod:`orbitdeck.models.engine.compare`).
The table is plain HTML, so a snapshot or a print shows it as the page does.
"""

from __future__ import annotations

import math

import panel as pn

from orbitdeck.models.engine.compare import Change, compare
from orbitdeck.models.files.rounding import from_interval

from .common import escape, while_shown

#: rows shown at most (a change of the star's mass changes nearly every row of a large sky table)
MAX_ROWS = 400
TABLE_TITLES = {"system": "system", "star": "star", "planets": "planet", "pairs": "pair", "triples": "triple",
                "skies": "sky"}
_STYLE = ("<style>.od-compare{border-collapse:collapse;font-size:13px}"
          ".od-compare th,.od-compare td{border-bottom:1px solid #ddd;padding:3px 8px;text-align:right;"
          "vertical-align:middle}.od-compare th{background:#eef1f5;position:sticky;top:0}"
          ".od-compare td.od-left,.od-compare th.od-left{text-align:left}.od-up{color:#0b5394}.od-down{color:#a0410d}"
          ".od-big{font-weight:bold}</style>")


def value_html(quantity, value, interval) -> str:
    """A value with its interval as HTML (digits and fixed words only: no user text)."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "\u2014"
    if quantity.kind == "bool":
        return "yes" if value else "no"
    if quantity.kind in ("label", "int") or isinstance(value, str):
        return escape(value)
    if interval is not None:
        rounded = from_interval(float(value), *interval)
        if rounded.plus is not None:
            return rounded.html()
    return escape(format(float(value), quantity.fmt))


def change_html(change: Change) -> tuple[str, str]:
    """The change and the change in units of the combined uncertainty, signs always written."""
    if change.difference is None:
        return ("new" if change.old is None else "gone" if change.new is None else "changed"), "\u2014"
    unit = change.quantity.unit_label or change.quantity.unit
    difference = f"{change.difference:+.3g}".replace("-", "\u2212") + (f" {escape(unit)}" if unit else "")
    if change.sigmas is None:
        return difference, "\u2014"
    css = "od-up" if change.sigmas > 0 else "od-down"
    if abs(change.sigmas) >= 1.0:
        css += " od-big"
    sigmas = f"{change.sigmas:+.2f}".replace("-", "\u2212")
    return difference, f'<span class="{css}">{sigmas}</span>'


def comparison_html(pinned, current, label: str) -> str:
    """The comparison of ``current`` with ``pinned`` (pinned as ``label``) as an HTML block."""
    changes = compare(pinned, current)
    head = (f'<div style="font-size:13px;margin:4px 0">Reference pinned: <b>{escape(label)}</b>. '
            f"{len(changes)} derived {'quantity differs' if len(changes) == 1 else 'quantities differ'} "
            "from it. <i>Change / combined uncertainty</i> is (current \u2212 pinned) / "
            "\u221a(s<sub>pinned</sub>\u00b2 + s<sub>current</sub>\u00b2), each s the side of that state's "
            "16th\u201384th percentile interval facing the other value (the states are treated as independent; "
            "it needs Monte Carlo uncertainties in both). All values are model estimates under the stated "
            "assumptions, not measurements.</div>")
    if not changes:
        return head + "<p>Nothing differs from the reference.</p>"
    rows = []
    for change in changes[:MAX_ROWS]:
        q = change.quantity
        difference, sigmas = change_html(change)
        rows.append(f'<tr data-key="{escape(change.table)}.{escape(q.key)}"><td class="od-left">'
                    f'{TABLE_TITLES[change.table]}</td><td class="od-left">{escape(change.row)}</td>'
                    f'<td class="od-left">{escape(q.heading)}</td>'
                    f"<td>{value_html(q, change.old, change.old_interval)}</td>"
                    f"<td>{value_html(q, change.new, change.new_interval)}</td>"
                    f"<td>{difference}</td><td>{sigmas}</td></tr>")
    more = len(changes) - MAX_ROWS
    tail = f"<p>and {more} more rows (not shown).</p>" if more > 0 else ""
    return (head + _STYLE + '<table class="od-compare"><thead><tr><th class="od-left">table</th>'
            '<th class="od-left">row</th><th class="od-left">quantity</th><th>pinned</th><th>current</th>'
            "<th>change</th><th>change / combined uncertainty</th></tr></thead><tbody>"
            + "".join(rows) + "</tbody></table>" + tail)


class CompareView:
    """The Compare tab: the pinned reference against the current state."""

    title = "Compare"
    tab = "Compare"

    def __init__(self, app):
        self.app = app
        self.body = pn.pane.HTML("", sizing_mode="stretch_width", margin=(0, 10))
        app.param.watch(self.update, ["derived", "pinned"])
        self.update()

    @while_shown
    def update(self, *_):
        app = self.app
        if app.pinned is None:
            self.body.object = ('<div style="font-size:13px;margin:8px 0">No reference is pinned. Use '
                                "<i>Pin this state as the reference</i> in the side area, then edit: this tab "
                                "lists every derived quantity that changed, old and new with their intervals, "
                                "and the change in units of the combined uncertainty.</div>")
            return
        self.body.object = comparison_html(app.pinned, app.derived, app.pinned_label)

    def panel(self):
        return self.body
