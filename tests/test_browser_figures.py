"""The served page's *Download every figure* in headless Chromium: the button of the System file card gives a
zip archive of one PNG per figure, at slide width, with the captions file, and the page logs no error."""

from __future__ import annotations

import io
import zipfile

import pytest
from PIL import Image

from browser_support import open_page, served
from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.dashboard.figures import CAPTIONS_FILE, SLIDE_WIDTH_PX, figures_of
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import load_system

pytestmark = [pytest.mark.browser, pytest.mark.filterwarnings("ignore:The inplace keyword in DataFrame.reset_index")]


def test_the_served_page_downloads_every_figure(browser, tmp_path):
    expected = [f"{figure.stem}.png" for figure in figures_of(OrbitDeckApp(load_system(demo_path())))[0]]
    with served(tmp_path) as url:
        origin = url.rsplit("/", 1)[0]
        with open_page(browser, (origin,)) as (page, log):
            page.goto(url)
            page.wait_for_selector(".bk-Canvas", timeout=60_000)
            button = page.get_by_role("button", name="Download every figure (PNG for slides, zip)")
            assert button.is_visible() and button.is_enabled()
            with page.expect_download(timeout=180_000) as download:
                button.click()
            assert download.value.suggested_filename == "Ossery_Loom_figures.zip"
            saved = tmp_path / download.value.suggested_filename
            download.value.save_as(saved)
        assert log.problems_on_server(origin) == []
    archive = zipfile.ZipFile(saved)
    assert archive.namelist() == [*expected, CAPTIONS_FILE]
    for name in expected:
        with Image.open(io.BytesIO(archive.read(name))) as image:
            assert image.format == "PNG" and image.width == SLIDE_WIDTH_PX, name
