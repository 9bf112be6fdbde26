"""Pieces shared by the views: figures, tables, tap-to-select and text helpers.

Every view builds its Bokeh figures and data sources once per session and
afterwards only replaces the data of those sources (and ranges or tick
labels), so an edit patches the page in place instead of rebuilding a
figure; tables are Panel ``Tabulator`` widgets whose ``value`` is replaced.
"""

from __future__ import annotations

import functools
import html
import math
import re

import numpy as np
import pandas as pd
import panel as pn
from bokeh.models import ColumnDataSource, CustomJSHover, HTMLTemplateFormatter, HoverTool
from bokeh.plotting import figure

#: tools of every plot; "tap" picks a planet where the view allows it
TOOLS = "pan,wheel_zoom,box_zoom,reset,save"
#: shared look of plot titles and axis labels
TITLE_FONT_SIZE = "13px"
AXIS_LABEL_FONT_SIZE = "12px"


def batched(method):
    """Run a method that changes Bokeh models inside ``pn.io.hold()``.

    In a served session this sends the changes as one message and makes them
    safe when the call comes from a Panel event handler that does not hold
    the document lock (a table's selection, for instance); elsewhere it only
    calls the method.
    """
    @functools.wraps(method)
    def wrapper(*args, **kwargs):
        with pn.io.hold():
            return method(*args, **kwargs)

    return wrapper


def while_shown(method):
    """Let a view's method wait while the view's tab is hidden in a served page.

    The view names its tab in ``tab``. When ``app.tab_hidden(tab)`` the call
    is recorded (once per method, with no arguments: every such method reads
    the app's current state) through ``app.mark_stale`` and runs when the tab
    is opened, before Panel builds or re-attaches the tab's models, so the
    browser receives the tab already up to date. In a notebook, a snapshot or
    a test every call runs at once.
    """
    @functools.wraps(method)
    def wrapper(self, *args, **kwargs):
        if self.app.tab_hidden(self.tab):
            self.app.mark_stale(self.tab, (id(self), method.__name__), functools.partial(wrapper, self))
            return None
        return method(self, *args, **kwargs)

    return wrapper


def follow(app, update, on_select, inputs=("derived",)) -> None:
    """Wire a view to its app: ``update`` on every change of ``inputs``, ``on_select``
    when the selected planet changes, and one ``update`` now."""
    app.param.watch(update, list(inputs))
    app.param.watch(on_select, "selected")
    update()


def _same_column(old, new) -> bool:
    """True when two columns hold the same values (NaN equal to NaN); False when unsure."""
    if old is new:
        return True
    try:
        a, b = np.asarray(old), np.asarray(new)
        if a.shape != b.shape or a.dtype.kind != b.dtype.kind:
            return False
        return bool(np.array_equal(a, b, equal_nan=a.dtype.kind in "fc"))
    except (TypeError, ValueError):
        return False


def replace_data(source: ColumnDataSource, data: dict) -> None:
    """Give ``source`` the columns of ``data``, sending the browser only the columns that changed.

    When the column names or the row count change, the whole data is
    replaced; otherwise only the columns whose values differ are updated (in
    one change), and nothing is sent when none does.
    """
    old = source.data
    lengths = {len(v) for v in data.values()}
    if set(old) != set(data) or len(lengths) > 1 or {len(v) for v in old.values()} != lengths:
        source.data = data
        return
    changed = {k: v for k, v in data.items() if not _same_column(old[k], v)}
    if changed:
        old.update(changed)


def new_figure(title: str, x_label: str, y_label: str, tap: bool = False, **options) -> figure:
    """A Bokeh figure with the dashboard's tools, fonts and axis labels (labels carry units)."""
    options.setdefault("height", 420)
    if "width" not in options and "frame_width" not in options:
        options.setdefault("sizing_mode", "stretch_width")
    fig = figure(title=title, tools=TOOLS + (",tap" if tap else ""), toolbar_location="above", **options)
    fig.title.text_font_size = TITLE_FONT_SIZE
    fig.xaxis.axis_label = x_label
    fig.yaxis.axis_label = y_label
    for axis in (*fig.xaxis, *fig.yaxis):
        axis.axis_label_text_font_size = AXIS_LABEL_FONT_SIZE
        axis.axis_label_text_font_style = "normal"
    fig.toolbar.logo = None
    return fig


