"""Snapshots: every view offline, provenance, round trip of the system, escaping, determinism."""

from __future__ import annotations

import hashlib
import re
from datetime import datetime, timezone

import pytest

from browser_support import canvas_colour_pixels, chromium, habitable_zone_pixels, offline_page, screenshot
from orbitdeck.dashboard.offline import external_references
from orbitdeck.dashboard.snapshot import extract_system_text, render_snapshot, without_export_time
from orbitdeck.dashboard.views import palette
from orbitdeck.demo_systems import demo_names, demo_path
from orbitdeck.models import derive, load_system, loads_system

HOSTILE = {
    "system": "<script>window.__owned = 'system'</script>",
    "star": '<img src=x onerror="window.__owned=\'star\'">',
    "planet": '"><svg onload="window.__owned=1">',
    "notes": "</textarea><script>window.__owned='notes'</script>",
}
#: the views every snapshot shows, with the number of Bokeh canvases each at least holds
VIEW_TITLES = ("Layout", "Neighbour skies", "Period ladder", "Flux & temperature", "Observability", "Dynamics",
               "Bulk & atmosphere", "Transit planner")
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
                     "bond_albedo = 0.3", "heat_redistribution = full", "redistribution_factor = 0.25",
                     "nominal values only", "kepler_third_law"):
        assert expected in demo_page, expected


def test_a_snapshot_without_an_ensemble_says_so(demo_page):
    assert "No N-body ensemble was run for this state" in demo_page


def test_the_dashboard_snapshot_carries_a_finished_ensemble():
    from orbitdeck.dashboard.app import OrbitDeckApp

    app = OrbitDeckApp(load_system(demo_path()))
    section = app.views["Dynamics"].ensemble
    section.draws.value, section.orbits.value = 2, 30
    section.start()
    section.job.join(timeout=120)
    section.poll()
    result = section.finished.result
    page = app.controls._snapshot().getvalue().decode("utf-8")
    low, high = result.stable_interval
    # (the page holds the text inside the Bokeh document's JSON: its dash is written \u2013 there)
    assert "Stable to the end: 100.0 %" in page and f"Wilson interval {100 * low:.1f}" in page
    assert "No N-body ensemble was run" not in page and "earlier state" not in page


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


#: the fewest pixels of each planet's colour, and of each habitable-zone fill, the snapshot's plots must show
#: (every orbit is drawn in its planet's colour in the Layout view; a blank plot shows none)
MIN_PIXELS_OF_A_PLANET = 20
MIN_HZ_PIXELS = 2000


def _page_with(*contents: str, before: str = "<html><head><title>t</title>", after: str = "</head><body></body></html>"):
    """A page shaped like a snapshot's head, with one embedded-system tag per content."""
    return before + "".join(f'<meta name="orbitdeck-system" content="{c}">' for c in contents) + after


def _b64(text: str) -> str:
    import base64

    return base64.b64encode(text.encode("utf-8")).decode("ascii")


def _extract_problems(page: str):
    from orbitdeck.models import SystemFileError

    with pytest.raises(SystemFileError) as caught:
        extract_system_text(page, "page.html")
    return caught.value.problems


DAMAGED = "page.html: is an orbitdeck snapshot whose embedded system file is damaged: "


def test_extract_tells_a_damaged_snapshot_from_a_foreign_page():
    good = demo_path().read_text()
    assert extract_system_text(_page_with(_b64(good)), "page.html") == good
    # an empty embedded system, base64 that is not, bytes that are not UTF-8, a tag cut short
    for page, reason in ((_page_with(""), "it is not a valid system file"),
                         (_page_with("@@not base64@@"), "it is not base64-encoded UTF-8 text"),
                         (_page_with(_b64("x")[:-1]), "it is not base64-encoded UTF-8 text"),
                         (_page_with("//79"), "it is not base64-encoded UTF-8 text"),
                         ('<meta name="orbitdeck-system" content="' + _b64(good), "its tag is malformed")):
        problems = _extract_problems(page)
        assert str(problems[0]) == DAMAGED + reason, (page[:80], problems)
    (problem,) = _extract_problems("<html><head></head></html>")
    assert str(problem) == "page.html: is not an orbitdeck snapshot (no embedded system file)"


