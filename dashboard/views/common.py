"""Pieces shared by the views: the view base class, waiting while hidden, selection, text helpers.

Every view is a small ``param.Parameterized`` object holding its app; its
methods depend on the app's state (``@param.depends("app.derived", ...,
watch=True)``), compute plain data from it and send that data to the
layers of its HoloViews plots (:mod:`.plotting`) and to its tables, which
patch the page in place. In a served page a view whose tab is hidden waits
(:func:`while_shown`) and catches up when its tab is opened.
"""

from __future__ import annotations

import contextlib
import functools
import html
import math
import re
import weakref

import holoviews as hv
import numpy as np
import panel as pn
import param

#: what a missing, infinite or undefined number shows as
MISSING = "\u2014"
#: a number format as the views write them: "0.000", "+0.00000", "0", "0.000e"
_NUMBER_FORMAT = re.compile(r"(\+?)0(?:\.(0+))?(e?)")
#: a note beneath a plot (never drawn over the data)
NOTE_STYLE = {"font-size": "12px", "color": "#5a6270", "line-height": "1.35"}


#: the documents in which a batch of changes (:func:`one_batch`) is being collected
_BATCHING: weakref.WeakSet = weakref.WeakSet()


@contextlib.contextmanager
def one_batch(doc=None):
    """Send the changes made in the block to the browser together, the page's plots holding their paint.

    Inside ``pn.io.hold(freeze=True)``: in a served session the changes reach
    the browser as one patch, and the document's model graph is walked once
    (each HoloViews plot update freezes it and, on leaving, Bokeh walks every
    model of the document again). Elsewhere the block just runs.

    Bokeh's client sets a glyph's new data asynchronously, while the rest of
    the patch is applied; a later change of the same patch that alters the
    layout (a text, a select's options, the header) makes the page repaint
    every plot at once, and a glyph caught between its old and new data fails
    to paint when its length changed (a text glyph with a colour per label,
    polygons fewer than before). The error ends the patch: every change after
    it (the message of a loaded file, say) never reaches the page. So the
    outermost batch of a served page first sets ``hold_render`` on every plot
    of the page and releases them in a message of their own once the patch
    has been applied: the plots paint once, from their new data.
    """
    doc = doc or pn.state.curdoc
    served = doc is not None and getattr(doc, "session_context", None) is not None
    if not served or doc in _BATCHING or doc.callbacks.hold_value is not None:
        with pn.io.hold(doc, freeze=True):
            yield
        return
    from bokeh.models import Plot

    held = [model for model in doc.models if isinstance(model, Plot) and not model.hold_render]
    _BATCHING.add(doc)
    try:
        with pn.io.hold(doc, freeze=True):
            for plot in held:
                plot.hold_render = True
            yield
    finally:
        _BATCHING.discard(doc)
        with pn.io.hold(doc):
            for plot in held:
                plot.hold_render = False


def batched(method):
    """Run a method that changes Bokeh models as :func:`one_batch` (one message, plots held).

    In a served session this also makes the changes safe when the call comes
    from a Panel event handler that does not hold the document lock (a
    table's selection, for instance); elsewhere it only calls the method.
    """
    @functools.wraps(method)
    def wrapper(*args, **kwargs):
        with one_batch():
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


class View(param.Parameterized):
    """A view of one app (one browser session or notebook cell), shown in the tab named ``title``.

    Subclasses build their plots and tables in ``__init__`` and follow the
    app through ``@param.depends("app.<parameter>", watch=True)`` methods;
    ``panel()`` gives the live Panel object and ``figure(backend)`` the plain
    HoloViews objects of the current state (for snapshots and static figures).
    """

    title = "View"
    app = param.Parameter(default=None, precedence=-1, doc="The app (one session) this view shows")

    def __init__(self, app, **params):
        super().__init__(app=app, **params)

    @property
    def tab(self) -> str:
        return self.title

    def colours(self, names) -> list[str]:
        """The session's colours of planets ``names``."""
        return self.app.colours.colours(names)

    def panel(self):
        raise NotImplementedError

    def figure(self, backend: str | None = None):
        """The view's plots as plain HoloViews objects of the current state (styled for ``backend`` if given)."""
        raise NotImplementedError


def select_on_tap(app, dynamic_map, names_of) -> hv.streams.Selection1D:
    """Select the planet of the glyph tapped in ``dynamic_map`` (``names_of()``: the planet of each row)."""
    stream = hv.streams.Selection1D(source=dynamic_map)

    def tapped(index):
        if index:
            names = list(names_of())
            row = int(index[0])
            if 0 <= row < len(names) and names[row] in app.derived.planet_names:
                app.selected = str(names[row])

    stream.add_subscriber(tapped)
    return stream


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


def interval(derived, table: str, key: str):
    """The (16th, 84th) percentile arrays of ``derived.<table>[key]``; None without Monte Carlo draws."""
    found = (derived.intervals or {}).get(table, {}).get(key) if derived is not None and derived.intervals else None
    if found is None:
        return None
    lo, hi = found
    return np.asarray(lo, dtype=float), np.asarray(hi, dtype=float)


def interval_caption(derived) -> str:
    """What the drawn ranges are (empty without Monte Carlo draws)."""
    if derived is None or not derived.intervals:
        return ""
    return (f"16th\u201384th percentiles of {derived.samples} Monte Carlo draws "
            f"(seed {derived.seed}; model estimates, not measurements)")


def span_texts(lo, hi, digits: int = 4, decimals: int | None = None) -> list[str]:
    """"lo\u2013hi" of each interval, to ``digits`` significant digits or, if given, ``decimals``
    places (as a nominal value beside it is shown); a dash where missing."""
    def text(x):
        return fmt(x, digits) if decimals is None else f"{x:.{decimals}f}"
    return ["\u2014" if not (math.isfinite(a) and math.isfinite(b)) else f"{text(a)}\u2013{text(b)}"
            for a, b in zip(as_floats(lo), as_floats(hi))]


def note(text: str = "", **options) -> pn.pane.HTML:
    """A note pane beneath a plot (notes are never drawn over data)."""
    return pn.pane.HTML(text, styles=NOTE_STYLE, sizing_mode="stretch_width", margin=(2, 12), **options)


def section(text: str = "") -> pn.pane.HTML:
    """A title above a table or plot; ``text`` is already escaped (free text must be)."""
    from .look import SECTION_CSS

    return pn.pane.HTML(f"<h3 class='od-table-title'>{text}</h3>" if text else "", stylesheets=[SECTION_CSS],
                        sizing_mode="stretch_width", margin=(6, 12, 0, 12))


def set_section(pane: pn.pane.HTML, text: str) -> None:
    """Change the title of a :func:`section` pane (``text`` already escaped)."""
    pane.object = f"<h3 class='od-table-title'>{text}</h3>"
