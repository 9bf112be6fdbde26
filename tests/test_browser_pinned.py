"""The pinned reference beside the current state in the served page (headless Chromium): Layout and the
Period ladder draw both states after an edit, and a pair chosen in the ladder's table stands on a band.

What the browser holds (the Bokeh sources) is compared with ``derive()`` and the positions computed here
from the file; the Layout plot is photographed and the pixels of every planet's colour counted before and
after, since the pinned orbits and rings are drawn in the planets' own colours.
"""

from __future__ import annotations

import numpy as np
import pytest

from browser_support import canvas_colour_pixels, open_page, screenshot, wait_for
from orbitdeck.dashboard.views.orbit_drawing import in_plane_positions
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import derive, load_system
from orbitdeck.models.motion import ephemeris
from test_browser_dashboard import enter, legend_texts, planet_palette, show

pytestmark = pytest.mark.browser

VIEWPORT = {"width": 1500, "height": 1100}
STAR_MASS, PERIOD_B = 0.3, 2.05
#: pixels of a planet's colour that its pinned orbit and ring add at least
MIN_PINNED_PIXELS = 40


def source_columns(page, has: str, lacks: str | None, names) -> dict | None:
    """Columns ``names`` of the first Bokeh data source holding column ``has`` and not ``lacks``."""
    return page.evaluate("""([has, lacks, names]) => {
        const s = [...Bokeh.documents[0]._all_models.values()].find(m => m.type == "ColumnDataSource"
            && m.data[has] !== undefined && (lacks === null || m.data[lacks] === undefined));
        if (!s) return null;
        return Object.fromEntries(names.map(n => [n, Array.from(s.data[n])]));
    }""", [has, lacks, list(names)])


def shows(page, text: str) -> bool:
    return page.get_by_text(text, exact=False).count() > 0


def layout_pixels(page, names) -> dict[str, int]:
    show(page, "Layout")
    page.wait_for_timeout(800)
    return canvas_colour_pixels(page, planet_palette(names))


def test_pinning_then_editing_shows_both_states_in_layout_and_ladder(browser, demo_url):
    system = load_system(demo_path())
    names = system.planet_names
    then = derive(system)
    then_elements = ephemeris.orbital_elements(system, a_au=then.planets["semi_major_axis_au"])
    x_then, y_then, _, _ = in_plane_positions(then_elements, system.epoch)
    system.star.mass, system.planets[0].period = STAR_MASS, PERIOD_B
    now = derive(system)
    origin = demo_url.rsplit("/", 1)[0]
    with open_page(browser, (origin,), VIEWPORT) as (page, log):
        page.goto(demo_url)
        page.wait_for_selector(".bk-Canvas", timeout=60_000)
        page.get_by_role("button", name="Pin this state as the reference").click()
        wait_for(lambda: shows(page, "reference pinned: Ossery Loom"), what="the pin")
        enter(page, "Mass [Msun]", str(STAR_MASS))
        wait_for(lambda: shows(page, f"M = {STAR_MASS} Msun"), what="the stellar mass edit")
        enter(page, "Period [d]", str(PERIOD_B))
        wait_for(lambda: source_columns(page, "pinned_f_deg", None, ["x"]) is not None and
                 (source_columns(page, "a_range", None, ["a"]) or {"a": [0]})["a"][0]
                 == pytest.approx(now.planets["semi_major_axis_au"][0], rel=1e-9), what="the period edit")

        # Layout: the pinned planets where the pinned orbits put them at the epoch, the current ones wider out
        show(page, "Layout")
        rings = source_columns(page, "pinned_f_deg", None, ["x", "y", "name"])
        assert rings["name"] == names
        np.testing.assert_allclose(rings["x"], x_then, rtol=1e-9, atol=1e-12)
        np.testing.assert_allclose(rings["y"], y_then, rtol=1e-9, atol=1e-12)
        current = source_columns(page, "a_range", None, ["a"])
        np.testing.assert_allclose(current["a"], now.planets["semi_major_axis_au"], rtol=1e-9)
        assert np.all(np.array(current["a"]) > then.planets["semi_major_axis_au"])
        assert {"pinned reference: orbits", "pinned reference: planets now"} <= set(legend_texts(page, "f_deg"))
        assert shows(page, "Dashed orbits and rings: the pinned reference (Ossery Loom, edit 0")
        pinned_pixels = layout_pixels(page, names)
        screenshot(page, "pinned_layout.png")

        # Period ladder: rings at the pinned ratios beside the current discs
        show(page, "Period ladder")
        pinned_rings = source_columns(page, "now", None, ["ratio", "now", "pair"])
        count = len(then.pairs["period_ratio"])
        np.testing.assert_allclose(pinned_rings["ratio"][:count], then.pairs["period_ratio"], rtol=1e-12)
        np.testing.assert_allclose(pinned_rings["now"][:count], now.pairs["period_ratio"], rtol=1e-12)
        discs = source_columns(page, "other_text", None, ["ratio"])
        np.testing.assert_allclose(discs["ratio"][:count], now.pairs["period_ratio"], rtol=1e-12)
        assert discs["ratio"][0] < pinned_rings["ratio"][0]       # b's longer period: a smaller b-c ratio
        assert "pinned reference: period ratios" in legend_texts(page, "other_text")
        assert shows(page, "Rings right of each pair: the pinned reference")

        # a row of the pairs table chooses its pair: a band behind it, the row selected
        assert "chosen pair" not in legend_texts(page, "other_text")
        page.locator('.tabulator-row .tabulator-cell[tabulator-field="pair"]', has_text="c\u2013d").first.click()
        wait_for(lambda: "chosen pair" in legend_texts(page, "other_text"), what="the band of the chosen pair")
        selected = page.locator('.tabulator:has([tabulator-field="nearest p:q"]) .tabulator-row.tabulator-selected')
        assert selected.count() == 1 and "c\u2013d" in selected.first.inner_text()
        page.wait_for_timeout(600)
        screenshot(page, "pinned_ladder.png")

        # clearing the pin takes the overlays away; pinned again with the ladder shown, its rings come back
        clear = page.get_by_role("button", name="Clear the reference")
        clear.click()
        wait_for(lambda: "pinned reference: period ratios" not in legend_texts(page, "other_text"),
                 what="the ladder without the reference")
        page.get_by_role("button", name="Pin this state as the reference").click()
        wait_for(lambda: "pinned reference: period ratios" in legend_texts(page, "other_text"),
                 what="the ladder with the new reference")
        clear.click()
        wait_for(lambda: "pinned reference: period ratios" not in legend_texts(page, "other_text"),
                 what="the ladder without the reference again")
        show(page, "Layout")
        wait_for(lambda: not {"pinned reference: orbits"} & set(legend_texts(page, "f_deg")),
                 what="the layout without the reference")
        # the same current state at the same scale (the pinned orbits lie inside the current ones): what the
        # reference added in each planet's colour, its dashed orbit and its ring, has gone
        cleared = layout_pixels(page, names)
        assert all(pinned_pixels[n] >= cleared[n] + MIN_PINNED_PIXELS for n in names), (pinned_pixels, cleared)
        screenshot(page, "pinned_layout_cleared.png")
        assert log.problems_on_server(origin) == []
