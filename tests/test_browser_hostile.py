"""Markup in a system file stays text in the served page.

A system file whose free text (system, star and planet names, notes,
citations) holds script tags, event-handler attributes and attribute-breaking
quotes is served by ``orbitdeck serve`` in a subprocess and opened in
headless Chromium. Every tab is shown, the mouse is moved over every plot
(across the canvas and onto every hoverable glyph) so that the tooltips
render, and each planet is picked in the selector. Nothing may run (each
payload would set ``window.__owned``; none may open a dialog), no element
may be injected, the page may report no error, and the text itself must be
readable on the page and in the tooltips. Uploading malformed files whose
keys, values and file names carry the same markup must show the errors
inline and keep the current system.
"""

from __future__ import annotations

import contextlib
import json
import re
from pathlib import Path

import pytest

from browser_support import open_page, screenshot, served, wait_for
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import load_system

pytestmark = pytest.mark.browser

VIEWPORT = {"width": 1500, "height": 1100}
#: each payload sets window.__owned if the browser ever treats it as markup
SCRIPT = "<script>window.__owned=1</script>"
IMAGE = '<img src=x onerror="window.__owned=2">'
BREAKOUT = '"><svg onload=window.__owned=3>'
SYSTEM_NAME = f"{SCRIPT} Reach"
STAR_NAME = f"{BREAKOUT} star"
NOTES = f"notes {IMAGE} {BREAKOUT} '><img src=x onerror=window.__owned=4>"
PLANETS = {"b": SCRIPT, "c": IMAGE, "d": BREAKOUT}
PLANET_LABEL = "Planet (also picked by clicking it in a view)"

#: screen points of the glyphs of every visible figure that has a hover tool
HOVER_POINTS = """() => {
  const out = [];
  for (const f of Bokeh.index.query(v => v.model.type == "Figure")) {
    const canvas = f.canvas_view.el;
    if (!canvas.checkVisibility()) continue;
    const box = canvas.getBoundingClientRect();
    const hovered = new Set();
    for (const t of f.model.toolbar.tools)
      if (t.type == "HoverTool")
        for (const r of (t.renderers == "auto" ? f.model.renderers : t.renderers)) hovered.add(r.id);
    for (const rv of f.renderer_views.values()) {
      const g = rv.glyph;
      if (!hovered.has(rv.model.id) || !g || !g.sx) continue;
      for (let i = 0; i < g.sx.length; i++) {
        const y = g.sy ? g.sy[i] : (g.stop && g.sbottom ? (g.stop[i] + g.sbottom[i]) / 2 : NaN);
        if (isFinite(g.sx[i]) && isFinite(y)) out.push([box.left + g.sx[i], box.top + y]);
      }
    }
  }
  return out;
}"""
#: elements anywhere in the page (shadow roots included) that a payload would have created
INJECTED = """() => {
  const found = [];
  const walk = (root) => {
    for (const el of root.querySelectorAll("*")) {
      const tag = el.tagName.toLowerCase();
      if ((tag == "script" && el.textContent.includes("__owned")) || (tag == "img" && el.getAttribute("src") == "x")
          || el.hasAttribute("onerror") || el.hasAttribute("onload"))
        found.push(el.outerHTML.slice(0, 120));
      if (el.shadowRoot) walk(el.shadowRoot);
    }
  };
  walk(document);
  return found;
}"""


def toml_text(text: str) -> str:
    """A TOML basic string holding ``text`` (JSON's escapes are TOML's for these characters)."""
    return json.dumps(text)


def hostile_system_text() -> str:
    """The default demo system with markup in every free-text field."""
    text = Path(demo_path()).read_text()
    original = load_system(demo_path())
    text = text.replace(f'name = "{original.name}"', f"name = {toml_text(SYSTEM_NAME)}", 1)
    text = re.sub(r'^notes = ".*"$', lambda _: f"notes = {toml_text(NOTES)}", text, count=1, flags=re.M)
    text = text.replace(f'name = "{original.star.name}"', f"name = {toml_text(STAR_NAME)}", 1)
    for letter, payload in PLANETS.items():
        text = text.replace(f'name = "{letter}"', f"name = {toml_text(payload)}", 1)
    text = text.replace('ref = "invented"', f"ref = {toml_text(IMAGE)}")
    return text


