"""Neighbour skies: how large the star and each other planet can appear in every planet's sky.

A matrix observer x body of the largest apparent diameter (at the closest
approach of the two orbits, ``Derived.skies``), in units of the Moon's
diameter seen from Earth, on a logarithmic colour scale made for
colour-vision deficiency; for the selected observer a bar chart of the
same values against the Moon (with the 16th-84th percentiles when there
are draws) and the registry's sky table. These are geometric maxima on
fixed Keplerian orbits, not predictions of a given night. Below, the sky
from the selected planet at the app's time (:mod:`.sky_from`).
"""

from __future__ import annotations

import holoviews as hv
import numpy as np
import panel as pn
import param

from . import palette
from .common import (MISSING, View, as_floats, batched, escape, fmt, interval, interval_caption, note, number_texts,
                     section, select_on_tap, set_section, span_texts, while_shown)
from .plotting import FONT_SIZES, LayeredPlot, Styles, bar_colours, load_backend, texts
from .sky_from import SkyFromView
from .tables import caution_html, quantities_of, table_frame, table_widget

VIEW = "skies"
#: above this many planets the values are no longer printed inside the cells
MAX_PLANETS_WITH_CELL_TEXT = 12
STAR_FACTOR = "star"
MOON_DIM = hv.Dimension("moon_ratio", label="largest apparent diameter [Moon diameters from Earth]")


def _cell_text_colour(values, low: float, high: float) -> list[str]:
    """Black text on the light (high) end of the colour scale, white on the dark end."""
    span = np.log(high) - np.log(low) if high > low else 1.0
    t = (np.log(np.maximum(values, low)) - np.log(low)) / span
    return ["#000000" if v > 0.55 else "#ffffff" for v in t]


def _grid_dims(d):
    return [hv.Dimension("body", label="body seen", values=d["bodies"]),
            hv.Dimension("observer", label="observer (planet)", values=d["observers"])]


#: the cells' values for hovering, as text (a dash where missing): HoloViews hands a heat map's hover values to
#: the page already written out, so a tooltip's number format would not reach them
CELL_VDIMS = ["moon_text", "arcsec_text", "distance_text", "moon_range", "arcsec_range"]
BAR_VDIMS = ["moon_text", "arcsec_text", "distance_text", "moon_range"]
#: tooltip number formats of the texts of the cells and bars
HOVER_FORMATS = {"moon_text": "0.000", "arcsec_text": "0.0", "distance_text": "0.00000"}


def cells(d, backend: str = "bokeh"):
    if backend != "bokeh":
        return _numbered_cells(d, backend)
    columns = {k: d[k] for k in ("body", "observer", "moon_ratio", *CELL_VDIMS)}
    for k in ("body", "observer", *CELL_VDIMS):
        columns[k] = texts(columns[k])
    return hv.HeatMap(columns, _grid_dims(d), [MOON_DIM.clone(range=d["colour_range"]), *CELL_VDIMS],
                      group="SkiesMatrix", label="")


def _numbered_cells(d, backend: str):
    """The matrix for a static figure: every cell of the grid (NaN where a body is its own observer) at whole-
    number positions, named by tick labels. matplotlib's heat map labels text categories in the order of
    their dimension's values but lays the cells out in an order of its own, which puts values under the
    wrong names. A group of its own: options given to an element for one backend bring along the defaults
    its group has for the others (the live matrix's Bokeh colour bar options would reach matplotlib)."""
    load_backend(backend)
    bodies, observers = list(d["bodies"]), list(d["observers"])
    grid = np.full((len(observers), len(bodies)), np.nan)
    for body, observer, value in zip(d["body"], d["observer"], as_floats(d["moon_ratio"])):
        grid[observers.index(observer), bodies.index(body)] = value
    column, row = np.meshgrid(np.arange(len(bodies), dtype=float), np.arange(len(observers), dtype=float))
    return hv.HeatMap((column.ravel(), row.ravel(), grid.ravel()),
                      [hv.Dimension("body", label="body seen"), hv.Dimension("observer", label="observer (planet)")],
                      [MOON_DIM.clone(range=d["colour_range"])], group="SkiesMatrixFigure", label="").opts(
        xticks=list(enumerate(bodies)), yticks=list(enumerate(observers)), backend=backend)


def cell_texts(d, backend: str = "bokeh"):
    if backend != "bokeh":
        return None     # matplotlib writes the values into the cells itself (show_values)
    return hv.Labels((texts(d["body"]), texts(d["observer"]), texts(d["text"]), texts(d["text_colour"])), _grid_dims(d),
                     ["text", "text_colour"],
                     group="SkiesCellText")


