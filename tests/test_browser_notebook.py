"""The README's notebook snippet, executed by a Jupyter kernel away from the repository, renders offline.

The snippet is taken from README.md as it stands, run cell by cell with
nbclient in an empty temporary folder (so demo systems must come by name,
not by a path), exported to HTML with nbconvert's default template, and the
export is opened in headless Chromium with every request off the machine
blocked: the dashboard's plots must render. nbconvert's own page template
asks for require.js and MathJax from their CDN; those two requests are
expected (and blocked), nothing of Panel, Bokeh or Tabulator may be.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from browser_support import chromium, offline_page, screenshot

pytestmark = pytest.mark.browser

README = Path(__file__).resolve().parents[1] / "README.md"
#: what nbconvert's "lab" page template itself loads from the network (not the notebook's outputs)
TEMPLATE_REQUESTS = ("https://cdnjs.cloudflare.com/ajax/libs/require.js/",
                     "https://cdnjs.cloudflare.com/ajax/libs/mathjax/")


def notebook_snippet() -> str:
    """The Python block under the README's notebook heading."""
    text = README.read_text(encoding="utf-8")
    section = text[text.index("### In a Jupyter notebook"):]
    return re.search(r"```python\n(.*?)```", section, re.S).group(1)


def test_the_readme_notebook_runs_anywhere_and_its_html_renders_offline(tmp_path):
    nbformat = pytest.importorskip("nbformat")
    from nbclient import NotebookClient
    from nbconvert import HTMLExporter

    cells = [part.strip() for part in notebook_snippet().split("\n\n") if part.strip()]
    assert "load_demo(" in cells[-1] and "inline=True" in notebook_snippet()
    notebook = nbformat.v4.new_notebook(cells=[nbformat.v4.new_code_cell(c) for c in cells])
    NotebookClient(notebook, timeout=600, kernel_name="python3",
                   resources={"metadata": {"path": str(tmp_path)}}).execute()
    outputs = [o for cell in notebook.cells for o in cell.outputs]
    assert not [o for o in outputs if o.output_type == "error"]
    # the extension's resources went into the notebook once, inline (a second load would double the file)
    loaders = [o for o in outputs if "application/vnd.holoviews_load.v0+json" in o.get("data", {})
               and len(o["data"]["application/javascript"]) > 1_000_000]
    assert len(loaders) == 1
    page, _ = HTMLExporter().from_notebook_node(notebook)
    exported = tmp_path / "notebook.html"
    exported.write_text(page, encoding="utf-8")

    with chromium() as browser, offline_page(browser, {"width": 1400, "height": 1000}) as (view, log):
        view.goto(exported.as_uri())
        view.wait_for_selector(".bk-Canvas", timeout=60_000)
        canvas = view.locator(".bk-Canvas").first.bounding_box()
        assert canvas["width"] > 300 and canvas["height"] > 200
        assert view.get_by_text("Ossery Loom", exact=False).count() > 0
        # every plot of the first tab has a rendered view (their titles are drawn on the canvases)
        figures = view.evaluate("""() => [...Bokeh.index.all_views()].filter(v => v.model.type == "Figure")
                                                  .map(v => v.model.title ? v.model.title.text : "")""")
        assert figures and any("orbits" in title for title in figures), figures
        view.wait_for_timeout(1000)
        screenshot(view, "notebook_offline.png")
        unexpected = [url for url in log.blocked_requests if not url.startswith(TEMPLATE_REQUESTS)]
        assert unexpected == []
        assert log.page_errors == []
        # the only console errors are the template's two refused requests
        assert all("Failed to load resource" in m for m in log.console_errors)
        assert len(log.console_errors) <= len(log.blocked_requests)
