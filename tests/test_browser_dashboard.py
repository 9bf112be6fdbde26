"""The served dashboard in headless Chromium.

``orbitdeck serve --no-show --port P`` runs in a subprocess on a free
loopback port; the page is opened with every request off the machine
blocked, each view is rendered and photographed into ``tests/artifacts/``,
and the controls, the linked selection, the separation of sessions, the
tables at a laptop's width, the accessible names of the controls, the Hill
spheres, the legends and the page's own look are exercised. Values shown are
compared with ``derive()``.
"""

from __future__ import annotations

import contextlib
from pathlib import Path

import numpy as np
import pytest

from browser_support import canvas_colour_pixels, habitable_zone_pixels, open_page, screenshot, served, wait_for
from orbitdeck.dashboard.views import palette
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import derive, load_system

pytestmark = pytest.mark.browser

VIEWS = ("Layout", "Neighbour skies", "Period ladder", "Flux & temperature", "Observability", "Dynamics")
VIEWPORT = {"width": 1500, "height": 1100}
LAPTOP = {"width": 1280, "height": 900}
#: a column that only one data source of each view has, to find it in the browser
MARKER_COLUMNS = {"Layout": "f_deg", "Neighbour skies": "arcsec_range", "Period ladder": "other_text",
                  "Flux & temperature": "teq", "Observability": "tsm_range", "Dynamics": "edge_range"}
#: the column of the semi-major axis in the tables
A_FIELD = "semi_major_axis_au"


@contextlib.contextmanager
def dashboard(browser, url, viewport=VIEWPORT):
    """An open dashboard page (requests off 127.0.0.1 blocked) and its log."""
    origin = url.rsplit("/", 1)[0]
    with open_page(browser, (origin,), viewport) as (page, log):
        page.goto(url)
        page.wait_for_selector(".bk-Canvas", timeout=60_000)
        yield page, log
        assert log.problems_on_server(origin) == []


def column(page, view: str, name: str, marker: str | None = None) -> list:
    """Column ``name`` of the data source of ``view`` as the browser holds it (the view's tab is shown first)."""
    show(page, view)
    finder = """([marker, name]) => {
        const doc = Bokeh.documents[0];
        const source = [...doc._all_models.values()].find(m => m.type == "ColumnDataSource"
                                                              && m.data[marker] !== undefined);
        return source && source.data[name] !== undefined ? Array.from(source.data[name]) : null;
    }"""
    return page.wait_for_function(finder, arg=[marker or MARKER_COLUMNS[view], name], timeout=15_000).json_value()


def planet_on_screen(page, name: str) -> tuple[float, float]:
    """Page coordinates of planet ``name`` in the Layout plot."""
    show(page, "Layout")
    finder = """(name) => {
        const view = Bokeh.index.query_one(v => v.model.type == "Figure"
            && v.model.renderers.some(r => r.data_source && r.data_source.data.f_deg !== undefined));
        if (!view) return null;
        const r = view.model.renderers.find(r => r.data_source && r.data_source.data.f_deg !== undefined);
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
        page.locator(".bk-Canvas:visible").first.wait_for(timeout=30_000)
        page.wait_for_timeout(600)


def table_cells(page, view: str, field: str) -> list[str]:
    """The texts of column ``field`` of a table of ``view``, top to bottom."""
    show(page, view)
    cells = page.locator(f'.tabulator-row .tabulator-cell[tabulator-field="{field}"]')
    cells.first.wait_for(timeout=15_000)
    return cells.all_inner_texts()


def value_of(text: str) -> float:
    """The number shown in a cell (the first line when a range sits beneath it)."""
    return float(text.splitlines()[0].lstrip("\u2248\u2009 "))


def enter(page, label: str, text: str) -> None:
    box = page.get_by_label(label, exact=True)
    box.fill(text)
    box.press("Enter")


def switch_on(page, label: str) -> None:
    page.get_by_role("checkbox", name=label).check()


def test_every_view_renders_offline_without_errors(browser, demo_url):
    with dashboard(browser, demo_url) as (page, log):
        assert "Ossery Loom" in page.title()
        # the sky matrix holds the full grid of 5 observers x 6 bodies (a planet's own cell left empty)
        rows = {"Layout": 5, "Neighbour skies": 30, "Period ladder": 8, "Flux & temperature": 5,
                "Observability": 5, "Dynamics": 4}
        for view in VIEWS:
            show(page, view)
            canvases = page.locator(".bk-Canvas:visible")
            assert canvases.count() >= 1, view
            box = canvases.first.bounding_box()
            assert box["width"] > 300 and box["height"] > 200, view
            assert len(column(page, view, MARKER_COLUMNS[view])) == rows[view], view
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
    """Planet name -> colour, as a new session's colour book gives them (in order of first appearance)."""
    return dict(zip(names, palette.ColourBook(names).colours(names)))


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
                # every orbit is drawn to scale in its planet's colour, and the habitable zone's graded band
                # (conservative and optimistic steps, translucent over the white plot) under them
                assert len(shown) == count, pixels
                zone = habitable_zone_pixels(page, derive(load_system(demo_path())))
                assert min(zone.values()) >= MIN_HZ_PIXELS, zone


