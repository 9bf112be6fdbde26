"""Plots made of HoloViews layers: built from plain data, live through Bokeh, static through matplotlib.

A view describes each plot as named *layers*. A layer is a pure function
from a small dictionary of plain data (numpy arrays, lists of text) to a
HoloViews element carrying no backend options; the elements of a plot are
told apart by their ``group`` (named after the view, so no other plot in
the process shares them). The look lives apart, per backend
(:class:`Styles`), so the same elements render live through Bokeh and to a
static file through matplotlib::

    hv.save(view.figure("matplotlib"), "flux.png", backend="matplotlib")

:class:`LayeredPlot` shows a plot live: each layer is an ``hv.DynamicMap``
over its own ``hv.streams.Pipe``, and :meth:`LayeredPlot.update` sends new
data only to the layers whose data changed, triggering them together, so
HoloViews patches the data of those glyphs in place (one document change)
and leaves the other layers alone. :meth:`LayeredPlot.figure` gives the same
layers as plain elements for the current data.

Speed: at every update HoloViews walks every layer of the plot (ranges,
extents, options), about 2-5 ms a layer here whether it changed or not, so
plots keep few layers, dimensions carry explicit ranges (:func:`extent`:
HoloViews then skips scanning their data) and the looks are registered
once as the defaults of the layers' groups rather than applied to each new
element.
"""

from __future__ import annotations

import re
import functools
import inspect
import operator
from collections.abc import Callable

import holoviews as hv
import numpy as np

#: the backends a plot is styled for
BACKENDS = ("bokeh", "matplotlib")
#: text sizes of the plots [pt]: numbers read the same by both backends (HoloViews lets options given to one
#: element for one backend reach its other backends too, so no option may hold a value only one can read)
FONT_SIZES = {"title": 10, "labels": 9, "xticks": 8.5, "yticks": 8.5}


def load_backend(backend: str) -> None:
    """Make HoloViews' ``backend`` plotting classes and options available, leaving the current backend as it is."""
    hv.renderer(backend)


def same(old, new) -> bool:
    """True when two layers' data are equal (arrays by value, NaN equal to NaN); False when unsure."""
    if old is new:
        return True
    if isinstance(old, dict) and isinstance(new, dict):
        return old.keys() == new.keys() and all(same(old[k], new[k]) for k in old)
    if isinstance(old, (list, tuple)) and isinstance(new, (list, tuple)):
        if len(old) != len(new):
            return False
        if all(isinstance(x, str) for x in old) and all(isinstance(x, str) for x in new):
            return list(old) == list(new)
        return all(same(a, b) for a, b in zip(old, new))
    try:
        a, b = np.asarray(old), np.asarray(new)
    except (TypeError, ValueError):
        return False
    if a.shape != b.shape or a.dtype.kind != b.dtype.kind:
        return False
    if a.dtype.kind in "fc":
        return bool(np.array_equal(a, b, equal_nan=True))
    if a.dtype.kind == "O":
        return all(same(x, y) for x, y in zip(a.ravel().tolist(), b.ravel().tolist()))
    return bool(np.array_equal(a, b))


def extent(*arrays) -> tuple[float, float]:
    """(smallest, largest) finite value of ``arrays``; (NaN, NaN) when there is none.

    Layers give their dimensions this range: HoloViews then takes it as given
    instead of scanning the data of every layer at every update.
    """
    values = np.concatenate([np.asarray(a, dtype=float).ravel() for a in arrays]) if arrays else np.zeros(0)
    values = values[np.isfinite(values)]
    return (float(values.min()), float(values.max())) if values.size else (np.nan, np.nan)


def texts(values) -> np.ndarray:
    """A column of text as a numpy string array, also when empty (an empty list would read as numbers,
    and a layer whose text column reads as numbers breaks the colour mapping of the other layers)."""
    return np.asarray(list(values), dtype=str)


def drawn(element, shown: bool):
    """``element``, hidden when ``shown`` is false.

    A layer keeps its name (its legend entry) for good: HoloViews makes the
    legend's entries from the first frame of each layer. A hidden layer's
    entry leaves the legend, so the legend lists only what is drawn.
    """
    return element if shown else element.opts(visible=False)


