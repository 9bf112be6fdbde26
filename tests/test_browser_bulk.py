"""The Bulk & atmosphere tab of the served dashboard in headless Chromium: it renders with no console
error, and a planet chosen in its table is highlighted in its plots."""

from __future__ import annotations

import pytest

from browser_support import open_page, screenshot, wait_for

pytestmark = pytest.mark.browser

TITLE = "Bulk & atmosphere"


def _highlighted(page) -> list | None:
    """Names in the data source of the highlighted planet of the mass-radius plot, as the browser holds it."""
    return page.evaluate("""() => {
        const doc = Bokeh.documents[0];
        const source = [...doc._all_models.values()].find(m => m.type == "ColumnDataSource"
                                                              && m.data.highlighted_name !== undefined);
        return source ? Array.from(source.data.highlighted_name) : null;
    }""")


def test_bulk_tab_renders_and_follows_the_table(browser, demo_url):
    origin = demo_url.rsplit("/", 1)[0]
    with open_page(browser, (origin,), {"width": 1500, "height": 1300}) as (page, log):
        page.goto(demo_url)
        page.wait_for_selector(".bk-Canvas", timeout=60_000)
        page.locator(".bk-tab", has_text=TITLE).first.click()
        wait_for(lambda: page.locator(".bk-Canvas:visible").count() >= 3, 30, "the three plots of the tab")
        page.wait_for_timeout(800)
        assert page.get_by_text("Model estimates, not measurements").first.is_visible()
        rows = page.locator(".tabulator-row:visible")
        wait_for(lambda: rows.count() >= 2, 15, "the spectroscopy table")
        cell = rows.nth(1).locator('.tabulator-cell[tabulator-field="planet"]')
        name = cell.inner_text().strip()
        cell.click()
        try:
            wait_for(lambda: _highlighted(page) == [name], 15, f"planet {name} highlighted")
        finally:
            screenshot(page, "bulk_view.png")
        assert log.problems_on_server(origin) == []
