"""Self-contained HTML snapshots: no fetchable reference, same bytes each save,
and in a real browser with the network cut every plot, tab and table works."""
from __future__ import annotations

import os
import re
import subprocess
import sys
from pathlib import Path

import holoviews as hv
import numpy as np
import pandas as pd
import panel as pn
import pytest

from orbitdeck.dashboard.offline import (
    external_references, render_offline, save_offline)
from orbitdeck.dashboard.offline_resources import ResourceInliner

from browser_support import chromium, offline_page, screenshot

hv.extension("bokeh")

PANEL_DIST = Path(pn.__file__).parent / "dist"
ESCAPED_NOTE = "<p id='note'>ratio &lt;b&gt; 3:2 &amp; 5:3</p>"
N_ROWS = 7


def _table() -> pd.DataFrame:
    return pd.DataFrame({"planet": list("bcdefgh")[:N_ROWS],
                         "period_d": np.round(1.5 * 1.6 ** np.arange(N_ROWS), 3)})


def build_layout(dynamic_tabs: bool = False) -> pn.Column:
    """A moderate layout: two HoloViews plots with hover in tabs, HTML, a table."""
    x = np.linspace(0.0, 10.0, 60)
    curve = hv.Curve((x, np.sin(x)), "t", "signal").opts(
        tools=["hover"], width=420, height=260)
    scatter = hv.Scatter((np.arange(6.0), np.arange(6.0) ** 2), "k", "k2").opts(
        tools=["hover"], size=14, width=420, height=260)
    tabs = pn.Tabs(("Curve", pn.pane.HoloViews(curve)),
                   ("Scatter", pn.pane.HoloViews(scatter)), dynamic=dynamic_tabs)
    return pn.Column(pn.pane.HTML(ESCAPED_NOTE), tabs,
                     pn.widgets.Tabulator(_table(), show_index=False))


def _doc_json_text(page: str) -> str:
    (doc,) = re.findall(r'<script type="application/json"[^>]*>(.*?)</script>', page, re.S)
    return doc


@pytest.fixture(scope="module")
def snapshot(tmp_path_factory):
    path = tmp_path_factory.mktemp("offline") / "snapshot.html"
    report = save_offline(build_layout(), path, title="Offline <check> & co")
    print(f"snapshot: {report.size_bytes / 1e6:.2f} MB, {report.seconds:.2f} s")
    return path, report


# --- the reference scanner itself --------------------------------------------

def test_scanner_finds_every_kind_of_reference():
    doc = ('{"d":{"roots":[{"type":"object","name":"ImportedStyleSheet","id":"p1",'
           '"attributes":{"url":"https://cdn.example/a.css"}},'
           '{"type":"object","name":"HTML","id":"p2","attributes":{"stylesheets":'
           '["@import url(\'https://cdn.example/b.css\');"],'
           '"text":"&amp;lt;img src=&amp;quot;https://img.example/c.png&amp;quot;&amp;gt;"}}]}}')
    page = (
        '<html><head><link rel="stylesheet" href="https://cdn.example/d.css">'
        '<link rel="icon" href="data:,">'
        '<style>.x{background:url("//img.example/e.png")} .y{background:url(data:image/png;base64,AA)}</style>'
        '<script src="https://cdn.example/f.js"></script>'
        # Namespace URIs and links inside JavaScript are not fetches.
        '<script>var ns="http://www.w3.org/2000/svg"; var s="<link href=https://no.example/>";</script>'
        '</head><body><img src="https://img.example/g.png">'
        f'<script type="application/json" id="j">{doc}</script></body></html>')
    found = external_references(page)
    assert sorted(found) == sorted([
        "https://cdn.example/a.css", "https://cdn.example/b.css",
        "https://img.example/c.png", "https://cdn.example/d.css",
        "//img.example/e.png", "https://cdn.example/f.js",
        "https://img.example/g.png"])