def with_a_row(columns: dict, colour_keys=("colour",), colour: str = "#000000") -> dict:
    """``columns`` of a marker layer as they are, or, when they hold no row, one row that draws nothing
    (NaN numbers, empty text, ``colour`` in ``colour_keys``), for a layer hidden with :func:`drawn`.

    A Bokeh marker layer that starts with no rows and is later shown with
    data can fail to draw its legend entry (bokeh 3.9: "Offset is outside
    the bounds of the DataView" in the browser, which drops the rest of that
    update); one hidden row avoids it.
    """
    if any(len(v) for v in columns.values()):
        return columns
    return {k: texts([colour]) if k in colour_keys
            else texts([""]) if np.asarray(v).dtype.kind in "USO" else np.full(1, np.nan)
            for k, v in columns.items()}
def bar_colours(face: str, edge: str | None = None, width: str | None = None):
    """A matplotlib hook that gives each bar of a ``Bars`` element the colours of its own row.

    HoloViews' matplotlib backend draws the bars of one element as one
    artist whose style it takes from the first bar only, so a colour given
    as ``hv.dim("colour")`` would paint every bar alike; this hook sets each
    drawn bar's face (and edge colour and line width, when named) from the
    columns ``face``, ``edge`` and ``width``, matching bars to rows by the
    category under them.
    """
    def hook(plot, element):
        axis = plot.handles["axis"]
        categories = [str(k) for k in element.dimension_values(0)]
        columns = {name: dict(zip(categories, element.dimension_values(name)))
                   for name in (face, edge, width) if name is not None}
        ticks = np.asarray(axis.get_xticks(), dtype=float)
        labels = [label.get_text() for label in axis.get_xticklabels()]
        if not len(ticks) or len(ticks) != len(labels):
            return
        for container in plot.handles.get("artist") or []:
            for patch in getattr(container, "patches", []):
                centre = patch.get_x() + 0.5 * patch.get_width()
                category = labels[int(np.argmin(np.abs(ticks - centre)))]
                if category not in columns[face]:
                    continue
                patch.set_facecolor(columns[face][category])
                if edge is not None:
                    patch.set_edgecolor(columns[edge][category])
                if width is not None:
                    patch.set_linewidth(float(columns[width][category]))

    hook.__name__ = f"bar_colours_{face}"
    return hook


def plain_log_ticks(plot, element):
    """A matplotlib hook: the tick labels of the plot's logarithmic axes as plain numbers (see
    :func:`plain_log_axes`)."""
    plain_log_axes(plot.handles["axis"])


def plain_log_axes(axes) -> None:
    """Write the tick labels of the logarithmic axes of matplotlib ``axes`` as plain numbers (0.5, 2, 100,
    1e-05), major and minor alike, instead of powers of ten (which matplotlib writes as formulas)."""
    from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter

    def plain(value, _position):
        return f"{value:g}"

    for which in (axes.xaxis, axes.yaxis):
        if which.get_scale() != "log":
            continue
        low, high = sorted(which.get_view_interval())
        decades = np.log10(high / low) if low > 0 and high > 0 else np.inf
        which.set_major_formatter(FuncFormatter(plain))
        if decades < 2.0:   # few decades: label the 2 and 5 between the powers of ten too
            which.set_minor_locator(LogLocator(subs=(2.0, 5.0)))
            which.set_minor_formatter(FuncFormatter(plain))
        else:
            which.set_minor_formatter(NullFormatter())


def braced_tooltips(tooltips):
    """Hover tooltips with every ``@field`` written ``@{field}``.

    HoloViews braces each ``@name`` of a dimension it finds in a tooltip, also
    at the start of a longer field (``@a_range`` becomes ``@{a}_range``: the
    value of ``a`` followed by "_range"); a field already braced is left alone.
    """
    return [(label, re.sub(r"@(?!\{)(\w+)", r"@{\1}", template)) for label, template in tooltips]


