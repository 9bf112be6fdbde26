"""The served dashboard in headless Chromium.

``orbitdeck serve --no-show --port P`` runs in a subprocess on a free
loopback port; the page is opened with every request off the machine
blocked, each view is rendered and photographed into ``tests/artifacts/``,
and the controls, the linked selection and the separation of sessions are
exercised. Values shown are compared with ``derive()``.
"""

from __future__ import annotations

import contextlib
from pathlib import Path

import pytest

from browser_support import canvas_colour_pixels, open_page, screenshot, served, wait_for
from orbitdeck.dashboard.views import palette
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import derive, load_system

pytestmark = pytest.mark.browser

VIEWS = ("Layout", "Neighbour skies", "Period ladder", "Flux & temperature", "Observability", "Dynamics")
VIEWPORT = {"width": 1500, "height": 1100}
#: a column that only one data source of each view has, to find it in the browser
MARKER_COLUMNS = {"Layout": "f_deg", "Neighbour skies": "text_colour", "Period ladder": "delta_text",
                  "Flux & temperature": "teq", "Observability": "tsm", "Dynamics": "ratio"}


@contextlib.contextmanager
def dashboard(browser, url):
    """An open dashboard page (requests off 127.0.0.1 blocked) and its log."""
    origin = url.rsplit("/", 1)[0]
    with open_page(browser, (origin,), VIEWPORT) as (page, log):
        page.goto(url)
        page.wait_for_selector(".bk-Canvas", timeout=60_000)
        yield page, log
        assert log.problems_on_server(origin) == []


def column(page, view: str, name: str) -> list:
    """Column ``name`` of the data source of ``view`` as the browser holds it (the view's tab is shown first)."""
    show(page, view)
    finder = """([marker, name]) => {
        const doc = Bokeh.documents[0];
        const source = [...doc._all_models.values()].find(m => m.type == "ColumnDataSource"
                                                              && m.data[marker] !== undefined);
        return source ? Array.from(source.data[name]) : null;
    }"""
    return page.wait_for_function(finder, arg=[MARKER_COLUMNS[view], name], timeout=15_000).json_value()


def planet_on_screen(page, name: str) -> tuple[float, float]:
    """Page coordinates of planet ``name`` in the Layout plot."""
    show(page, "Layout")
    finder = """(name) => {
        const view = Bokeh.index.query_one(v => v.model.type == "Figure" && v.model.title
                                           && v.model.title.text.startsWith("Top-down"));
        const r = view && view.model.renderers.find(r => r.data_source && r.data_source.data.f_deg !== undefined);
        if (!r) return null;
        const d = r.data_source.data, i = Array.from(d.name).indexOf(name);
        const box = view.canvas_view.el.getBoundingClientRect();
        return [box.left + view.frame.x_scale.compute(d.x[i]), box.top + view.frame.y_scale.compute(d.y[i])];
    }"""
    page.wait_for_function(finder, arg=name, timeout=15_000)
    return tuple(page.evaluate(finder, name))


def show(page, view: str) -> None:
    """Bring ``view``'s tab to the front (a tab's views are built and rendered when it is first shown)."""
    tab = page.locator(".bk-tab", has_text=view).first
    if "bk-active" not in (tab.get_attribute("class") or ""):
        tab.click()
        page.locator(".bk-Canvas:visible").first.wait_for(timeout=15_000)
        page.wait_for_timeout(500)


def flux_cells(page, field: str) -> list[str]:
    """The texts of column ``field`` of the Flux & temperature table, top to bottom."""
    show(page, "Flux & temperature")
    cells = page.locator(f'.tabulator-cell[tabulator-field="{field}"]')
    cells.first.wait_for(timeout=15_000)
    return cells.all_inner_texts()


def enter(page, label: str, text: str) -> None:
    box = page.get_by_label(label, exact=True)
    box.fill(text)
    box.press("Enter")


