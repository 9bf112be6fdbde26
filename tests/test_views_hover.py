"""What the plots' tooltips read, their categorical axes after a change of system, and batches of changes.

A Bokeh hover tool writes a NaN as "NaN" and an infinity as "Infinity" before any number format sees them,
and HoloViews fills the empty cells of a heat map with "-": every value a tooltip shows that may be missing
is a text column, written as its tooltip format would write it, with a dash where missing. The system used
has an exact 2:1 pair (no TTV super-period), two planets on one period (a spacing just below zero) and no
magnitudes (no TSM or ESM).
"""

from __future__ import annotations

import contextlib
import math
import re
import weakref
from pathlib import Path

import numpy as np
import panel as pn
import pytest
from bokeh.document import Document
from bokeh.models import ColumnDataSource, FactorRange, HoverTool, Plot
from panel.io.state import set_curdoc

from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.dashboard.views.common import MISSING, number_texts, one_batch
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import load_system, loads_system

pytestmark = pytest.mark.filterwarnings("ignore:The inplace keyword in DataFrame.reset_index")

#: a system with missing and infinite derived values (see the file)
CROWDED = (Path(__file__).parent / "data" / "crowded_pair.toml").read_text(encoding="utf-8")
#: the views whose tooltips are checked here
VIEWS = ("Neighbour skies", "Period ladder", "Flux & temperature", "Observability")
#: a number's oddities a reader must never see
ODDITIES = re.compile(r"Infinity|\bNaN\b|\binf\b|\bnan\b|^-$|(?<![\w.])[-\u2212]0(?:\.0+)?(?![\d.e])")


@pytest.fixture
def crowded():
    return OrbitDeckApp(loads_system(CROWDED, "crowded.toml"))


def rendered_plots(view) -> list:
    """The Bokeh figures of a view's live plots, on a document of their own."""
    root = view.panel().get_root(Document())
    return list(root.select({"type": Plot}))


def hovered_columns(figure):
    """(tooltip field, column values) for every ``@column`` a hover tool of ``figure`` reads; every field read
    must be a column of each renderer the tool shows (a missing one is shown as "???")."""
    for tool in figure.select({"type": HoverTool}):
        renderers = figure.renderers if tool.renderers == "auto" else tool.renderers
        # HoloViews braces each "@name" of a dimension it finds in a template, also the start of a longer field
        # ("@tsm_range" -> "@{tsm}_range", which shows the TSM and "_range"): fields of ours are given braced
        assert not [t for _, t in tool.tooltips if re.search(r"\}[A-Za-z_]", t)], tool.tooltips
        fields = [braced or plain for _, template in tool.tooltips
                  for braced, plain in re.findall(r"@(?:\{([^}]+)\}|(\w+))", template)]
        for renderer in renderers:
            if not renderer.visible:   # a hidden layer (its placeholder row included) cannot be hovered
                continue
            source = renderer.data_source
            assert isinstance(source, ColumnDataSource)
            for name in fields:
                assert name in source.data, (name, tool.tooltips, sorted(source.data))
                yield name, list(source.data[name])


def test_number_texts_write_missing_values_as_a_dash_and_never_a_negative_zero():
    values = [1.23456, float("nan"), float("inf"), -float("inf"), None, -0.0, -0.0001, 0.0]
    assert number_texts(values, "0.00") == ["1.23", MISSING, MISSING, MISSING, MISSING, "0.00", "0.00", "0.00"]
    assert number_texts([0.0, -0.083333, 0.000001], "+0.00000") == ["+0.00000", "-0.08333", "+0.00000"]
    assert number_texts([2.0e-7], "0.000e") == ["2.000e-07"]
    # what Python's own formatting would write for the numbers that are there (the dash aside)
    assert number_texts([12345.678], "0.0") == [format(12345.678, ".1f")]
    with pytest.raises(ValueError):
        number_texts([1.0], "0,0.00")


@pytest.mark.parametrize("title", VIEWS)
def test_tooltips_read_no_raw_non_numbers(crowded, title):
    crowded.uncertainty = True   # the ranges as well
    seen = 0
    for figure in rendered_plots(crowded.views[title]):
        for name, values in hovered_columns(figure):
            seen += 1
            if all(isinstance(v, str) for v in values):
                assert not [v for v in values if ODDITIES.search(v)], (title, name, values)
            else:
                numbers = np.asarray(values, dtype=float)
                assert np.isfinite(numbers).all(), (title, name, values)
                assert not np.any((numbers == 0) & np.signbit(numbers)), (title, name, values)
    assert seen > 0, title


def test_the_ladder_shows_an_exact_commensurability_without_a_super_period(crowded):
    pairs = crowded.derived.pairs
    assert math.isinf(pairs["super_period_d"][0]) and pairs["delta"][0] == 0.0   # the exact 2:1 pair b-c
    shown = crowded.views["Period ladder"].plot.data["pairs"]
    n = len(pairs["delta"])
    assert shown["super_period_text"][:n] == [MISSING, format(pairs["super_period_d"][1], ".1f")]
    assert shown["delta_text"][:n] == ["+0.00000", format(pairs["delta"][1], "+.5f")]
    # c and d on one period: a spacing just below zero, shown as a plain zero
    assert -0.005 < pairs["mutual_hill_spacing"][1] < 0 and shown["spacing_text"][n - 1] == "0.00"
    assert shown["spacing_text"][n:] == shown["spacing_text"][:n]   # the outer disc of each pair says the same