def test_the_stellar_mass_control_changes_the_shown_semi_major_axes(browser, demo_url):
    expected = load_system(demo_path())
    expected.star.mass = 0.2
    a = derive(expected).planets["semi_major_axis_au"]
    with dashboard(browser, demo_url) as (page, _):
        before = table_cells(page, "Flux & temperature", A_FIELD)
        enter(page, "Mass [Msun]", "-1")
        wait_for(lambda: page.get_by_text("must be > 0.001 Msun").count() > 0, what="the inline message")
        assert table_cells(page, "Flux & temperature", A_FIELD) == before
        enter(page, "Mass [Msun]", "0.2")
        wait_for(lambda: table_cells(page, "Flux & temperature", A_FIELD) != before, what="the new semi-major axes")
        assert [value_of(t) for t in table_cells(page, "Flux & temperature", A_FIELD)] == pytest.approx(a, rel=1e-3)
        # the refused entry's message has gone with its cause
        assert page.get_by_text("must be > 0.001 Msun").count() == 0
        show(page, "Layout")
        radius = page.evaluate("""() => {
            const s = [...Bokeh.documents[0]._all_models.values()].find(m => m.type == "ColumnDataSource"
                && m.data.x1 !== undefined && m.data.line_width !== undefined && m.data.color !== undefined);
            return Math.max(...Array.from(s.data.x).slice(0, 180).map((x, i) => Math.hypot(x, s.data.y[i])));
        }""")
        # e = 0: the orbit of b is drawn as a circle of radius a about the star, at the new a
        assert radius == pytest.approx(a[0], rel=1e-6)
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
        assert column(page, "Observability", "line_width", marker="tsm_range")[chosen] == 3.0
        for view, field in (("Flux & temperature", A_FIELD), ("Observability", "tsm")):
            show(page, view)
            rows = page.locator(f'.tabulator:has([tabulator-field="{field}"]) .tabulator-row.tabulator-selected')
            assert [t.split()[0] for t in rows.all_inner_texts()] == ["e"], view
            if view == "Flux & temperature":
                screenshot(page, "dashboard_selected_e.png")
        # a row of the Observability table selects as well
        show(page, "Observability")
        page.locator('.tabulator:has([tabulator-field="tsm"]) .tabulator-cell[tabulator-field="planet"]',
                     has_text="c").first.click()
        wait_for(lambda: column(page, "Layout", "size")[names.index("c")] == max(column(page, "Layout", "size")),
                 what="the row's planet to be highlighted")


def test_an_edit_in_one_session_leaves_another_unchanged(browser, demo_url):
    with dashboard(browser, demo_url) as (one, _), dashboard(browser, demo_url) as (two, _):
        original = table_cells(two, "Flux & temperature", A_FIELD)
        enter(one, "Mass [Msun]", "0.3")
        wait_for(lambda: table_cells(one, "Flux & temperature", A_FIELD) != original, what="the edited session")
        two.wait_for_timeout(1500)
        assert table_cells(two, "Flux & temperature", A_FIELD) == original
        assert two.get_by_label("Mass [Msun]", exact=True).input_value() == "0.231"
    with dashboard(browser, demo_url) as (fresh, _):
        assert table_cells(fresh, "Flux & temperature", A_FIELD) == original


def test_loading_a_file_replaces_the_system_or_explains_why_not(browser, demo_url, tmp_path):
    broken = tmp_path / "broken.toml"
    broken.write_text('format = "orbitdeck-system/1"\n[system]\nname = "x"\n')
    other = Path(demo_path("amber_pair"))
    with dashboard(browser, demo_url) as (page, _):
        before = table_cells(page, "Flux & temperature", A_FIELD)
        page.locator('input[type="file"]').set_input_files(str(broken))
        wait_for(lambda: page.get_by_text("not loaded, the current system is kept", exact=False).count() > 0,
                 what="the file error")
        assert table_cells(page, "Flux & temperature", A_FIELD) == before
        page.locator('input[type="file"]').set_input_files(str(other))
        name = load_system(other).name
        wait_for(lambda: name in page.title(), what="the new system's title")
        assert len(table_cells(page, "Flux & temperature", A_FIELD)) == len(load_system(other).planets)
        assert page.get_by_text("not loaded, the current system is kept", exact=False).count() == 0


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
        cells = table_cells(page, "Flux & temperature", "planet")
        assert cells[0] == "<b>b</b>" and page.locator(".tabulator-cell b").count() == 0