#: a numbro-style number format as the views write them: "0.000", "+0.00000", "0", "0.000e"
_NUMBER_FORMAT = re.compile(r"(\+?)0(?:\.(0+))?(e?)")
#: JavaScript (the body of a function of ``v``, a finite number, and ``format``) writing ``v`` as the
#: format says, with no sign on a number written as zero ("-0.00" is "0.00")
_WRITE_NUMBER_JS = """
const m = /^(\\+?)0(?:\\.(0+))?(e?)$/.exec(format || "");
if (m === null) return String(v);
const digits = m[2] ? m[2].length : 0;
let text = m[3] ? v.toExponential(digits) : v.toFixed(digits);
if (Number(text) === 0) text = text.replace("-", "");
return (m[1] && text.charAt(0) !== "-") ? "+" + text : text;
"""
#: what a missing, infinite or undefined number shows as
MISSING = "\u2014"
_TOOLTIP_FIELD = re.compile(r"@(\w+)\{([^}]*)\}")


def finite_number_hover() -> CustomJSHover:
    """A tooltip formatter: numbers as their format says, a dash for a missing, NaN or infinite one."""
    return CustomJSHover(code=f"""
const v = (value === null || value === undefined || value === "") ? NaN : Number(value);
if (!isFinite(v)) return "{MISSING}";
return ((v, format) => {{{_WRITE_NUMBER_JS}}})(v, format);
""")


def finite_number_cell(fmt: str) -> HTMLTemplateFormatter:
    """A table-cell formatter writing numbers as ``fmt`` (see :data:`_NUMBER_FORMAT`), a dash for a missing,
    NaN or infinite one (a plain number format shows "Infinity", "NaN" and "-0.00")."""
    if not _NUMBER_FORMAT.fullmatch(fmt):
        raise ValueError(f"unsupported number format {fmt!r}")
    return HTMLTemplateFormatter(template=(
        "<%- ((v, format) => { if (typeof v !== 'number' || !isFinite(v)) return '" + MISSING + "';"
        + _WRITE_NUMBER_JS.replace("\n", " ") + "})(value, '" + fmt + "') %>"))


def add_hover(fig, renderers, tooltips) -> HoverTool:
    """Attach a hover tool showing ``tooltips`` (label, "@column{format}") for ``renderers``.

    Every formatted number ("@column{0.00}") is written by :func:`finite_number_hover`, so that a
    missing or infinite value shows as a dash, never as "NaN" or "Infinity".
    """
    fields = sorted({m.group(1) for _, text in tooltips for m in _TOOLTIP_FIELD.finditer(text)})
    writer = finite_number_hover()
    tool = HoverTool(renderers=list(renderers), tooltips=list(tooltips),
                     formatters={f"@{field}": writer for field in fields})
    fig.add_tools(tool)
    return tool


def empty_source(*columns: str) -> ColumnDataSource:
    """A data source with the named, empty columns."""
    return ColumnDataSource({c: [] for c in columns})


def calm_selection(renderer) -> None:
    """Keep a glyph's look when Bokeh marks it selected; the app draws its own highlight."""
    renderer.selection_glyph = None
    renderer.nonselection_glyph = None
    renderer.muted_glyph = None


def watch_taps(source: ColumnDataSource, app, column: str = "name") -> None:
    """Select the planet named in ``column`` of the glyph of ``source`` the user taps.

    The selection is cleared again right away so that tapping the same glyph
    a second time (after choosing another planet elsewhere) still counts.
    """
    def changed(attr, old, new):
        if new:
            row = int(new[0])
            source.selected.indices = []
            names = source.data[column]
            if row < len(names):
                app.selected = str(names[row])

    source.selected.on_change("indices", changed)


def escape(text) -> str:
    """HTML-escaped text (names and notes are free text and may contain markup)."""
    return html.escape(str(text), quote=True)


def fmt(value, digits: int = 4) -> str:
    """A number with ``digits`` significant digits; an em dash for a missing or infinite value; never "-0"."""
    if value is None:
        return MISSING
    value = float(value)
    if not math.isfinite(value):
        return MISSING
    return f"{value + 0.0 if value else 0.0:.{digits}g}"


