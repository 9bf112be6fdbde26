"""The Dynamics tab of the served dashboard in headless Chromium: an N-body ensemble started with its button
shows its progress while the page stays live, its results are painted (the summary, the survival histogram
and the N-body TTVs of the chosen pair in the planets' colours), a long run can be cancelled, and no
console error occurs."""

from __future__ import annotations

import pytest

from browser_support import canvas_colour_pixels, open_page, screenshot, wait_for
from orbitdeck.dashboard.views import palette
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import load_system

pytestmark = [pytest.mark.browser, pytest.mark.filterwarnings("ignore:The inplace keyword in DataFrame.reset_index")]

TITLE = "Dynamics"
#: pixels of a planet's colour that count as that planet drawn (antialiasing leaves a few anywhere)
MIN_PIXELS = 150
#: pixels of the survival histogram's colour: its legend swatch has about 200, a bar over the plot's height many more
MIN_SURVIVAL_PIXELS = 1500


def _nbody_points(page) -> list | None:
    """The planets of the N-body TTV points as the browser holds them (their data source has a "span" column)."""
    return page.evaluate("""() => {
        const doc = Bokeh.documents[0];
        const source = [...doc._all_models.values()].find(m => m.type == "ColumnDataSource"
                                                              && m.data.span !== undefined);
        return source ? Array.from(source.data.planet) : null;
    }""")


def _enter(page, label: str, value: int) -> None:
    box = page.get_by_label(label)
    box.fill(str(value))
    box.press("Enter")


def test_an_ensemble_runs_from_its_button_with_progress_and_its_results_are_painted(browser, demo_url):
    origin = demo_url.rsplit("/", 1)[0]
    names = load_system(demo_path()).planet_names
    colours = dict(zip(names, palette.ColourBook(names).colours(names)))
    with open_page(browser, (origin,), {"width": 1500, "height": 1300}) as (page, log):
        page.goto(demo_url)
        page.wait_for_selector(".bk-Canvas", timeout=60_000)
        page.locator(".bk-tab", has_text=TITLE).first.click()
        wait_for(lambda: page.locator(".bk-Canvas:visible").count() >= 3, 30, "the three plots of the tab")
        page.get_by_label("pair for the TTV curves").select_option(label="c\u2013d")
        wait_for(lambda: "c (inner)" in page.locator(".od-table-title").first.inner_text(), 15, "the pair c-d")
        assert _nbody_points(page) == []
        # a long run first: its progress shows, and it stops when cancelled
        _enter(page, "N-body draws (1 to 2000)", 2)
        _enter(page, "orbits of the innermost planet (10 to 100000)", 50_000)
        page.get_by_role("button", name="Run the N-body ensemble").click()
        wait_for(lambda: page.get_by_text("Integrating:").count() > 0, 30, "the progress of the long run")
        assert page.locator("progress").first.is_visible()
        page.get_by_role("button", name="Cancel the run").click()
        wait_for(lambda: page.get_by_text("The last run was cancelled").count() > 0, 30, "the cancellation")
        # a tiny run to its end: 3 draws over 300 orbits of b (two super-periods of c-d are 65 orbits)
        _enter(page, "N-body draws (1 to 2000)", 3)
        _enter(page, "orbits of the innermost planet (10 to 100000)", 300)
        page.get_by_role("button", name="Run the N-body ensemble").click()
        seen = []
        wait_for(lambda: seen.append(page.locator("progress").first.get_attribute("value"))
                 or page.get_by_text("Stable to the end:").count() > 0, 120, "the ensemble's results")
        assert any(value not in (None, "0") for value in seen), seen   # the bar moved while it ran
        wait_for(lambda: set(_nbody_points(page) or []) == {"c", "d"}, 15, "the N-body TTVs of c and d")
        page.wait_for_timeout(800)
        screenshot(page, "dynamics_ensemble.png")
        assert page.get_by_text("Model estimates, not measurements").first.is_visible()
        # the TTV plot (analytic curves, bands and N-body points), bars and discs in the planets' colours
        pixels = canvas_colour_pixels(page, colours)
        assert pixels["c"] >= MIN_PIXELS and pixels["d"] >= MIN_PIXELS, pixels
        assert sum(n >= 20 for n in pixels.values()) >= 4, pixels
        # the survival histogram is drawn: its bar of the draws stable to the end (3 of 3 here, unless one stopped)
        # covers more than its legend's swatch
        survived = canvas_colour_pixels(page, {"survived": palette.ACCENT})
        assert survived["survived"] >= MIN_SURVIVAL_PIXELS, survived
        assert log.problems_on_server(origin) == []


def test_a_snapshot_shows_the_finished_ensemble_offline(browser, tmp_path):
    from browser_support import offline_page
    from orbitdeck.dashboard.app import OrbitDeckApp
    from orbitdeck.dashboard.views.dynamics import finished_ensemble

    app = OrbitDeckApp(load_system(demo_path()))
    view = app.views[TITLE]
    view.pair_select.value = 1   # c-d
    view.ensemble.draws.value, view.ensemble.orbits.value = 3, 200
    view.ensemble.start()
    view.ensemble.job.join(timeout=120)
    view.ensemble.poll()
    assert finished_ensemble(app) is not None
    out = tmp_path / "with_ensemble.html"
    out.write_bytes(app.controls._snapshot().getvalue())
    with offline_page(browser, {"width": 1400, "height": 1000}) as (page, log):
        page.goto(out.as_uri())
        page.wait_for_selector(".bk-Canvas", timeout=30_000)
        page.get_by_text("Stable to the end:").first.scroll_into_view_if_needed()
        page.wait_for_timeout(1000)
        assert page.get_by_text("Stable to the end:").first.is_visible()
        # no controls to run anything in a static page
        assert page.get_by_role("button", name="Run the N-body ensemble").count() == 0 or not \
            page.get_by_role("button", name="Run the N-body ensemble").first.is_visible()
        assert set(_nbody_points(page) or []) == {"c", "d"}
        screenshot(page, "dynamics_snapshot_with_ensemble.png")
        assert log.problems() == []