def test_plain_panel_save_is_flagged_by_the_scanner(tmp_path):
    # The trap this module exists for: Panel's own INLINE save still links
    # the CDN; the scanner must see that or the snapshot check proves nothing.
    from bokeh.resources import INLINE
    path = tmp_path / "plain.html"
    build_layout().save(str(path), resources=INLINE, title="plain")
    found = external_references(path.read_text(encoding="utf-8"))
    assert any(u.startswith("https://") and u.endswith(".css") for u in found)


# --- the snapshot file --------------------------------------------------------

def test_snapshot_has_no_fetchable_reference(snapshot):
    path, report = snapshot
    page = path.read_text(encoding="utf-8")
    assert external_references(page) == []
    assert report.dropped == ()
    assert report.size_bytes == path.stat().st_size
    # No tag anywhere still loads from a network location.
    assert not re.search(r"<(link|script)\b[^>]*(href|src)=[\"']?(https?:)?//", page, re.I)


def test_snapshot_holds_the_package_files(snapshot):
    path, report = snapshot
    page = path.read_text(encoding="utf-8")
    tabulator_css = next(PANEL_DIST.glob(
        "bundled/datatabulator/tabulator-tables@*/dist/css/tabulator_simple.min.css"))
    # A distinctive run of the installed style sheet, as the JSON string escapes it.
    snippet = tabulator_css.read_text(encoding="utf-8")[200:320]
    assert snippet.replace('"', '\\"') in page
    assert any(u.endswith("tabulator_simple.min.css") for u in report.inlined)
    assert any(u.endswith("theme/native.css") for u in report.inlined)
    # Font Awesome's three fonts are embedded once each, as WOFF2 only.
    doc = _doc_json_text(page)
    assert doc.count("data:font/woff2;base64,") == 3
    assert "embedded-opentype" not in doc and ".eot" not in doc


def test_title_is_escaped_and_extra_head_lands_in_head(tmp_path):
    extra = ('<meta name="generator-note" content="model estimates">'
             '<link rel="stylesheet" href="https://cdn.holoviz.org/panel/'
             f'{pn.__version__}/dist/css/markdown.css">'
             '<link rel="stylesheet" href="https://elsewhere.example/theme.css">'
             '<style>@import url("https://fonts.example/f.css"); h1 {color: teal}</style>')
    report = save_offline(pn.Column(pn.pane.HTML("<b>x</b>")), tmp_path / "t.html",
                          title="<script>alert(1)</script> & co", extra_head=extra)
    page = (tmp_path / "t.html").read_text(encoding="utf-8")
    head = page[:page.rindex("</head>")]  # the real one follows every head script
    assert "<title>&lt;script&gt;alert(1)&lt;/script&gt; &amp; co</title>" in head
    assert '<meta name="generator-note" content="model estimates">' in head
    # The local style sheet is inlined; the unknown one is dropped and reported.
    markdown_css = (PANEL_DIST / "css" / "markdown.css").read_text(encoding="utf-8")
    assert markdown_css[:80] in head
    assert report.dropped == ("https://elsewhere.example/theme.css",
                              "https://fonts.example/f.css")
    assert "<style> h1 {color: teal}</style>" in head
    assert external_references(page) == []


def test_remote_image_in_markup_is_dropped_and_reported(tmp_path):
    pane = pn.pane.HTML('<p>star</p><img src="https://img.example/star.png?a=1&b=2" alt="s">')
    page, report = render_offline(pn.Column(pane), title="img")
    assert report.dropped == ("https://img.example/star.png?a=1&b=2",)
    assert external_references(page) == []
    assert "alt=" in page  # the rest of the markup is kept