# -- the served page ---------------------------------------------------------------------------------

@contextlib.contextmanager
def dashboard(browser, url):
    """An open dashboard page (requests off the server blocked), its log and the dialogs it opened.

    On leaving, no console error, page error, outside request or dialog may have occurred.
    """
    origin = url.rsplit("/", 1)[0]
    with open_page(browser, (origin,), VIEWPORT) as (page, log):
        dialogs = log.dialogs   # recorded (and dismissed) from before the page loads
        page.goto(url)
        page.wait_for_selector(".bk-Canvas", timeout=60_000)
        page.wait_for_function("() => window.Bokeh && Bokeh.documents.length > 0", timeout=30_000)
        yield page, log, dialogs
        problems = log.problems_on_server(origin)
        assert problems == [], "\n".join(problems)
        assert dialogs == [], dialogs


def tab_names(page) -> list[str]:
    return [t.strip() for t in page.locator(".bk-tab").all_inner_texts()]


#: tabs that hold no plot
TABS_WITHOUT_PLOTS = ("Compare",)


def show(page, tab: str) -> None:
    """Make ``tab`` the active tab (clicking again if the page was not ready for the first click)."""
    target = page.locator(".bk-tab", has_text=tab).first
    for _ in range(5):
        target.click()
        try:
            wait_for(lambda: "bk-active" in (target.get_attribute("class") or ""), timeout=2.0)
            break
        except AssertionError:
            continue
    else:
        raise AssertionError(f"the tab {tab!r} did not become active")
    # a tab's views are built when it is first opened: wait until its plots are drawn (Compare is a table)
    if tab not in TABS_WITHOUT_PLOTS:
        page.locator(".bk-Canvas:visible").first.wait_for(timeout=15_000)
    page.wait_for_timeout(300)


def not_owned(page) -> None:
    assert page.evaluate("() => typeof window.__owned") == "undefined", page.evaluate("() => window.__owned")
    assert page.evaluate(INJECTED) == []


def hover_everything(page) -> set[str]:
    """Move the mouse across every visible canvas and onto every hoverable glyph; the tooltip texts seen."""
    seen: set[str] = set()

    def look():
        for text in page.locator(".bk-tooltip-content:visible").all_inner_texts():
            seen.add(text)

    for canvas in page.locator(".bk-Canvas:visible").all():
        box = canvas.bounding_box()
        if not box or box["width"] < 10 or box["height"] < 10:
            continue
        for row in range(1, 8):
            page.mouse.move(box["x"] + 2, box["y"] + box["height"] * row / 8)
            page.mouse.move(box["x"] + box["width"] - 2, box["y"] + box["height"] * row / 8, steps=12)
            look()
    for x, y in page.evaluate(HOVER_POINTS):
        page.mouse.move(x, y)
        page.wait_for_timeout(40)
        look()
    page.mouse.move(1, 1)
    return seen


@pytest.fixture(scope="module")
def hostile_url(tmp_path_factory):
    folder = tmp_path_factory.mktemp("hostile")
    path = folder / "hostile.toml"
    path.write_text(hostile_system_text())
    with served(folder, str(path)) as url:
        yield url


def load_system_text(text: str):
    from orbitdeck.models import loads_system

    return loads_system(text, "hostile.toml")


def test_the_hostile_file_is_what_this_test_means():
    # the payloads reach the loaded system unchanged, so the page really receives them
    system = load_system_text(hostile_system_text())
    assert system.name == SYSTEM_NAME and system.notes == NOTES and system.star.name == STAR_NAME
    assert system.planet_names[:3] == [SCRIPT, IMAGE, BREAKOUT]
    assert system.star.refs["mass"] == IMAGE


