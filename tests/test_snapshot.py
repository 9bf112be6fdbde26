"""Snapshots: every view offline, provenance, round trip of the system, escaping, determinism."""

from __future__ import annotations

from datetime import datetime, timezone

import pytest

from browser_support import chromium, offline_page, screenshot
from orbitdeck.dashboard.offline import external_references
from orbitdeck.dashboard.snapshot import extract_system_text, render_snapshot, without_export_time
from orbitdeck.demo_systems import demo_names, demo_path
from orbitdeck.models import derive, load_system, loads_system

HOSTILE = {
    "system": "<script>window.__owned = 'system'</script>",
    "star": '<img src=x onerror="window.__owned=\'star\'">',
    "planet": '"><svg onload="window.__owned=1">',
    "notes": "</textarea><script>window.__owned='notes'</script>",
}
#: the views every snapshot shows, with the number of Bokeh canvases each at least holds
VIEW_TITLES = ("Layout", "Neighbour skies", "Period ladder", "Flux & temperature", "Observability", "Dynamics")
EXPORTED = datetime(2026, 12, 1, 12, 0, 0, tzinfo=timezone.utc)


def _shown(page, text: str) -> bool:
    """Whether ``text`` is visible somewhere (Playwright's text locators see through shadow roots)."""
    return page.get_by_text(text, exact=False).first.is_visible()


def _snapshot(system, name="demo.toml", data=b"x", **options):
    return render_snapshot(system, name, data, exported=EXPORTED, **options)


@pytest.fixture(scope="module")
def demo_page():
    path = demo_path()
    return _snapshot(load_system(path), path.name, path.read_bytes())


@pytest.fixture(scope="module")
def hostile_system():
    system = load_system(demo_path())
    system.name = HOSTILE["system"]
    system.notes = HOSTILE["notes"]
    system.star.name = HOSTILE["star"]
    system.planets[0].name = HOSTILE["planet"]
    system.planets[0].refs = {"radius": "<b onmouseover=alert(1)>ref</b>"}
    return system


def test_snapshot_embeds_the_system_and_it_round_trips(demo_page):
    text = extract_system_text(demo_page)
    again = loads_system(text.encode(), "extracted")
    # the same derived document, number for number (orbitdeck-derived/1 is our own format)
    assert derive(again).to_dict() == derive(load_system(demo_path())).to_dict()
    assert derive(again, samples=300, seed=5).to_dict() == derive(load_system(demo_path()), samples=300,
                                                                  seed=5).to_dict()


def test_provenance_names_version_time_file_hash_and_assumptions(demo_page):
    import hashlib

    from orbitdeck import __version__

    digest = hashlib.sha256(demo_path().read_bytes()).hexdigest()
    for expected in (__version__, "exported 2026-12-01T12:00:00Z", demo_path().name, digest,
                     "Bond albedo 0.3", "heat redistribution full", "nominal values only"):
        assert expected in demo_page, expected


def test_sampled_snapshot_states_samples_and_seed():
    page = _snapshot(load_system(demo_path()), samples=200, seed=11)
    assert "200 Monte Carlo samples, seed 11" in page


def test_two_exports_differ_only_in_the_export_time():
    system = load_system(demo_path())
    first = render_snapshot(system, "a.toml", b"x", exported=EXPORTED)
    second = render_snapshot(system, "a.toml", b"x", exported=datetime(2027, 1, 2, 3, 4, 5, tzinfo=timezone.utc))
    assert first != second
    assert without_export_time(first) == without_export_time(second)


def test_snapshot_has_no_fetchable_reference(demo_page):
    assert external_references(demo_page) == []


def test_hostile_text_is_escaped_in_the_markup(hostile_system):
    page = _snapshot(hostile_system)
    for text in HOSTILE.values():
        assert text not in page  # never raw, only escaped (in HTML) or JSON-encoded (in plot data)
    round_trip = loads_system(extract_system_text(page).encode(), "extracted")
    assert round_trip.name == HOSTILE["system"] and round_trip.planets[0].name == HOSTILE["planet"]