def test_font_face_keeps_only_woff2_sources():
    css_file = PANEL_DIST / "bundled" / "font-awesome" / "css" / "all.min.css"
    inliner = ResourceInliner()
    out = inliner.css(css_file.read_text(encoding="utf-8"), css_file.resolve().as_uri())
    faces = re.findall(r"@font-face\s*\{[^}]*\}", out)
    assert len(faces) == 3  # brands, regular, solid
    for face in faces:
        assert face.count("data:font/woff2;base64,") == 1
        assert ".eot" not in face and ".ttf" not in face and "data:," not in face
    assert not inliner.dropped


def test_cdn_urls_map_to_installed_package_files(tmp_path):
    import bokeh
    inliner = ResourceInliner()
    bokeh_js = Path(bokeh.__file__).parent / "server" / "static" / "js" / "bokeh-widgets.min.js"
    assert inliner.local_path(
        f"https://cdn.bokeh.org/bokeh/release/bokeh-widgets-{bokeh.__version__}.min.js"
    ) == bokeh_js.resolve()
    assert inliner.local_path(
        f"https://cdn.holoviz.org/panel/{pn.__version__}/dist/css/loading.css?v=1"
    ) == (PANEL_DIST / "css" / "loading.css").resolve()
    tabulator_dir = next(PANEL_DIST.glob("bundled/datatabulator/tabulator-tables@*"))
    assert inliner.local_path(
        f"https://cdn.jsdelivr.net/npm/{tabulator_dir.name}/dist/css/tabulator_simple.min.css"
    ) == (tabulator_dir / "dist" / "css" / "tabulator_simple.min.css").resolve()
    assert inliner.local_path("https://cdn.example/unknown.css") is None
    # Only files of the installed packages are ever read into a snapshot.
    private = tmp_path / "private.css"
    private.write_text("body{}", encoding="utf-8")
    assert inliner.local_path(private.as_uri()) is None
    assert inliner.local_path(
        f"https://cdn.holoviz.org/panel/{pn.__version__}/dist/../../../../etc/passwd") is None


def test_dynamic_tabs_are_built_in_full_and_restored(tmp_path):
    layout = build_layout(dynamic_tabs=True)
    page, _ = render_offline(layout, title="dyn")
    # Both plots made it into the document even though only one tab is active.
    assert page.count('"name":"Figure"') == 2
    assert layout.select(pn.Tabs)[0].dynamic is True


def test_templates_and_missing_folders_are_refused_clearly(tmp_path):
    with pytest.raises(TypeError, match="plain layout"):
        render_offline(pn.template.VanillaTemplate(main=[pn.pane.HTML("x")]), title="t")
    with pytest.raises(FileNotFoundError, match="does not exist"):
        save_offline(pn.Column(pn.pane.HTML("x")), tmp_path / "no" / "such.html", title="t")


# --- determinism --------------------------------------------------------------

def test_two_saves_are_byte_identical(tmp_path):
    layout = build_layout()
    save_offline(layout, tmp_path / "a.html", title="same")
    save_offline(layout, tmp_path / "b.html", title="same")
    save_offline(build_layout(), tmp_path / "c.html", title="same")
    a, b, c = ((tmp_path / n).read_bytes() for n in ("a.html", "b.html", "c.html"))
    assert a == b
    assert a == c
    # Bokeh's random element and document ids are gone.
    tail = a[a.rindex(b"<body>"):].decode("utf-8")
    assert not re.search(r"[0-9a-f]{8}-[0-9a-f]{4}-4[0-9a-f]{3}-[89ab][0-9a-f]{3}-[0-9a-f]{12}", tail)
    # ...but the content still decides the bytes.
    save_offline(layout, tmp_path / "d.html", title="other")
    assert (tmp_path / "d.html").read_bytes() != a