class Styles:
    """The look of a plot's elements per backend.

    Each backend maps ``"Element.Group"`` to the options of those elements;
    ``frame`` maps a backend to the options of the plot as a whole (size,
    axes, legend, title), which every element carries and the overlay takes
    from them::

        Styles(bokeh={"Points.FluxPlanet": {"size": 9}}, matplotlib={"Points.FluxPlanet": {"s": 60}},
               frame={"bokeh": {"height": 400}, "matplotlib": {"fig_size": 200}})

    The options are registered once per process as the defaults of those
    groups (:meth:`register`): every session draws the same elements the
    same way, and a new element needs no options of its own at each update.
    """

    def __init__(self, frame: dict | None = None, **by_backend: dict):
        unknown = (set(by_backend) | set(frame or {})) - set(BACKENDS)
        if unknown:
            raise ValueError(f"unknown backend(s) {sorted(unknown)}")
        self._by_backend, self._frame = by_backend, dict(frame or {})
        self._registered: set[str] = set()

    def options(self, backend: str) -> list:
        """The ``hv.opts`` specifications of ``backend`` (its plotting classes are loaded first)."""
        load_backend(backend)
        frame = self._frame.get(backend, {})
        made = []
        for spec, options in self._by_backend.get(backend, {}).items():
            element, _, group = spec.partition(".")
            plot_class = hv.Store.registry[backend][getattr(hv, element)]
            accepted = {k: v for k, v in frame.items() if k in plot_class.param}   # annotations take fewer
            if "hover_tooltips" in options:
                options = {**options, "hover_tooltips": braced_tooltips(options["hover_tooltips"])}
            made.append(getattr(hv.opts, element)(group, backend=backend, **{**accepted, **options}))
        return made

    def overlay_options(self, backend: str) -> dict:
        """The frame options of ``backend`` that an overlay takes, for the overlay of a figure: matplotlib reads
        some of them (the legend's place) from the overlay only, and an overlay holding overlays (an
        ``NdOverlay`` of curves) takes none from its elements."""
        load_backend(backend)
        overlay = hv.Store.registry[backend][hv.Overlay]
        return {k: v for k, v in self._frame.get(backend, {}).items() if k in overlay.param}

    def register(self, backend: str) -> None:
        """Make these options ``backend``'s defaults for the elements of their groups (once per process)."""
        if backend not in self._registered:
            options = self.options(backend)
            if options:
                hv.opts.defaults(*options, backend=backend)
            self._registered.add(backend)


class LayeredPlot:
    """One plot of a live view: a ``DynamicMap`` per layer, each over its own ``Pipe``.

    Parameters
    ----------
    layers : dict
        Layer name -> function(data) -> HoloViews element, in drawing order. A
        function that also takes ``backend`` is told which backend the element
        is for (per-element options that the data decide, such as one colour
        per curve of an overlay).
    styles : Styles
        The look of the layers' groups.
    data : dict
        The first data of every layer.
    """

    def __init__(self, layers: dict[str, Callable], styles: Styles, data: dict):
        missing = set(layers) - set(data)
        if missing:
            raise ValueError(f"no first data for layer(s) {sorted(missing)}")
        self.layers, self.styles = dict(layers), styles
        self.data = {name: data[name] for name in layers}
        # each pipe's parameter carries its layer's name: streams triggered together must not share names
        self.pipes = {name: hv.streams.Pipe(data=self.data[name]).rename(data=name) for name in layers}
        self.dynamic = {name: hv.DynamicMap(functools.partial(self._render, name), streams=[self.pipes[name]])
                        for name in layers}
        self._live = None

    def _build(self, name: str, data, backend: str):
        """The layer's element (None: the layer draws nothing with that backend)."""
        layer = self.layers[name]
        if "backend" in inspect.signature(layer).parameters:
            return layer(data, backend=backend)
        return layer(data)

    def _render(self, name: str, **contents):
        return self._build(name, contents[name], "bokeh")

    def live(self):
        """The overlay of the layers' DynamicMaps (built once)."""
        if self._live is None:
            self.styles.register("bokeh")
            self._live = functools.reduce(operator.mul, self.dynamic.values())
        return self._live

    def update(self, **data) -> list[str]:
        """Send new data to the named layers; only the changed ones are triggered (together). Returns their names."""
        changed = [name for name, value in data.items() if not same(self.data[name], value)]
        for name in changed:
            self.data[name] = data[name]
            self.pipes[name].update(data=data[name])
        if changed:
            hv.streams.Stream.trigger([self.pipes[name] for name in changed])
        return changed

    def figure(self, backend: str | None = None):
        """The plot as plain HoloViews elements for the current data (``backend``'s look registered if given)."""
        if backend is not None:
            self.styles.register(backend)
        elements = [self._build(name, self.data[name], backend or "bokeh") for name in self.layers]
        overlay = hv.Overlay([element for element in elements if element is not None])
        return overlay.opts(**self.styles.overlay_options(backend), backend=backend) if backend else overlay