def test_tables_never_clip_at_a_laptops_width_with_uncertainties_on(browser, demo_url):
    with dashboard(browser, demo_url, LAPTOP) as (page, _):
        switch_on(page, "Show Monte Carlo uncertainties (all views)")
        page.get_by_text("percentiles of 4000 Monte Carlo draws", exact=False).first.wait_for(timeout=60_000)
        checks = (("Flux & temperature", A_FIELD, "planet"), ("Flux & temperature", "tidal_lock_gyr", "planet"),
                  ("Observability", "esm", "planet"), ("Period ladder", "mutual_hill_spacing", "pair"))
        for view, field, label in checks:
            show(page, view)
            table = page.locator(f'.tabulator:has([tabulator-field="{field}"])').first
            table.wait_for(timeout=15_000)
            page.wait_for_timeout(400)
            frame = table.bounding_box()
            headers = table.locator(".tabulator-col[tabulator-field]:not([tabulator-field='_index'])")
            assert headers.count() >= 4, view
            for i in range(headers.count()):
                box = headers.nth(i).bounding_box()
                # every heading lies within the table's visible width: nothing is cut off or hidden
                assert box["x"] >= frame["x"] - 1 and box["x"] + box["width"] <= frame["x"] + frame["width"] + 1, (
                    view, headers.nth(i).inner_text())
            # the label column stays in view when a narrower window scrolls the table sideways
            frozen = table.locator(f'.tabulator-col.tabulator-frozen[tabulator-field="{label}"]')
            assert frozen.count() == 1, view
            # every value carries its range beneath it
            cell = table.locator(f'.tabulator-row .tabulator-cell[tabulator-field="{field}"]').first
            assert "\u2212" in cell.inner_text() and "\n" in cell.inner_text(), (view, cell.inner_text())
        screenshot(page, "dashboard_tables_1280.png")


def test_checkboxes_and_buttons_carry_accessible_names(browser, demo_url):
    with dashboard(browser, demo_url, LAPTOP) as (page, _):
        tree = page.context.new_cdp_session(page).send("Accessibility.getFullAXTree")
        controls = [(n.get("role", {}).get("value"), (n.get("name") or {}).get("value", ""))
                    for n in tree["nodes"] if not n.get("ignored")]
        boxes = [name for role, name in controls if role == "checkbox"]
        buttons = [name for role, name in controls if role == "button"]
        assert boxes == ["Show Hill spheres (Layout)", "Show Monte Carlo uncertainties (all views)"]
        assert len(buttons) >= 10 and all(name.strip() for name in buttons), buttons
        for name in ("Remove this planet", "Add the planet", "Back to the system epoch", "play"):
            assert name in buttons


def canvas_pixels(page, figure_title: str) -> np.ndarray:
    """The pixels of the canvas of the plot titled ``figure_title``."""
    import io

    from PIL import Image

    canvas = page.locator(".bk-Canvas:visible").first
    for i in range(page.locator(".bk-Canvas:visible").count()):
        candidate = page.locator(".bk-Canvas:visible").nth(i)
        if candidate.bounding_box()["height"] > 300:
            canvas = candidate
            break
    return np.asarray(Image.open(io.BytesIO(canvas.screenshot())).convert("RGB")).astype(int)


def legend_texts(page, marker: str) -> list[str]:
    """Labels of the legend of the figure holding the data source with column ``marker``."""
    return page.evaluate("""(marker) => {
        const fig = [...Bokeh.documents[0]._all_models.values()].find(m => m.type == "Figure"
            && m.renderers.some(r => r.data_source && r.data_source.data[marker] !== undefined));
        return fig.center.filter(a => a.type == "Legend").concat(fig.right.filter(a => a.type == "Legend"))
            .flatMap(l => l.items.filter(i => i.visible !== false).map(i => i.label.value));
    }""", marker)