def test_saves_from_separate_processes_are_byte_identical(tmp_path):
    # Different hash seeds reorder Python sets (e.g. Tabulator's subscribed events).
    script = ("import sys; from test_offline import build_layout; "
              "from orbitdeck.dashboard.offline import save_offline; "
              "save_offline(build_layout(), sys.argv[1], title='same')")
    outputs = []
    for seed in ("1", "2"):
        out = tmp_path / f"seed{seed}.html"
        subprocess.run([sys.executable, "-c", script, str(out)], check=True,
                       cwd=Path(__file__).parent, capture_output=True,
                       env={**os.environ, "PYTHONHASHSEED": seed})
        outputs.append(out.read_bytes())
    assert outputs[0] == outputs[1]


# --- in the browser, network cut ----------------------------------------------

_SCATTER_POINT_JS = """
([x, y]) => {
  // Screen position of data point (x, y) in the scatter plot, from BokehJS's
  // own scales, and the plot's current x-range start.
  for (const v of Bokeh.index.all_views()) {
    if (v.model.type !== "Figure") continue;
    if (!v.model.renderers.some(r => r.glyph && r.glyph.type === "Scatter")) continue;
    const r = v.canvas_view.el.getBoundingClientRect();
    return {sx: r.left + v.frame.x_scale.compute(x),
            sy: r.top + v.frame.y_scale.compute(y),
            x_start: v.model.x_range.start,
            visible: v.canvas_view.el.checkVisibility({visibilityProperty: true})};
  }
  return null;
}"""


@pytest.mark.browser
def test_snapshot_renders_offline(snapshot):
    path, _ = snapshot
    with chromium() as browser, offline_page(browser) as (page, log):
        page.goto(path.resolve().as_uri())
        page.wait_for_selector(".bk-Canvas", timeout=30_000)
        page.wait_for_selector(".tabulator-row", timeout=30_000)
        page.wait_for_timeout(500)

        # One canvas per plot; the visible tab's plot is shown.
        assert page.locator(".bk-Canvas").count() == 2
        assert page.locator(".tabulator-row").count() == N_ROWS
        cells = page.locator('.tabulator-cell[tabulator-field="planet"]')
        assert cells.all_inner_texts() == list(_table()["planet"])
        # Escaped text stays text: the browser shows the characters, no <b> tag.
        note = page.locator("#note")
        assert note.inner_text() == "ratio <b> 3:2 & 5:3"
        assert note.locator("b").count() == 0
        # Tabs are styled as tabs (Bokeh's tab strip, the active one marked).
        tab_headers = page.locator(".bk-tab")
        assert tab_headers.count() == 2
        assert "bk-active" in tab_headers.nth(0).get_attribute("class")
        # The Tabulator theme sheet was applied (its header is not the default
        # transparent box of an unstyled div).
        header_bg = page.eval_on_selector(
            ".tabulator-header", "e => getComputedStyle(e).backgroundColor")
        assert header_bg not in ("", "rgba(0, 0, 0, 0)")
        screenshot(page, "offline_snapshot.png")

        # Second tab: the scatter plot; hover a point and pan.
        assert page.evaluate(_SCATTER_POINT_JS, [3.0, 9.0])["visible"] is False
        tab_headers.nth(1).click()
        page.wait_for_timeout(400)
        pt = page.evaluate(_SCATTER_POINT_JS, [3.0, 9.0])
        assert pt["visible"] is True
        page.mouse.move(pt["sx"], pt["sy"])
        values = page.locator(".bk-Tooltip .bk-tooltip-row-value")
        values.first.wait_for(state="visible", timeout=5_000)
        shown = [v.strip() for v in values.all_inner_texts()]
        assert "3" in shown and "9" in shown  # the hovered point (k=3, k2=9)
        page.mouse.down()
        page.mouse.move(pt["sx"] - 80, pt["sy"], steps=8)
        page.mouse.up()
        page.wait_for_timeout(200)
        after = page.evaluate(_SCATTER_POINT_JS, [3.0, 9.0])
        assert after["x_start"] > pt["x_start"]  # dragged left: range moved right
        screenshot(page, "offline_snapshot_tab2.png")

    assert log.problems() == []
