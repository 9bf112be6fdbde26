"""The served page stays on this machine, shows no raw numbers' oddities, and outlives an oversize upload.

* Every tab and every control is used with every request off the server
  blocked (and recorded): the page must ask nothing of any other host.
* A system with an exact 2:1 pair (an infinite TTV super-period), two planets
  on one period (a spacing of about -0.003 mutual Hill radii), estimated masses
  and no magnitudes (no TSM or ESM) must show no "Infinity", "NaN" or "-0.00"
  in any table, tooltip or text, in the served page and in its snapshot.
* Files over the size limit (3 and 16 MiB) are refused with a message and the
  session goes on: an edit afterwards still reaches the views, a valid file
  still loads, and loads again when chosen again.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from browser_support import offline_page, screenshot, served, wait_for
from orbitdeck.dashboard.snapshot import render_snapshot
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import load_system, loads_system
from orbitdeck.models.files.system_file import MAX_FILE_BYTES
from test_browser_hostile import dashboard, hover_everything, show, tab_names

pytestmark = pytest.mark.browser

#: a system with missing and infinite derived values (see the file)
CROWDED = (Path(__file__).parent / "data" / "crowded_pair.toml").read_text(encoding="utf-8")
#: what a reader must never see: raw non-numbers and a negative zero
ODDITIES = re.compile(r"Infinity|\bNaN\b|\binf\b|\bnan\b|(?<![\w.])[-\u2212]0(?:\.0+)?(?![\d.e])")


def oddities(texts) -> list[str]:
    return [t for t in texts if ODDITIES.search(t)]


def readable_texts(page) -> list[str]:
    """What a reader sees of the page: its text, the table cells and the texts drawn in the plots."""
    texts = [page.locator("body").inner_text()]
    texts += page.locator(".tabulator-cell:visible").all_inner_texts()
    texts += page.evaluate("""() => {
        const out = [];
        for (const m of Bokeh.documents[0]._all_models.values()) {
            if (m.type == "Label" || m.type == "Title") out.push(String(m.text));
            if (m.type == "ColumnDataSource")
                for (const [k, v] of Object.entries(m.data))
                    if (k.includes("text") || k.includes("label")) for (const x of v) out.push(String(x));
        }
        return out;
    }""")
    return texts


def tick(page, label: str) -> None:
    """Tick the check box named ``label`` (its input sits inside its label, which gives it that accessible name)."""
    page.get_by_role("checkbox", name=label, exact=True).check()


def enter(page, label: str, text: str) -> None:
    box = page.get_by_label(label, exact=True)
    box.fill(text)
    box.press("Enter")


@pytest.fixture(scope="module")
def crowded_url(tmp_path_factory):
    folder = tmp_path_factory.mktemp("crowded")
    path = folder / "crowded.toml"
    path.write_text(CROWDED)
    with served(folder, str(path)) as url:
        yield url


@pytest.fixture(scope="module")
def demo_url(tmp_path_factory):
    with served(tmp_path_factory.mktemp("demo")) as url:
        yield url


def test_every_tab_and_control_stays_on_this_machine(browser, demo_url):
    # dashboard() blocks and records every request off the server, and fails on any at the end
    with dashboard(browser, demo_url) as (page, log, dialogs):
        tabs = tab_names(page)
        for tab in tabs:
            show(page, tab)
        # the star, the assumptions, the planet and its entries
        enter(page, "Mass [Msun]", "0.125")
        enter(page, "Luminosity [Lsun] (blank: 4 pi R^2 sigma Teff^4)", "0.0012")
        page.get_by_label("Heat redistribution", exact=True).select_option(label="dayside only (f = 1/2)")
        for slider in page.locator(".noUi-handle").all()[:2]:
            slider.focus()
            slider.press("ArrowRight")
        page.get_by_label("Planet (also picked by clicking it in a view)", exact=True).select_option(label="c")
        enter(page, "Period [d]", "2.9")
        enter(page, "Inclination [deg]", "88.5")
        # adding and removing a planet, and the tab that once fetched style sheets from a CDN after it
        enter(page, "New planet: name", "z")
        enter(page, "New planet: period [d]", "33.3")
        page.get_by_role("button", name="Add the planet").click()
        wait_for(lambda: page.get_by_text("added planet z").count() > 0, what="the new planet")
        show(page, "Neighbour skies")
        page.get_by_role("button", name="Remove this planet").click()
        # time and display
        enter(page, "Time of the positions [BJD_TDB]", "2461004.5")
        for name in ("step \u25b6", "\u25c0 step", "Back to the system epoch"):
            page.get_by_role("button", name=name).first.click()
        page.get_by_role("button", name="play").first.click()
        page.wait_for_timeout(800)
        page.get_by_role("button", name="play").first.click()
        tick(page, "Show Hill spheres (Layout)")
        page.get_by_label("Scale reference (Layout)", exact=True).select_option(index=1)
        tick(page, "Show Monte Carlo uncertainties (all views)")
        wait_for(lambda: page.get_by_text("shown: 16th").count() > 0, timeout=60, what="the Monte Carlo draws")
        # a file, and every tab again
        page.locator('input[type="file"]').set_input_files(
            {"name": "amber.toml", "mimeType": "application/toml", "buffer": demo_path("amber_pair").read_bytes()})
        wait_for(lambda: page.get_by_text("loaded amber.toml").count() > 0, what="the uploaded system")
        for tab in [*tabs[1:], tabs[0]]:
            show(page, tab)
            hover_everything(page)
        screenshot(page, "every_control.png")
        assert log.blocked_requests == []


def test_no_infinity_nan_or_negative_zero_in_the_served_page(browser, crowded_url):
    with dashboard(browser, crowded_url) as (page, log, dialogs):
        seen = []
        for tab in tab_names(page):
            show(page, tab)
            seen += sorted(hover_everything(page))
            seen += readable_texts(page)
        assert any("\u2014" in t for t in seen)  # the missing values are there, written as a dash
        assert oddities(seen) == [], "\n".join(oddities(seen))
        screenshot(page, "crowded_pair.png")


def test_no_infinity_nan_or_negative_zero_in_the_snapshot(browser, tmp_path):
    page_path = tmp_path / "crowded.html"
    page_path.write_text(render_snapshot(loads_system(CROWDED, "crowded.toml"), "crowded.toml", CROWDED.encode()))
    with offline_page(browser, {"width": 1400, "height": 1000}) as (page, log):
        page.goto(page_path.as_uri())
        page.wait_for_selector(".bk-Canvas", timeout=60_000)
        page.wait_for_timeout(1000)
        seen = sorted(hover_everything(page)) + readable_texts(page)
        assert oddities(seen) == [], "\n".join(oddities(seen))
        assert log.problems() == []


def test_an_oversize_upload_is_refused_and_the_session_lives_on(browser, demo_url):
    with dashboard(browser, demo_url) as (page, log, dialogs):
        chooser = page.locator('input[type="file"]')
        message = page.get_by_text("not loaded, the current system is kept", exact=False)
        for size in (3 * 1024 * 1024, 16 * 1024 * 1024):
            before = message.all_inner_texts()
            chooser.set_input_files({"name": f"big{size}.toml", "mimeType": "application/toml",
                                     "buffer": b"#" * size})
            wait_for(lambda: message.count() > 0 and message.all_inner_texts() != before,
                     what=f"the refusal of {size} bytes")
            text = message.first.inner_text()
            assert f"big{size}.toml: " in text and f" is {size} bytes;" in text, text
            assert f"system files are limited to {MAX_FILE_BYTES} bytes" in text, text
        # the session is alive: an edit still reaches the views, a valid file still loads
        enter(page, "Mass [Msun]", "0.131")
        wait_for(lambda: page.get_by_text("M = 0.131 Msun", exact=False).count() > 0, what="the edit to apply")
        amber = {"name": "amber.toml", "mimeType": "application/toml", "buffer": demo_path("amber_pair").read_bytes()}
        chooser.set_input_files(amber)
        other = load_system(demo_path("amber_pair"))
        header = page.get_by_role("banner")
        wait_for(lambda: header.filter(has_text=other.name).count() == 1, what="the valid file to load")
        assert page.get_by_text(f"loaded amber.toml: {len(other.planets)} planets").count() == 1
        # the same file chosen again is read again: it undoes an edit made since
        enter(page, "Mass [Msun]", "0.5")
        wait_for(lambda: page.get_by_text("M = 0.5 Msun", exact=False).count() > 0, what="the second edit to apply")
        chooser.set_input_files(amber)
        wait_for(lambda: page.get_by_text(f"M = {other.star.mass:.4g} Msun", exact=False).count() > 0,
                 what="the same file to load again")
        assert len([w for w in log.websockets if w.endswith("/ws")]) <= 1  # never reconnected


def test_another_site_cannot_show_the_dashboard_in_a_frame(browser, demo_url, tmp_path):
    import functools
    import http.server
    import threading

    from browser_support import free_port, open_page

    (tmp_path / "index.html").write_text(f'<html><body><iframe id="f" src="{demo_url}" width="900" height="700">'
                                         "</iframe></body></html>")
    handler = functools.partial(http.server.SimpleHTTPRequestHandler, directory=str(tmp_path))
    other = http.server.ThreadingHTTPServer(("127.0.0.1", free_port()), handler)
    thread = threading.Thread(target=other.serve_forever, daemon=True)
    thread.start()
    try:
        site = f"http://127.0.0.1:{other.server_address[1]}"
        with open_page(browser, (site, demo_url.rsplit("/", 1)[0])) as (page, log):
            page.goto(f"{site}/index.html")
            page.wait_for_timeout(4000)
            framed = [f for f in page.frames if f != page.main_frame]
            assert framed, "the frame was not even created"
            for frame in framed:
                try:
                    loaded = frame.evaluate("() => !!(window.Bokeh && Bokeh.documents.length)")
                except Exception:  # a blocked frame holds an error page that scripts cannot reach
                    loaded = False
                assert not loaded
            assert any("frame-ancestors" in m or "X-Frame-Options" in m or "refused" in m.lower()
                       for m in log.console_errors), log.console_errors
    finally:
        other.shutdown()
        other.server_close()