def test_observability_says_a_missing_metric_is_missing(crowded):
    bars = crowded.views["Observability"].plot.data["bars"]
    assert np.isnan(crowded.derived.planets["tsm"]).all() and np.isnan(crowded.derived.planets["esm"]).all()
    assert bars["tsm_text"] == bars["esm_text"] == [MISSING] * 3
    demo = OrbitDeckApp(load_system(demo_path()))
    bars = demo.views["Observability"].plot.data["bars"]
    assert bars["tsm_text"] == [format(v, ".2f") for v in demo.derived.planets["tsm"]]
    assert bars["esm_text"] == [format(v, ".2f") for v in demo.derived.planets["esm"]]


def test_the_sky_matrix_gives_every_cell_its_texts(crowded):
    # HoloViews draws the full grid of observers x bodies; the cells it would fill itself (a planet's own) are given
    cells = next(s for figure in rendered_plots(crowded.views["Neighbour skies"])
                 for s in figure.select({"type": ColumnDataSource}) if "arcsec_range" in s.data)
    names = crowded.derived.planet_names
    assert len(cells.data["observer"]) == len(names) * (len(names) + 1)
    for i, (observer, body) in enumerate(zip(cells.data["observer"], cells.data["body"])):
        texts = [cells.data[k][i] for k in ("moon_text", "arcsec_text", "distance_text")]
        assert all(t == MISSING for t in texts) == (observer == body), (observer, body, texts)


@pytest.mark.parametrize("title", ["Neighbour skies", "Observability"])
def test_categorical_axes_follow_a_new_system_after_ranges_were_shown(title):
    app = OrbitDeckApp(load_system(demo_path()), samples=200)
    figures = rendered_plots(app.views[title])
    app.uncertainty = True
    other = load_system(demo_path("amber_pair"))
    app.replace_system(other)
    shown = [list(map(str, f.x_range.factors)) for f in figures if isinstance(f.x_range, FactorRange)]
    names = other.planet_names
    if title == "Observability":
        assert shown == [names]
    else:   # the matrix (bodies seen), and the bars of the selected observer (the first planet)
        assert ["star", *names] in shown and ["star", *names[1:]] in shown


class _Session:
    """Stands in for a server session: ``one_batch`` holds the plots only of a served page."""


@contextlib.contextmanager
def _collected(doc=None, policy="combine", freeze=False):
    """What ``pn.io.hold`` does in a served session, without a server: the changes made in the outermost hold
    are collected (later values of a property replacing earlier ones) and sent when it ends, as one message."""
    doc = doc or pn.state.curdoc
    if doc.callbacks.hold_value is not None:
        yield
        return
    doc.hold(policy)
    try:
        yield
    finally:
        doc.unhold()


def test_a_batch_holds_the_pages_plots_first_and_releases_them_in_a_message_of_its_own(monkeypatch):
    app = OrbitDeckApp(load_system(demo_path()))
    doc = Document()
    doc.add_root(app.views["Period ladder"].panel().get_root(doc))
    session = _Session()
    doc._session_context = weakref.ref(session)       # as a server sets it
    monkeypatch.setattr(pn.io, "hold", _collected)
    plots = list(doc.select({"type": Plot}))
    assert plots and not any(p.hold_render for p in plots)
    messages = []

    def sent(event):
        messages.append(event)

    doc.on_change(sent)
    with set_curdoc(doc):
        with one_batch():
            app.system.star.mass = 0.2
            assert all(p.hold_render for p in plots) and messages == []
    assert not any(p.hold_render for p in plots)
    kinds = [(e.attr, e.new) if getattr(e, "attr", None) == "hold_render" else type(e).__name__ for e in messages]
    data = [i for i, kind in enumerate(kinds) if kind == "ColumnDataChangedEvent"]
    held = [i for i, kind in enumerate(kinds) if kind == ("hold_render", True)]
    released = [i for i, kind in enumerate(kinds) if kind == ("hold_render", False)]
    # the plots are held before any data of the batch changes, and released after the batch, in a message of
    # their own (within the batch the release would replace the hold, in its place)
    assert data and len(held) == len(released) == len(plots), kinds
    assert max(held) < min(data) and released == list(range(len(kinds) - len(plots), len(kinds))), kinds
    # outside a served page a batch leaves the plots alone (HoloViews holds each plot while updating it; within a
    # batch that comes to nothing but a change back to False)
    doc._session_context = None
    messages.clear()
    with set_curdoc(doc):
        with one_batch():
            app.system.star.mass = 0.25
    assert messages and not any(getattr(e, "attr", None) == "hold_render" and e.new for e in messages)