def test_extract_checks_the_embedded_system_with_the_loader():
    tampered = demo_path().read_text().replace('name = "b"', 'name = "b\\u001b]0;owned\\u0007"', 1)
    problems = _extract_problems(_page_with(_b64(tampered)))
    assert str(problems[0]) == DAMAGED + "it is not a valid system file"
    (field,) = problems[1:]
    assert field.file == "page.html (embedded system file)" and field.field.endswith(".name")
    assert "control character" in field.reason


def test_extract_refuses_a_page_with_a_second_embedded_system():
    good, other = demo_path().read_text(), demo_path("amber_pair").read_text()
    for page in (_page_with(_b64(other), _b64(good)),
                 "<html><head><META NAME=\"orbitdeck-system\" content=\"" + _b64(other) + "\">"
                 + _page_with(_b64(good), before="")):
        (problem,) = _extract_problems(page)
        assert str(problem) == ("page.html: has been altered: it holds 2 embedded system files where a "
                                "snapshot holds one")


def test_a_system_whose_text_holds_the_tag_still_extracts():
    # names and notes are free text: written into the page they must not pass for a second tag
    system = load_system(demo_path())
    system.notes = '<meta name="orbitdeck-system" content="QUFB"> and name="orbitdeck-system"'
    system.planets[1].name = 'c name="orbitdeck-system"'
    page = _snapshot(system)
    assert loads_system(extract_system_text(page), "x").notes == system.notes


def test_the_command_line_reports_a_damaged_snapshot_without_printing_it(tmp_path):
    from cli_harness import ForkedCli

    tampered = demo_path().read_text().replace('name = "b"', 'name = "\\u001b[2J"', 1)
    page = tmp_path / "page.html"
    page.write_text(_page_with(_b64(tampered)))
    empty = tmp_path / "empty.html"
    empty.write_text(_page_with(""))
    with ForkedCli() as cli:
        for path in (page, empty):
            result = cli.run("snapshot", "--extract", path)
            assert result.returncode == 2 and result.stdout == "" and "\x1b" not in result.stderr
            assert result.stderr.startswith(f"{path}: is an orbitdeck snapshot whose embedded system file is damaged")


@pytest.mark.browser
@pytest.mark.parametrize("name", demo_names())
def test_every_demo_snapshot_renders_offline(tmp_path, name):
    path = demo_path(name)
    system = load_system(path)
    out = tmp_path / f"{name}.html"
    out.write_text(_snapshot(system, path.name, path.read_bytes(), samples=100, seed=1))
    planets = dict(zip(system.planet_names, palette.ColourBook(system.planet_names).colours(system.planet_names)))
    with chromium() as browser, offline_page(browser, {"width": 1400, "height": 1000}) as (page, log):
        page.goto(out.as_uri())
        page.wait_for_selector(".bk-Canvas", timeout=30_000)
        page.wait_for_timeout(1500)
        canvases = page.locator(".bk-Canvas").count()
        shown = {text: _shown(page, text) for text in (*VIEW_TITLES, "Provenance", "exported 2026-12-01T12:00:00Z")}
        planet_pixels = canvas_colour_pixels(page, planets)
        derived = derive(system)
        hz_pixels = habitable_zone_pixels(page, derived) if derived.hz_valid else {}
        screenshot(page, f"snapshot_{name}.png")
    assert log.problems() == []
    assert canvases >= len(VIEW_TITLES)
    assert all(shown.values()), shown
    assert min(planet_pixels.values()) >= MIN_PIXELS_OF_A_PLANET, planet_pixels
    if derived.hz_valid:
        assert min(hz_pixels.values()) >= MIN_HZ_PIXELS, hz_pixels


def _hover_every_plot(page) -> None:
    """Scroll each plot into view and sweep the mouse across it in rows, so that every tooltip can render."""
    canvases = page.locator(".bk-Canvas")
    for index in range(canvases.count()):
        canvas = canvases.nth(index)
        if not canvas.is_visible():
            continue
        canvas.scroll_into_view_if_needed()
        box = canvas.bounding_box()
        if not box or box["width"] < 10 or box["height"] < 10:
            continue
        for row in range(1, 8):
            y = box["y"] + box["height"] * row / 8
            page.mouse.move(box["x"] + 2, y)
            page.mouse.move(box["x"] + box["width"] - 2, y, steps=12)