def test_every_view_renders_offline_without_errors(browser, demo_url):
    with dashboard(browser, demo_url) as (page, log):
        assert "Ossery Loom" in page.title()
        shapes = {"Layout": 5, "Neighbour skies": 25, "Period ladder": 4, "Flux & temperature": 5,
                  "Observability": 5, "Dynamics": 4}
        for view in VIEWS:
            show(page, view)
            canvases = page.locator(".bk-Canvas:visible")
            assert canvases.count() >= 1, view
            box = canvases.first.bounding_box()
            assert box["width"] > 300 and box["height"] > 200, view
            assert len(column(page, view, MARKER_COLUMNS[view])) == shapes[view], view
            page.wait_for_timeout(600)
            slug = view.lower().replace(" & ", "_").replace(" ", "_")
            screenshot(page, f"dashboard_{slug}.png")


#: a plot counts as drawn when it shows at least this many pixels of planet colours, with at least
#: ``MIN_PLANET_COLOURS`` of the palette's colours (or every planet's, if fewer) among them
MIN_PLANET_PIXELS = 300
MIN_PLANET_COLOURS = 3
#: pixels of one colour below which it is not counted as shown (antialiasing leaves a few anywhere)
MIN_PIXELS_OF_A_COLOUR = 20
#: the translucent habitable-zone fills: each fill colour over this many pixels of the Layout view
MIN_HZ_PIXELS = 2000


def planet_palette(names) -> dict[str, str]:
    """Planet name -> colour, as the dashboard's palette gives them (in period order)."""
    return dict(zip(names, palette.planet_colours(len(names))))


def hz_palette() -> dict[str, str]:
    return {"conservative": palette.HZ_CONSERVATIVE_COLOUR, "optimistic": palette.HZ_OPTIMISTIC_COLOUR}


def test_every_view_draws_the_planets_in_their_colours(browser, demo_url):
    # a blank plot (or one drawn in other colours) fails here: each view's canvases are photographed and
    # the pixels of every planet's palette colour counted, wherever they are
    names = load_system(demo_path()).planet_names
    count = len(names)
    with dashboard(browser, demo_url) as (page, _):
        for view in VIEWS:
            show(page, view)
            page.wait_for_timeout(600)
            pixels = canvas_colour_pixels(page, planet_palette(names))
            shown = [name for name, n in pixels.items() if n >= MIN_PIXELS_OF_A_COLOUR]
            assert sum(pixels.values()) >= MIN_PLANET_PIXELS, (view, pixels)
            assert len(shown) >= min(MIN_PLANET_COLOURS, count), (view, pixels)
            if view == "Layout":
                # every orbit is drawn to scale in its planet's colour, and the habitable zone's two fills
                # (translucent over the white plot) under them
                assert len(shown) == count, pixels
                zone = canvas_colour_pixels(page, hz_palette(), strength=(0.15, 0.6), tolerance=4.0)
                assert min(zone.values()) >= MIN_HZ_PIXELS, zone


def test_the_stellar_mass_control_changes_the_shown_semi_major_axes(browser, demo_url):
    expected = load_system(demo_path())
    expected.star.mass = 0.2
    a = derive(expected).planets["semi_major_axis_au"]
    with dashboard(browser, demo_url) as (page, _):
        before = flux_cells(page, "a [au]")
        enter(page, "Mass [Msun]", "-1")
        wait_for(lambda: page.get_by_text("must be > 0.001 Msun").count() > 0, what="the inline message")
        assert flux_cells(page, "a [au]") == before
        enter(page, "Mass [Msun]", "0.2")
        wait_for(lambda: flux_cells(page, "a [au]") != before, what="the new semi-major axes")
        assert [float(t) for t in flux_cells(page, "a [au]")] == pytest.approx(a, abs=5e-6)
        show(page, "Layout")
        orbit = page.evaluate("""() => {
            const doc = Bokeh.documents[0];
            const s = [...doc._all_models.values()].find(m => m.type == "ColumnDataSource" && m.data.height
                                                         && m.data.periastron !== undefined && m.data.angle);
            return [s.data.x[0], s.data.y[0], s.data.width[0], s.data.height[0]];
        }""")
        # e = 0: the orbit of b is drawn as a circle of radius a about the star, at the new a
        assert orbit[:2] == pytest.approx([0.0, 0.0], abs=1e-12)
        assert orbit[2] / 2 == pytest.approx(a[0], rel=1e-9) and orbit[3] / 2 == pytest.approx(a[0], rel=1e-9)
        screenshot(page, "dashboard_after_mass_edit.png")