def _cell_values(plot, element):
    """A matplotlib hook: the values written into the matrix's cells as the page writes them (two significant
    digits, white on the dark end of the colour scale, black on the light end)."""
    mesh = plot.handles.get("artist")
    for text in (plot.handles.get("annotations") or {}).values():
        try:
            value = float(text.get_text())
        except ValueError:
            continue     # a cell without a value ("-")
        red, green, blue, _ = mesh.cmap(mesh.norm(value))
        text.set_text(f"{value:.2g}")
        text.set_color("#000000" if 0.2126 * red + 0.7152 * green + 0.0722 * blue > 0.45 else "#ffffff")


def row(d, backend: str = "bokeh"):
    if backend != "bokeh":
        return None
    return hv.HeatMap((texts(d["body"]), texts(d["observer"]), np.ones(len(d["body"]))), _grid_dims(d), ["one"],
                      group="SkiesRow", label="")


def _body_dim(d):
    """The bodies seen, as categories given with the data (HoloViews would otherwise keep the categories of an
    earlier system on the axis once the error bars have been shown)."""
    return hv.Dimension("body", label="body seen", values=[str(b) for b in d["body"]])


def bars(d):
    columns = {k: d[k] for k in ("body", "moon_ratio", "colour", *BAR_VDIMS)}
    for k in ("body", "colour", *BAR_VDIMS):
        columns[k] = texts(columns[k])
    return hv.Bars(columns,
                   [_body_dim(d)],
                   [MOON_DIM.clone(range=d["y_range"]), "colour", *BAR_VDIMS],
                   group="SkiesBars", label="largest diameter")


def bar_errors(d):
    # never hidden (HoloViews does not show a Whisker again once hidden): a bar without a range is NaN, not drawn
    return hv.ErrorBars((texts(d["body"]), d["moon_ratio"], d["minus"], d["plus"]), [_body_dim(d)],
                        [MOON_DIM.clone(range=d["y_range"]), "minus", "plus"], group="SkiesBarRange",
                        label="16th\u201384th percentiles")


def moon_line(d):
    return hv.HLine(1.0, group="SkiesMoon")


MATRIX_LAYERS = {"cells": cells, "texts": cell_texts, "row": row}
BAR_LAYERS = {"bars": bars, "errors": bar_errors, "moon": moon_line}
MATRIX_TITLE = "Largest apparent diameter of each body in each planet's sky"
MATRIX_STYLES = Styles(
    frame={"bokeh": dict(responsive=True, height=470, toolbar="above", title=MATRIX_TITLE,
                         fontsize=FONT_SIZES),
           "matplotlib": dict(fig_size=220, aspect=1.3, title=MATRIX_TITLE)},
    bokeh={
        "HeatMap.SkiesMatrix": dict(cmap=palette.SKIES_CMAP, logz=True, colorbar=True, line_color="white",
                                    tools=["hover", "tap"], nonselection_alpha=1.0, selection_alpha=1.0,
                                    colorbar_opts={"title": "\u00d7 Moon's diameter from Earth"},
                                    hover_tooltips=[("observer", "@{observer}"), ("body", "@{body}"),
                                                    ("largest diameter", "@{moon_text} \u00d7 the Moon"),
                                                    ("16th\u201384th pct", "@{moon_range}"),
                                                    ("", "@{arcsec_text} arcsec"), ("", "@{arcsec_range} arcsec"),
                                                    ("closest distance", "@{distance_text} au")]),
        "Labels.SkiesCellText": dict(text_color=hv.dim("text_colour"), text_font_size="11px"),
        "HeatMap.SkiesRow": dict(fill_alpha=0.0, line_color=palette.HIGHLIGHT_COLOUR, line_width=2.5, cmap=["#000000"]),
    },
    matplotlib={
        "HeatMap.SkiesMatrixFigure": dict(cmap=palette.SKIES_CMAP, logz=True, colorbar=True, show_values=True,
                                          hooks=[_cell_values]),
    })
BAR_STYLES = Styles(
    frame={"bokeh": dict(responsive=True, height=330, toolbar="above", legend_position="right",
                         fontsize=FONT_SIZES, show_grid=True),
           # the axis label on two lines: a static figure is not as tall as the label is long
           "matplotlib": dict(fig_size=220, aspect=1.7, legend_position="right",
                              ylabel="largest apparent diameter\n[Moon diameters from Earth]")},
    bokeh={
        "Bars.SkiesBars": dict(color=hv.dim("colour"), line_color="#333333", tools=["hover"],
                               hover_tooltips=[("body", "@{body}"), ("largest diameter", "@{moon_text} \u00d7 the Moon"),
                                               ("16th\u201384th pct", "@{moon_range}"), ("", "@{arcsec_text} arcsec"),
                                               ("closest distance", "@{distance_text} au")]),
        "ErrorBars.SkiesBarRange": dict(color=palette.INK, line_width=1.5),
        "HLine.SkiesMoon": dict(color="#555555", line_dash="dashed", line_width=1.2),
    },
    matplotlib={
        "Bars.SkiesBars": dict(edgecolor="#333333", hooks=[bar_colours("colour")]),
        "ErrorBars.SkiesBarRange": dict(color=palette.INK, linewidth=1.2),
        "HLine.SkiesMoon": dict(color="#555555", linestyle="--", linewidth=1.0),
    })