@pytest.mark.browser
def test_hostile_names_run_nothing_in_the_page(tmp_path, hostile_system):
    out = tmp_path / "hostile.html"
    out.write_text(_snapshot(hostile_system))
    # the page's log holds console errors, page errors and dialogs from before it loads
    with chromium() as browser, offline_page(browser) as (page, log):
        page.goto(out.as_uri())
        page.wait_for_selector(".bk-Canvas", timeout=30_000)
        page.wait_for_timeout(1000)
        owned = page.evaluate("window.__owned")
        system_name_shown = _shown(page, HOSTILE["system"])
        _hover_every_plot(page)   # tooltips render the names too
        owned_after_hover = page.evaluate("window.__owned")
    assert owned is None and owned_after_hover is None
    assert system_name_shown  # shown as text
    assert log.problems() == []


def test_the_dashboard_downloads_a_snapshot_of_its_current_state():
    from orbitdeck.dashboard.app import OrbitDeckApp

    app = OrbitDeckApp(load_system(demo_path()))
    app.system.star.mass = 0.125          # an edit made in the session
    app.time = app.system.epoch + 2.5
    page = app.controls._snapshot().getvalue().decode("utf-8")
    kept = loads_system(extract_system_text(page).encode(), "downloaded")
    assert kept.star.mass == 0.125
    assert f"BJD_TDB {app.time:.5f}" in page
    assert "the state shown was edited after reading" in page
    assert hashlib.sha256(extract_system_text(page).encode()).hexdigest() in page


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


#: every element, through the shadow roots, whose computed style starts a new printed page
_PAGE_BREAKS = """() => {
    const found = [];
    const walk = (root) => {
        for (const el of root.querySelectorAll("*")) {
            if (getComputedStyle(el).breakBefore == "page") found.push(el.tagName);
            if (el.shadowRoot) walk(el.shadowRoot);
        }
    };
    walk(document);
    return found.length;
}"""


@pytest.mark.browser
def test_printed_snapshot_puts_each_view_and_the_comparison_on_a_page_of_its_own(tmp_path):
    system = load_system(demo_path("amber_pair"))
    pinned = derive(system, samples=200, seed=4)
    system.star.mass = 1.05
    page = _snapshot(system, samples=200, seed=4, pinned=pinned, pinned_label="the fit")
    assert "the fit" in page
    path = tmp_path / "print.html"
    path.write_text(page)
    with chromium() as browser, offline_page(browser) as (view, log):
        view.goto(path.as_uri())
        view.wait_for_selector(".bk-Canvas", timeout=30_000)
        assert view.evaluate(_PAGE_BREAKS) == 0          # on screen: one long page
        view.emulate_media(media="print")
        sections = len(VIEW_TITLES) + 1                  # and the comparison
        assert view.evaluate(_PAGE_BREAKS) == sections
        pdf = view.pdf(format="A4", landscape=True)
        # a title page (the header) and at least one page per section
        assert pdf.startswith(b"%PDF") and len(re.findall(rb"/Type\s*/Page[^s]", pdf)) >= sections + 1
        assert log.problems() == []


def test_extract_escapes_what_a_terminal_would_act_on_only_when_printing_to_one(tmp_path):
    import os
    import pty
    import subprocess
    import sys

    text = demo_path().read_text().replace('notes = "', 'notes = "reordered \u202eby an override; ', 1)
    page = tmp_path / "page.html"
    page.write_text(_page_with(_b64(text)))
    command = [sys.executable, "-m", "orbitdeck.dashboard.cli", "snapshot", "--extract", str(page)]
    piped = subprocess.run(command, capture_output=True, timeout=120)
    assert piped.returncode == 0 and piped.stdout.decode("utf-8") == text  # a file gets the text as it is
    leader, follower = pty.openpty()
    try:
        shown = subprocess.run(command, stdout=follower, stderr=subprocess.PIPE, timeout=120)
        os.close(follower)
        received = b""
        while True:
            try:
                chunk = os.read(leader, 65536)
            except OSError:
                break
            if not chunk:
                break
            received += chunk
    finally:
        os.close(leader)
    assert shown.returncode == 0
    screen = received.decode("utf-8")
    assert "\u202e" not in screen and "reordered \\u202eby an override" in screen
