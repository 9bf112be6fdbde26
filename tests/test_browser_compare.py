"""Pinning a reference, editing, comparing and undoing in the served page (headless Chromium)."""

from __future__ import annotations

import pytest

from browser_support import open_page, screenshot, wait_for
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import derive, load_system
from orbitdeck.models.engine.compare import compare

pytestmark = pytest.mark.browser


def shows(page, text: str) -> bool:
    return page.get_by_text(text, exact=False).count() > 0


def test_pin_edit_compare_and_undo(browser, demo_url):
    origin = demo_url.rsplit("/", 1)[0]
    with open_page(browser, (origin,), {"width": 1500, "height": 1100}) as (page, log):
        page.goto(demo_url)
        page.wait_for_selector(".bk-Canvas", timeout=60_000)
        undo = page.get_by_role("button", name="\u21b6 Undo")
        assert undo.is_disabled()
        page.get_by_role("button", name="Pin this state as the reference").click()
        wait_for(lambda: shows(page, "reference pinned: Ossery Loom"), what="the pin")
        box = page.get_by_label("Mass [Msun]", exact=True)
        box.fill("0.3")
        box.press("Enter")
        wait_for(lambda: shows(page, "M = 0.3 Msun") and undo.is_enabled(), what="the edit")
        page.locator(".bk-tab", has_text="Compare").first.click()
        wait_for(lambda: shows(page, "from it. "), what="the comparison")
        # the same comparison, computed here: a heavier star widens every orbit (a^3 proportional to M)
        system = load_system(demo_path())
        pinned = derive(system)
        system.star.mass = 0.3
        expected = {(c.row, c.quantity.heading): c for c in compare(pinned, derive(system))}
        change = expected[("b", "a [au]")]
        assert change.difference > 0
        row = page.locator("tr", has_text="a [au]").filter(has_text="planet").first
        cells = row.locator("td").all_inner_texts()
        assert cells[1] == "b" and cells[5].startswith("+") and cells[5] == f"+{change.difference:.3g} au"
        assert shows(page, f"{len(expected)} derived quantities differ")
        screenshot(page, "compare.png")
        undo.click()
        wait_for(lambda: shows(page, "M = 0.231 Msun") and shows(page, "Nothing differs from the reference"),
                 what="the undo")
        page.get_by_role("button", name="Redo \u21b7").click()
        wait_for(lambda: shows(page, "M = 0.3 Msun"), what="the redo")
        assert log.problems_on_server(origin) == []