def test_extract_refuses_a_page_without_a_system():
    from orbitdeck.models import SystemFileError

    with pytest.raises(SystemFileError, match="not an orbitdeck snapshot"):
        extract_system_text("<html></html>", "page.html")


@pytest.mark.browser
@pytest.mark.parametrize("name", demo_names())
def test_every_demo_snapshot_renders_offline(tmp_path, name):
    path = demo_path(name)
    out = tmp_path / f"{name}.html"
    out.write_text(_snapshot(load_system(path), path.name, path.read_bytes(), samples=100, seed=1))
    with chromium() as browser, offline_page(browser, {"width": 1400, "height": 1000}) as (page, log):
        page.goto(out.as_uri())
        page.wait_for_selector(".bk-Canvas", timeout=30_000)
        page.wait_for_timeout(1500)
        canvases = page.locator(".bk-Canvas").count()
        shown = {text: _shown(page, text) for text in (*VIEW_TITLES, "Provenance", "exported 2026-12-01T12:00:00Z")}
        screenshot(page, f"snapshot_{name}.png")
    assert log.problems() == []
    assert canvases >= len(VIEW_TITLES)
    assert all(shown.values()), shown


@pytest.mark.browser
def test_hostile_names_run_nothing_in_the_page(tmp_path, hostile_system):
    out = tmp_path / "hostile.html"
    out.write_text(_snapshot(hostile_system))
    with chromium() as browser, offline_page(browser) as (page, log):
        dialogs = []
        page.on("dialog", lambda d: (dialogs.append(d.message), d.dismiss()))
        page.goto(out.as_uri())
        page.wait_for_selector(".bk-Canvas", timeout=30_000)
        page.wait_for_timeout(1000)
        owned = page.evaluate("window.__owned")
        system_name_shown = _shown(page, HOSTILE["system"])
        # hover every planet point of the first plot so tooltips render the names too
        canvas = page.locator(".bk-Canvas").first
        box = canvas.bounding_box()
        for step in range(0, 10):
            page.mouse.move(box["x"] + box["width"] * step / 10, box["y"] + box["height"] / 2)
        owned_after_hover = page.evaluate("window.__owned")
    assert owned is None and owned_after_hover is None and dialogs == []
    assert system_name_shown  # shown as text
    assert log.page_errors == []


def test_the_dashboard_downloads_a_snapshot_of_its_current_state():
    from orbitdeck.dashboard.app import OrbitDeckApp

    app = OrbitDeckApp(load_system(demo_path()))
    app.system.star.mass = 0.125          # an edit made in the session
    app.time = app.system.epoch + 2.5
    page = app.controls._snapshot().getvalue().decode("utf-8")
    kept = loads_system(extract_system_text(page).encode(), "downloaded")
    assert kept.star.mass == 0.125
    assert f"BJD_TDB {app.time:.5f}" in page
    assert "edited in the dashboard" in page


@pytest.mark.browser
def test_the_served_page_downloads_a_working_snapshot(tmp_path):
    from browser_support import open_page, served

    with served(tmp_path) as url, chromium() as browser:
        origin = url.rsplit("/", 1)[0]
        with open_page(browser, (origin,)) as (page, log):
            page.goto(url)
            page.wait_for_selector(".bk-Canvas", timeout=60_000)
            with page.expect_download(timeout=60_000) as download:
                page.get_by_text("Download a snapshot of this state", exact=False).first.click()
            saved = tmp_path / download.value.suggested_filename
            download.value.save_as(saved)
        assert log.problems_on_server(origin) == []
        with offline_page(browser) as (offline, offline_log):
            offline.goto(saved.as_uri())
            offline.wait_for_selector(".bk-Canvas", timeout=30_000)
            assert offline_log.problems() == []
    assert extract_system_text(saved.read_text()).startswith('format = "orbitdeck-system/1"')