class SkiesView(View):
    """The "Neighbour skies" view of one app."""

    title = "Neighbour skies"
    #: the settings that shape the figures, carried over to a copy of the session (figures.session_copy)
    figure_parameters = ("sky_from.window", "sky_from.body")

    def __init__(self, app, **params):
        super().__init__(app, **params)
        self.quantities = quantities_of(VIEW, "skies")
        self.matrix = LayeredPlot(MATRIX_LAYERS, MATRIX_STYLES, self._matrix_data())
        self.bars = LayeredPlot(BAR_LAYERS, BAR_STYLES, self._bar_data())
        self.tap = select_on_tap(app, self.matrix.dynamic["cells"], self._observer_of_cells)
        self.bars_title = section()
        self.table = table_widget(self._frame(), self.quantities, frozen=("body",), selectable=False)
        self.caption = note()
        self.caution = note()
        self.sky_from = SkyFromView(app)
        self._refresh()

    def _observer_of_cells(self):
        """The observer of each cell as drawn (HoloViews lays a heat map's cells out on its own grid, in an order
        of its own)."""
        return self.matrix.dynamic["cells"].last.gridded.dimension_values("observer")

    @param.depends("app.derived", watch=True)
    @while_shown
    @batched
    def _refresh(self):
        self.matrix.update(**self._matrix_data())
        d = self.app.derived
        caption = interval_caption(d)
        self.caption.object = ("Largest apparent diameters at the closest approach of the two orbits (the star's at "
                               "the observer's periastron), in units of the Moon's diameter seen from Earth; "
                               "geometric maxima on fixed Keplerian orbits."
                               + (f" Ranges: {escape(caption)}." if caption else ""))
        self._observer()

    @param.depends("app.selected", watch=True)
    @while_shown
    @batched
    def _observer(self):
        d, chosen = self.app.derived, self.app.selected
        self.matrix.update(row=self._row_data())
        self.bars.update(**self._bar_data())
        self.table.value = self._frame()
        set_section(self.bars_title, f"In the sky of planet {escape(chosen)}: largest apparent diameters (dashed "
                    "line: the Moon seen from Earth)" if chosen in d.planet_names else "Pick a planet to see its sky")
        self.caution.object = caution_html(self.quantities, d)

    # -- data ---------------------------------------------------------------------------------
    def _rows_of_selected(self) -> np.ndarray:
        d, chosen = self.app.derived, self.app.selected
        observers = np.asarray(d.skies["observer"])
        return np.flatnonzero(observers == chosen) if chosen in d.planet_names else np.zeros(0, dtype=int)

    def _grid(self) -> dict:
        names = [str(n) for n in self.app.derived.planet_names]
        return {"bodies": [STAR_FACTOR, *names], "observers": list(reversed(names))}

    def _matrix_data(self) -> dict:
        d = self.app.derived
        sk, names = d.skies, d.planet_names
        ratio = as_floats(sk["moon_ratio"])
        positive = ratio[np.isfinite(ratio) & (ratio > 0)]
        low, high = (float(positive.min()), float(positive.max())) if positive.size else (0.01, 10.0)
        if high <= low:
            low, high = low / 2.0, high * 2.0
        show_text = len(names) <= MAX_PLANETS_WITH_CELL_TEXT
        grid = self._grid()
        moon, arcsec = interval(d, "skies", "moon_ratio"), interval(d, "skies", "max_angular_diameter_arcsec")
        count = ratio.size
        # a planet's own cells, with nothing to see, are given (dashes) rather than left to HoloViews, which fills
        # the cells of a grid that have no data with "-" and NaN
        own = [str(n) for n in names]
        cells_ = {"body": [str(b) for b in sk["body"]] + own, "observer": [str(o) for o in sk["observer"]] + own,
                  "moon_ratio": np.concatenate([ratio, np.full(len(own), np.nan)]),
                  **_value_texts(sk, slice(None), MISSING, len(own)),
                  "moon_range": (_spans(moon, 3) if moon else [""] * count) + [MISSING if moon else ""] * len(own),
                  "arcsec_range": ((_spans(arcsec, None, decimals=1) if arcsec else [""] * count)
                                   + [MISSING if arcsec else ""] * len(own)),
                  "colour_range": (low, high), **grid}
        texts = {"body": cells_["body"][:count], "observer": cells_["observer"][:count],
                 "text": [fmt(v, 2) if show_text else "" for v in ratio],
                 "text_colour": _cell_text_colour(ratio, low, high), **grid}
        return {"cells": cells_, "texts": texts, "row": self._row_data()}

    def _row_data(self) -> dict:
        d = self.app.derived
        rows = self._rows_of_selected()
        return {"body": [str(b) for b in np.asarray(d.skies["body"])[rows]],
                "observer": [str(o) for o in np.asarray(d.skies["observer"])[rows]], **self._grid()}

    def _bar_data(self) -> dict:
        d = self.app.derived
        rows = self._rows_of_selected()
        bodies = [str(b) for b in np.asarray(d.skies["body"])[rows]]
        ratio = as_floats(d.skies["moon_ratio"])[rows]
        moon = interval(d, "skies", "moon_ratio")
        top = float(np.nanmax(np.concatenate([ratio, moon[1][rows] if moon else [], [1.0]])))
        y_range = (0.0, 1.12 * top)
        bars_ = {"body": bodies, "moon_ratio": ratio, "colour": self.colours(bodies),
                 **_value_texts(d.skies, rows),
                 "moon_range": _spans((moon[0][rows], moon[1][rows]), 3) if moon else [""] * len(rows),
                 "y_range": y_range}
        # a row per bar, NaN (not drawn) without an interval: Bokeh's whiskers must not start out empty (a
        # Whisker added to a plot with no data has no view in the page when data come later)
        lo, hi = (moon[0][rows], moon[1][rows]) if moon else (np.full(len(rows), np.nan),) * 2
        errors = {"body": bodies, "moon_ratio": ratio, "minus": np.maximum(ratio - lo, 0.0),
                  "plus": np.maximum(hi - ratio, 0.0), "y_range": y_range}
        return {"bars": bars_, "errors": errors, "moon": {"y_range": y_range}}

    def _frame(self):
        d = self.app.derived
        rows = self._rows_of_selected()
        sub = _SkyRows(d, rows)
        return table_frame(sub, VIEW, "skies", {"body": [str(b) for b in np.asarray(d.skies["body"])[rows]]},
                           self.quantities)

    # -- pages and figures ----------------------------------------------------------------------
    def panel(self):
        return pn.Column(pn.pane.HoloViews(self.matrix.live(), sizing_mode="stretch_width", linked_axes=False),
                         self.caption, self.bars_title,
                         pn.pane.HoloViews(self.bars.live(), sizing_mode="stretch_width", linked_axes=False),
                         self.table, self.caution, self.sky_from.panel(), sizing_mode="stretch_width")

    def figure(self, backend: str | None = None):
        bars = self.bars.figure(backend)
        chosen = self.app.selected
        if backend is not None and chosen in self.app.derived.planet_names:
            # the page says this above the plot; a figure standing alone says it in its title
            bars = bars.opts(title=f"In the sky of planet {chosen}: largest apparent diameters (dashed: the Moon "
                                   "seen from Earth)", backend=backend)
        return hv.Layout([self.matrix.figure(backend), bars, *self.sky_from.figure(backend)]).cols(1)


class _SkyRows:
    """The sky table of a derived state restricted to some rows (the selected observer's), for table_frame."""

    def __init__(self, derived, rows):
        self.skies = {k: np.asarray(v)[rows] for k, v in derived.skies.items()}
        found = derived.intervals.get("skies", {}) if derived.intervals else {}
        self.intervals = {"skies": {k: (np.asarray(lo)[rows], np.asarray(hi)[rows]) for k, (lo, hi) in found.items()}}
        self.fractions = {}


def _value_texts(skies, rows, filler: str = MISSING, fill: int = 0) -> dict:
    """The tooltip texts of rows ``rows`` of a sky table (largest diameter in Moons and in arcsec, closest
    distance), each written as its tooltip format would write it, with ``fill`` entries ``filler`` after them."""
    columns = {"moon_text": "moon_ratio", "arcsec_text": "max_angular_diameter_arcsec",
               "distance_text": "closest_distance_au"}
    return {text: number_texts(as_floats(skies[key])[rows], HOVER_FORMATS[text]) + [filler] * fill
            for text, key in columns.items()}


def _spans(found, digits, decimals=None) -> list[str]:
    return span_texts(found[0], found[1], digits or 4, decimals)
