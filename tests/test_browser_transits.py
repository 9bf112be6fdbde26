"""The Transit planner tab of the served dashboard in headless Chromium.

``orbitdeck serve`` runs on the default demo in a subprocess (conftest's
``demo_url``); the tab is opened with every request off the machine
blocked, its timeline and table must render with no console error, a site
typed into its controls must shade nights and add the observability
columns, and a table row must select its planet in the other views. The
numbers shown are compared with the models' own forecast.
"""

from __future__ import annotations

import pytest

from browser_support import screenshot, wait_for
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import load_system
from orbitdeck.models.motion.forecast import forecast_transits
from test_browser_dashboard import column, dashboard, show

pytestmark = pytest.mark.browser

TAB = "Transit planner"
#: a column only the timeline's transit ticks carry, to find their data in the browser
TICKS = """() => {
    const doc = Bokeh.documents[0];
    const sources = [...doc._all_models.values()].filter(m => m.type == "ColumnDataSource"
                                                         && m.data.width !== undefined && m.data.bjd !== undefined);
    return sources.length ? Array.from(sources[0].data.bjd) : null;
}"""
TITLE = """() => [...Bokeh.documents[0]._all_models.values()].filter(m => m.type == "Title")
                                                          .map(m => m.text).join(" | ")"""
NIGHTS = """() => {
    const doc = Bokeh.documents[0];
    const r = [...doc._all_models.values()].find(m => m.type == "GlyphRenderer" && m.glyph.type == "Quad"
        && m.glyph.fill_color && m.glyph.fill_color.value == "#2d3a4a");
    return r ? r.data_source.get_length() : null;
}"""


def _cells(page, field: str) -> list[str]:
    cells = page.locator(f'.tabulator-cell[tabulator-field="{field}"]')
    return cells.all_inner_texts()


def test_the_transit_planner_renders_and_follows_its_controls(browser, demo_url):
    system = load_system(demo_path())
    expected = forecast_transits(system, system.epoch, system.epoch + 30.0)
    with dashboard(browser, demo_url) as (page, log):
        show(page, TAB)
        canvases = page.locator(".bk-Canvas:visible")
        assert canvases.count() >= 1
        box = canvases.first.bounding_box()
        assert box["width"] > 300 and box["height"] > 200
        bjd = page.wait_for_function(TICKS, timeout=15_000).json_value()
        assert sorted(bjd) == pytest.approx(sorted(expected.mid), abs=1e-9)
        page.locator('.tabulator-cell[tabulator-field="planet"]').first.wait_for(timeout=15_000)
        assert "observable" not in _cells(page, "observable")
        screenshot(page, "transit_planner.png")

        # a typed site: nights shaded and the observability column appears
        page.get_by_label("Site", exact=True).select_option("latitude, longitude, elevation below")
        for label, value in (("Latitude [deg]", "35"), ("Longitude E [deg]", "-105"), ("Elevation [m]", "2000")):
            box = page.get_by_label(label, exact=True)
            box.fill(value)
            box.press("Enter")
        wait_for(lambda: "longitude -105 deg east, 2000 m" in page.evaluate(TITLE), timeout=30,
                 what="the timeline of the typed site")
        assert page.evaluate(NIGHTS) >= 29   # one night a day over the 30 days
        page.locator('.tabulator-col[tabulator-field="observable"]').wait_for(timeout=15_000)
        page.wait_for_timeout(800)
        screenshot(page, "transit_planner_site.png")

        # a row of the table selects its planet everywhere
        target = next(name for name in ("e", "d", "c") if name in [expected.planet_names[i] for i in expected.planet])
        page.locator('.tabulator-cell[tabulator-field="planet"]', has_text=target).first.click()
        names = column(page, "Layout", "name")
        wait_for(lambda: column(page, "Layout", "size")[names.index(target)] == max(column(page, "Layout", "size")),
                 what="the row's planet to be highlighted in Layout")
        assert log.console_errors == [] and log.page_errors == []
