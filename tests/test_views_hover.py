"""Batches of changes in a served page: one message, the page's plots held while it is applied."""

from __future__ import annotations

import contextlib
import weakref

import panel as pn
import pytest
from bokeh.document import Document
from bokeh.models import Plot
from panel.io.state import set_curdoc

from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.dashboard.views.common import one_batch
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import load_system

pytestmark = pytest.mark.filterwarnings("ignore:The inplace keyword in DataFrame.reset_index")


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
