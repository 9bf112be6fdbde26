"""The Transit planner view without a browser: what it holds, its controls, the linked selection, tab deferral.

The rows it shows are compared with the models' forecast computed here on
the same inputs; the browser test (test_browser_transits.py) checks that
the page renders them.
"""

from __future__ import annotations

import holoviews as hv
import numpy as np
import pytest
from bokeh.document import Document

from orbitdeck.dashboard.app import VIEW_CLASSES, OrbitDeckApp
from orbitdeck.dashboard.views.transits import TYPED_SITE, TransitPlannerView, calendar_dates
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import load_system
from orbitdeck.models.motion.forecast import forecast_transits
from orbitdeck.models.files.system import Site
from orbitdeck.models.motion.visibility import forecast_rows, nights

pytestmark = pytest.mark.filterwarnings("ignore:The inplace keyword in DataFrame.reset_index")
TITLE = "Transit planner"


@pytest.fixture
def app():
    return OrbitDeckApp(load_system(demo_path()))


def test_the_view_is_a_tab_of_its_own(app):
    assert TransitPlannerView in VIEW_CLASSES and TITLE in list(app.views)
    assert isinstance(app.views[TITLE], TransitPlannerView)


def test_rows_are_the_forecast_of_the_chosen_range(app):
    view = app.views[TITLE]
    system = load_system(demo_path())
    expected = forecast_rows(forecast_transits(system, system.epoch, system.epoch + 30.0))
    assert view.rows == expected
    assert list(view.table.value["planet"]) == [r["planet"] for r in expected]
    view.span = "7 days"
    assert view.rows == forecast_rows(forecast_transits(system, system.epoch, system.epoch + 7.0))


def test_a_typed_site_adds_nights_and_the_sky(app):
    view = app.views[TITLE]
    view.param.update(site_choice=TYPED_SITE, latitude=35.0, longitude=-105.0, elevation=2000.0)
    assert view.sky is not None and "observable" in view.table.value
    system = load_system(demo_path())
    begin, end = nights(system.star, Site("x", 35.0, -105.0, 2000.0), system.epoch, system.epoch + 30.0)
    assert np.array_equal(view.night_bounds[0], begin) and len(begin) >= 29
    overlay = view.timeline()
    night_boxes = overlay.get(0)
    assert isinstance(night_boxes, hv.Rectangles) and len(night_boxes) == len(begin)
    assert night_boxes.dframe()["x"].tolist() == list(calendar_dates(begin))


def test_the_selection_is_linked_both_ways(app):
    view = app.views[TITLE]
    app.selected = "e"
    assert view.highlight == "e"
    assert [view.rows[i]["planet"] for i in view.table.selection] == ["e"]
    row = next(i for i, r in enumerate(view.rows) if r["planet"] == "c")
    view.table.selection = [row]
    assert app.selected == "c"
    view._tapped(x=None, y=3.1)          # the timeline's fourth row
    assert app.selected == app.system.planet_names[3]


def test_bad_start_text_is_explained_not_raised(app):
    view = app.views[TITLE]
    view.start_text = "next week"
    assert "start: " in view.message.object and "ISO date" in view.message.object
    assert view.rows == [] and len(view.table.value) == 0
    view.start_text = "2026-01-01"
    assert view.rows and "start: " not in view.message.object


def test_an_edit_of_the_system_is_followed(app):
    view = app.views[TITLE]
    before = [r["mid_bjd_tdb"] for r in view.rows if r["planet"] == "b"]
    app.system.planet("b").period = 1.95
    after = [r["mid_bjd_tdb"] for r in view.rows if r["planet"] == "b"]
    assert after != before and len(after) >= len(before) - 1


def test_in_a_served_page_the_hidden_tab_waits_and_catches_up():
    app = OrbitDeckApp(load_system(demo_path()))
    app.page().server_doc(Document())
    view = app.views[TITLE]           # built from the current state although its tab is hidden
    before = list(view.rows)
    app.system.planet("b").period = 1.95
    assert view.rows == before and TITLE in app.stale_tabs()
    app.tabs.active = list(app.views).index(TITLE)
    assert view.rows != before and TITLE not in app.stale_tabs()