def test_markup_in_names_notes_and_tooltips_stays_text(browser, hostile_url):
    with dashboard(browser, hostile_url) as (page, log, dialogs):
        tips: set[str] = set()
        tabs = tab_names(page)
        assert len(tabs) >= 5, tabs
        # tabs without plots first, so that a tab with a planet table is shown when a planet is picked
        tabs = [t for t in tabs if t in TABS_WITHOUT_PLOTS] + [t for t in tabs if t not in TABS_WITHOUT_PLOTS]
        for tab in tabs:
            show(page, tab)
            tips |= hover_everything(page)
            not_owned(page)
        # the tooltips rendered, and show the names as text
        for payload in PLANETS.values():
            assert any(payload in tip for tip in tips), (payload, sorted(tips)[:5])
        # picking each planet retitles plots and refills the planet entries with the name in it
        select = page.get_by_label(PLANET_LABEL, exact=True)
        for payload in PLANETS.values():
            select.select_option(label=payload)
            wait_for(lambda: page.locator(".tabulator-row.tabulator-selected", has_text=payload).count() > 0,
                     what=f"the planet {payload!r} to be selected")
            for tab in tabs:
                show(page, tab)
            not_owned(page)
        # the text is on the page, as text
        assert page.get_by_text(SYSTEM_NAME, exact=False).count() >= 1
        assert page.get_by_text(STAR_NAME, exact=False).count() >= 1
        assert page.get_by_text(NOTES, exact=False).count() >= 1
        for payload in PLANETS.values():
            assert page.get_by_text(payload, exact=True).count() >= 1, payload
        assert SYSTEM_NAME in page.title()
        screenshot(page, "hostile_page.png")
        not_owned(page)


MALFORMED = {
    # a key and values carrying markup, and a missing star and planets
    "keys.toml": ('format = "orbitdeck-system/1"\n[system]\n'
                  f'name = {toml_text(IMAGE)}\n{toml_text(SCRIPT)} = 1\n'
                  f'[star]\nname = "x"\nmass = {toml_text(BREAKOUT)}\n'),
    # not TOML at all: an unterminated string holding markup
    "syntax.toml": f'format = "orbitdeck-system/1"\n[system]\nname = "{IMAGE[:-1]}\n',
    # bytes that are not UTF-8
    "binary.toml": b"\xff\xfe<\x00s\x00v\x00g\x00 onload=window.__owned=5>\x00\x00\x81",
    # a valid file under a file name made of markup (shown in the messages)
    f"{BREAKOUT}.toml": ('format = "orbitdeck-system/1"\n[system]\nname = "Quiet"\n'
                        '[star]\nname = "q"\nmass = 0.2\nradius = 0.2\nteff = 3100\n'
                        '[[planets]]\nname = "b"\nperiod = -3\nradius = 1.0\n'),
}


def test_a_malformed_upload_is_explained_inline_and_the_system_is_kept(browser, hostile_url):
    with dashboard(browser, hostile_url) as (page, log, dialogs):
        upload = page.locator('input[type="file"]')
        header = page.locator(".od-name", has_text=SYSTEM_NAME)
        assert header.count() == 1
        shown = page.get_by_text("not loaded, the current system is kept", exact=False)
        for name, content in MALFORMED.items():
            before = shown.all_inner_texts()
            data = content.encode() if isinstance(content, str) else content
            upload.set_input_files({"name": name, "mimeType": "application/toml", "buffer": data})
            wait_for(lambda: shown.count() > 0 and shown.all_inner_texts() != before,
                     what=f"the message about {name!r}")
            message = shown.first.inner_text()
            if name == "keys.toml":
                assert SCRIPT in message and "unknown key" in message, message
                assert "star.mass" in message, message
            if name.startswith(BREAKOUT):
                assert "planets[0] (b).period: must be >= 0.001 d" in message, message
            assert "Traceback" not in message, message
            assert header.count() == 1 and SYSTEM_NAME in page.title()
            not_owned(page)
        # and a well-formed hostile file replaces the system, still as text
        other = hostile_system_text().replace(toml_text(SYSTEM_NAME), toml_text(f"{IMAGE} second"), 1)
        upload.set_input_files({"name": "second.toml", "mimeType": "application/toml", "buffer": other.encode()})
        wait_for(lambda: page.locator(".od-name", has_text=f"{IMAGE} second").count() == 1,
                 what="the uploaded system")
        assert page.get_by_text("loaded second.toml", exact=False).count() >= 1
        not_owned(page)