def number_texts(values, fmt: str = "0.00") -> list[str]:
    """Each value written as the tooltip format ``fmt`` would write it, a dash where missing or infinite.

    For tooltip columns that may hold NaN: a hover tool writes NaN as "NaN" before any formatter sees it.
    """
    found = _NUMBER_FORMAT.fullmatch(fmt)
    if not found:
        raise ValueError(f"unsupported number format {fmt!r}")
    plus, places, exponent = found.group(1), len(found.group(2) or ""), found.group(3)
    out = []
    for value in as_floats(values):
        if not math.isfinite(value):
            out.append(MISSING)
            continue
        text = f"{value:.{places}e}" if exponent else f"{value:.{places}f}"
        if float(text) == 0:
            text = text.lstrip("-")
        out.append(f"+{text}" if plus and not text.startswith("-") else text)
    return out


def finite_or_nan(values) -> np.ndarray:
    """``values`` as floats with every infinity (and None) turned into NaN, which tables show as a dash."""
    out = as_floats(values)
    out[~np.isfinite(out)] = np.nan
    return out


def as_floats(values) -> np.ndarray:
    """Values as a float array (None becomes NaN)."""
    return np.array([np.nan if v is None else v for v in np.asarray(values, dtype=object).ravel()], dtype=float)


def table_widget(columns: dict, formats: dict | None = None, height: int = 280, **options) -> pn.widgets.Tabulator:
    """A read-only, single-selection table; ``formats`` maps a column to a Bokeh number format."""
    formatters = {name: finite_number_cell(f) for name, f in (formats or {}).items()}
    options.setdefault("selectable", 1)
    return pn.widgets.Tabulator(pd.DataFrame(columns), disabled=True, show_index=False,
                                formatters=formatters, layout="fit_data_table", height=height,
                                sizing_mode="stretch_width", **options)


def link_table_selection(table: pn.widgets.Tabulator, app, names_of):
    """Two-way link between a table's selected row and ``app.selected``.

    ``names_of()`` returns the planet name of every row, in row order.
    Returns the function that puts ``app.selected`` into the table; the view
    calls it again after it has replaced the table's rows.
    """
    def from_table(event):
        if event.new:
            names = names_of()
            row = event.new[0]
            if 0 <= row < len(names):
                app.selected = str(names[row])

    def to_table(*_):
        names = list(names_of())
        wanted = [names.index(app.selected)] if app.selected in names else []
        if table.selection != wanted:
            table.selection = wanted

    table.param.watch(from_table, "selection")
    app.param.watch(to_table, "selected")
    return to_table


# -- Monte Carlo intervals ------------------------------------------------------------
def interval(derived, table: str, key: str):
    """The (16th, 84th) percentile arrays of ``derived.<table>[key]``; None without Monte Carlo draws."""
    found = (derived.intervals or {}).get(table, {}).get(key) if derived is not None else None
    if found is None:
        return None
    lo, hi = found
    return np.asarray(lo, dtype=float), np.asarray(hi, dtype=float)


def interval_caption(derived) -> str:
    """What the drawn ranges are (empty without Monte Carlo draws)."""
    if derived is None or not derived.intervals:
        return ""
    return (f"16th\u201384th percentiles of {derived.samples} Monte Carlo draws "
            f"\n(seed {derived.seed}; model estimates, not measurements)")


def range_texts(values, lo, hi, digits: int = 3) -> list[str]:
    """"+err \u2212err" of each value from its interval, ``digits`` significant digits; a dash where missing."""
    out = []
    for v, a, b in zip(as_floats(values), as_floats(lo), as_floats(hi)):
        if not all(math.isfinite(x) for x in (v, a, b)):
            out.append("\u2014")
        else:
            out.append(f"+{fmt(max(b - v, 0.0), digits)} \u2212{fmt(max(v - a, 0.0), digits)}")
    return out


def span_texts(lo, hi, digits: int = 4, decimals: int | None = None) -> list[str]:
    """"lo\u2013hi" of each interval, to ``digits`` significant digits or, if given, ``decimals``
    places (as a nominal value beside it is shown); a dash where missing."""
    def text(x):
        return fmt(x, digits) if decimals is None else f"{x:.{decimals}f}"
    return ["\u2014" if not (math.isfinite(a) and math.isfinite(b)) else f"{text(a)}\u2013{text(b)}"
            for a, b in zip(as_floats(lo), as_floats(hi))]


def planet_table(app, formats: dict, height: int = 300):
    """A table with one row per planet (column "planet"), its selection linked to ``app.selected``.

    Returns the table and the function that re-applies the selection after
    the view has replaced the rows.
    """
    table = table_widget({}, formats=formats, height=height)
    sync = link_table_selection(table, app, lambda: list(table.value["planet"]) if "planet" in table.value else [])
    return table, sync