def test_the_hill_spheres_switch_visibly_changes_the_layout(browser, demo_url):
    with dashboard(browser, demo_url) as (page, _):
        show(page, "Layout")
        page.wait_for_timeout(800)
        before = canvas_pixels(page, "Top-down")
        assert not any(t.startswith("Hill spheres") for t in legend_texts(page, "f_deg"))
        switch_on(page, "Show Hill spheres (Layout)")
        wait_for(lambda: any(t.startswith("Hill spheres") for t in legend_texts(page, "f_deg")),
                 what="the Hill spheres in the legend")
        page.wait_for_timeout(800)
        after = canvas_pixels(page, "Top-down")
        # the legend grows to the right of the plot: compare the part both pictures share
        width = min(before.shape[1], after.shape[1])
        changed = np.any(np.abs(after[:, :width] - before[:, :width]) > 40, axis=-1)
        # at the default zoom the spheres change hundreds of pixels (their rings around every planet)
        assert changed.sum() > 400, changed.sum()
        screenshot(page, "dashboard_hill_spheres.png")


def test_time_plots_have_legends_and_the_elongation_plot_one_body(browser, demo_url):
    # the sky of the first planet (selected when the page opens): the star and every other planet in the legend
    # of the diameters, the nearest other planet alone in the elongation plot until another body is chosen
    names = load_system(demo_path()).planet_names
    observer, others = names[0], names[1:]
    with dashboard(browser, demo_url) as (page, _):
        show(page, "Neighbour skies")
        page.wait_for_timeout(800)
        legends = """() => {
            const figs = [...Bokeh.documents[0]._all_models.values()].filter(m => m.type == "Figure"
                && m.title && m.title.text);
            const legend = (f) => f.right.concat(f.center).filter(a => a.type == "Legend")
                .flatMap(l => l.items.filter(i => i.renderers.some(r => r.visible)).map(i => i.label.value));
            const find = (start) => figs.find(f => f.title.text.startsWith(start));
            return [legend(find("Apparent diameter")), legend(find("Elongation"))];
        }"""
        sizes, elongation = page.evaluate(legends)
        assert page.get_by_text(f"The sky of planet {observer} at", exact=False).count() == 1
        assert len(others) >= 2 and sizes == ["star", *others]
        assert elongation == [others[0]]
        page.get_by_label("Body for the elongation plot").select_option(others[-1])
        wait_for(lambda: page.evaluate(legends)[1] == [others[-1]], what="the chosen body's elongation")
        screenshot(page, "dashboard_skies_time_plots.png")


def test_the_page_has_its_own_look(browser, demo_url):
    with dashboard(browser, demo_url, LAPTOP) as (page, _):
        band = page.locator(".od-band").first
        background = band.evaluate("e => getComputedStyle(e).backgroundColor")
        rgb = [int(v) for v in background[background.index("(") + 1:background.index(")")].split(",")[:3]]
        assert min(rgb) > 220, background            # a light header band, not a dark bar
        assert "orbitdeck" in band.inner_text().lower()
        # no stock template around the page (Panel's templates draw their own header and sidebar)
        assert page.locator("#header, .pn-template, #sidebar").count() == 0
        tab_font = page.locator(".bk-tab").first.evaluate("e => getComputedStyle(e).fontFamily")
        assert "serif" in tab_font.lower() and "sans" not in tab_font.split(",")[-1].lower()
        card = page.locator(".od-card-title", has_text="Star").first
        assert card.evaluate("e => getComputedStyle(e).fontVariant").startswith("small-caps")
        screenshot(page, "dashboard_look.png")


def test_observability_shows_thresholds_and_tsm_ranges(browser, demo_url):
    with dashboard(browser, demo_url) as (page, _):
        show(page, "Observability")
        switch_on(page, "Show Monte Carlo uncertainties (all views)")
        page.get_by_text("percentiles of 4000 Monte Carlo draws", exact=False).first.wait_for(timeout=60_000)
        page.wait_for_timeout(800)
        assert "follow-up threshold (Kempton et al. 2018)" in legend_texts(page, "tsm_range")
        # error bars (whiskers) from the 16th to the 84th percentile of each planet's TSM
        # (switched on after the page opened: the whiskers drawn when the page opened had nothing to show)
        visible, spans = page.evaluate("""() => {
            const fig = [...Bokeh.documents[0]._all_models.values()].find(m => m.type == "Figure"
                && m.renderers.some(r => r.data_source && r.data_source.data.tsm_range !== undefined));
            const whisker = fig.center.find(a => a.type == "Whisker");
            const d = whisker.source.data;
            return [whisker.visible, Array.from(d[whisker.upper.field]).map((u, i) => u - d[whisker.lower.field][i])];
        }""")
        assert visible and len(spans) == len(load_system(demo_path()).planets) and min(spans) > 0
        assert page.get_by_role("columnheader", name="impact parameter [R*]").count() == 1
        screenshot(page, "dashboard_observability_ranges.png")