def test_selecting_a_planet_highlights_it_in_every_view(browser, demo_url):
    with dashboard(browser, demo_url) as (page, _):
        names = column(page, "Layout", "name")
        x, y = planet_on_screen(page, "e")
        page.mouse.click(x, y)
        chosen = names.index("e")
        wait_for(lambda: column(page, "Layout", "size")[chosen] == max(column(page, "Layout", "size")),
                 what="the clicked planet to grow")
        assert column(page, "Flux & temperature", "line_width")[chosen] == 3.0
        assert column(page, "Observability", "line_width")[chosen] == 3.0
        rings = column(page, "Period ladder", "outline")
        assert [w > 0 for w in rings] == ["e" in p.split("\u2013") for p in column(page, "Period ladder", "pair")]
        for view, field in (("Flux & temperature", "a [au]"), ("Observability", "TSM")):
            show(page, view)
            rows = page.locator(f'.tabulator:has([tabulator-field="{field}"]) .tabulator-row.tabulator-selected')
            assert [t.split()[0] for t in rows.all_inner_texts()] == ["e"], view
            if view == "Flux & temperature":
                screenshot(page, "dashboard_selected_e.png")
        # a row of the Observability table selects as well
        show(page, "Observability")
        page.locator('.tabulator:has([tabulator-field="TSM"]) .tabulator-cell[tabulator-field="planet"]',
                     has_text="c").first.click()
        wait_for(lambda: column(page, "Layout", "size")[names.index("c")] == max(column(page, "Layout", "size")),
                 what="the row's planet to be highlighted")


def test_an_edit_in_one_session_leaves_another_unchanged(browser, demo_url):
    with dashboard(browser, demo_url) as (one, _), dashboard(browser, demo_url) as (two, _):
        original = flux_cells(two, "a [au]")
        enter(one, "Mass [Msun]", "0.3")
        wait_for(lambda: flux_cells(one, "a [au]") != original, what="the edited session")
        two.wait_for_timeout(1500)
        assert flux_cells(two, "a [au]") == original
        assert two.get_by_label("Mass [Msun]", exact=True).input_value() == "0.231"
    with dashboard(browser, demo_url) as (fresh, _):
        assert flux_cells(fresh, "a [au]") == original


def test_loading_a_file_replaces_the_system_or_explains_why_not(browser, demo_url, tmp_path):
    broken = tmp_path / "broken.toml"
    broken.write_text('format = "orbitdeck-system/1"\n[system]\nname = "x"\n')
    other = Path(demo_path("amber_pair"))
    with dashboard(browser, demo_url) as (page, _):
        before = flux_cells(page, "a [au]")
        page.locator('input[type="file"]').set_input_files(str(broken))
        wait_for(lambda: page.get_by_text("not loaded, the current system is kept", exact=False).count() > 0,
                 what="the file error")
        assert flux_cells(page, "a [au]") == before
        page.locator('input[type="file"]').set_input_files(str(other))
        name = load_system(other).name
        wait_for(lambda: name in page.title(), what="the new system's title")
        assert len(flux_cells(page, "a [au]")) == len(load_system(other).planets)


def test_free_text_is_shown_as_text(browser, tmp_path):
    hostile = load_system(demo_path()).name
    text = Path(demo_path()).read_text().replace(f'name = "{hostile}"', 'name = "<img src=x onerror=alert(1)>"')
    text = text.replace('name = "b"', 'name = "<b>b</b>"', 1)
    path = tmp_path / "hostile.toml"
    path.write_text(text)
    # the page's log listens for dialogs (and console errors) from before it navigates, so an alert
    # raised while the page loads counts too
    with served(tmp_path, str(path)) as url, dashboard(browser, url) as (page, log):
        page.wait_for_timeout(1000)
        assert page.locator("img[src='x']").count() == 0 and log.dialogs == []
        assert page.get_by_text("<img src=x onerror=alert(1)>", exact=True).count() >= 1
        assert "<img src=x onerror=alert(1)>" in page.title()
        cells = flux_cells(page, "planet")
        assert cells[0] == "<b>b</b>" and page.locator(".tabulator-cell b").count() == 0
