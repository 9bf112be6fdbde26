"""Static figures: ``orbitdeck figures`` and the page's download of every figure as one archive.

The command runs as a child process (``cli_harness``) on the default demo in
each format; the files are opened by independent readers (pillow for PNG,
the standard library's XML parser for SVG, the PDF header and trailer). The
colours of the figures are counted pixel by pixel against the session's
palette (``browser_support.colour_pixels``), so a figure drawn in the wrong
colours, or blank, fails.
"""

from __future__ import annotations

import io
import re
import xml.etree.ElementTree as ET
import zipfile

import numpy as np
import pytest
from browser_support import colour_pixels
from PIL import Image

from orbitdeck.dashboard.app import VIEW_CLASSES, OrbitDeckApp
from orbitdeck.dashboard.figures import (CAPTIONS_FILE, SLIDE_WIDTH_PX, figures_of, has_figures, render_figure,
                                         slug)
from orbitdeck.demo_systems import DEFAULT_DEMO, demo_path
from orbitdeck.models import Planet, derive, load_demo, load_system
from orbitdeck.models.files.provenance import CAUTION

pytestmark = pytest.mark.filterwarnings("ignore:The inplace keyword in DataFrame.reset_index")
SVG = "{http://www.w3.org/2000/svg}"


@pytest.fixture(scope="module")
def demo_app():
    return OrbitDeckApp(load_demo(DEFAULT_DEMO))


@pytest.fixture(scope="module")
def expected_names(demo_app):
    """The file names (without extension) the demo's figures get: one per plot of every view with figures."""
    figures, _ = figures_of(demo_app)
    return [figure.stem for figure in figures]


@pytest.fixture(scope="module")
def written(cli, tmp_path_factory):
    """The demo's figures written by the command in each format: format -> (folder, result)."""
    made = {}
    for fmt in ("png", "svg", "pdf"):
        folder = tmp_path_factory.mktemp(fmt) / "figures"
        # PNG with the default Monte Carlo draws (error bars), the vector formats with nominal values only
        extra = () if fmt == "png" else ("--samples", "0")
        made[fmt] = folder, cli.run("figures", "-o", folder, "--format", fmt, *extra)
    return made


def _files(folder, fmt):
    return sorted(p for p in folder.iterdir() if p.suffix == f".{fmt}")


@pytest.mark.slow
@pytest.mark.parametrize("fmt", ["png", "svg", "pdf"])
def test_one_file_per_figure_in_every_format(written, expected_names, fmt):
    folder, result = written[fmt]
    assert result.returncode == 0, result.stderr
    assert [p.stem for p in _files(folder, fmt)] == sorted(expected_names)
    assert sorted(p.name for p in folder.iterdir()) == sorted([f"{n}.{fmt}" for n in expected_names]
                                                              + [CAPTIONS_FILE])
    # what was written is printed, with the caution and the views left out
    for name in expected_names:
        assert f"wrote {folder / name}.{fmt}" in result.stderr
    assert "model estimates" in result.stderr
    skipped = [cls.title for cls in VIEW_CLASSES if not has_figures(cls)]
    assert f"no static figures of {', '.join(skipped)}" in result.stderr


def test_every_view_with_figures_has_files_named_after_it(expected_names):
    for view_class in VIEW_CLASSES:
        if has_figures(view_class):
            assert any(name.split("_")[1] == slug(view_class.title) for name in expected_names), view_class.title
    assert len(expected_names) >= 8
    assert all(re.fullmatch(r"[0-9]{2}_[a-z0-9-]+(_[a-z0-9-]+)?", name) for name in expected_names)


def test_png_figures_are_slide_sized_and_carry_their_caption(written):
    folder, _ = written["png"]
    for path in _files(folder, "png"):
        with Image.open(path) as image:
            image.load()
            assert image.format == "PNG" and image.width == SLIDE_WIDTH_PX, path.name
            assert 300 < image.height < 2500, path.name
            assert CAUTION in image.info["Description"] and image.info["Title"]
            pixels = np.asarray(image.convert("RGB"))
        # something is drawn: many colours, and the ground is white
        assert len(np.unique(pixels.reshape(-1, 3), axis=0)) > 50, path.name
        assert (pixels[0, 0] == 255).all() and (pixels[-1, -1] == 255).all(), path.name


def test_svg_figures_parse_and_pdf_figures_are_pdf(written):
    svg_folder, _ = written["svg"]
    for path in _files(svg_folder, "svg"):
        root = ET.parse(path).getroot()
        assert root.tag == f"{SVG}svg" and root.get("width").endswith("pt"), path.name
        assert root.find(f"{SVG}title").text
        assert CAUTION in ET.tostring(root, encoding="unicode")
        assert len(root.findall(f".//{SVG}path")) > 10, path.name
    pdf_folder, _ = written["pdf"]
    for path in _files(pdf_folder, "pdf"):
        data = path.read_bytes()
        assert data.startswith(b"%PDF-") and data.rstrip().endswith(b"%%EOF"), path.name
        assert b"/Title" in data and len(data) > 5000, path.name


def test_the_captions_file_gives_the_provenance_and_a_caption_per_figure(written, expected_names):
    folder, _ = written["png"]
    text = (folder / CAPTIONS_FILE).read_text(encoding="utf-8")
    assert "input: demo:" in text and "input SHA-256:" in text and "4000 Monte Carlo draws" in text
    assert CAUTION in text and "bond_albedo = 0.3" in text
    for name in expected_names:
        assert f"{name}.png\n  " in text


def test_pngs_hold_the_planet_colours_of_the_palette(written, demo_app):
    folder, _ = written["png"]
    names = list(demo_app.derived.planet_names)
    colours = dict(zip(names, demo_app.colours.colours(names)))
    for view in ("layout", "flux-temperature", "observability", "transit-planner"):
        (path,) = [p for p in _files(folder, "png") if p.stem.split("_")[1] == view]
        counts = colour_pixels(path.read_bytes(), colours, strength=(0.95, 1.0), tolerance=10.0)
        assert all(count >= 150 for count in counts.values()), (view, counts)


@pytest.mark.slow
def test_existing_files_are_refused_without_overwrite(cli, tmp_path, expected_names):
    folder = tmp_path / "figures"
    folder.mkdir()
    kept = folder / f"{expected_names[0]}.png"
    kept.write_bytes(b"mine")
    result = cli.run("figures", "-o", folder, "--samples", "0")
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert str(kept) in result.stderr and "--overwrite" in result.stderr and "nothing was written" in result.stderr
    assert [p.name for p in folder.iterdir()] == [kept.name] and kept.read_bytes() == b"mine"
    result = cli.run("figures", "-o", folder, "--samples", "0", "--overwrite")
    assert result.returncode == 0, result.stderr
    assert kept.read_bytes().startswith(b"\x89PNG") and len(list(folder.iterdir())) == len(expected_names) + 1


@pytest.mark.parametrize("argv,message", [
    (["--format", "gif"], "argument --format: invalid choice: 'gif' (choose from 'png', 'svg', 'pdf')"),
    (["--samples", "-1"], "argument --samples: must be from 0 to 20000, not -1"),
    (["--time", "nan"], "argument --time: must be a finite number, not 'nan'"),
])
def test_bad_options_are_refused_with_a_clear_message(cli, tmp_path, argv, message):
    result = cli.run("figures", "-o", tmp_path / "out", *argv)
    assert result.returncode == 2 and "Traceback" not in result.stderr and result.stdout == ""
    assert result.stderr.splitlines()[-1] == f"orbitdeck figures: error: {message}"
    assert not (tmp_path / "out").exists()


def test_an_output_that_is_a_file_or_a_bad_input_is_named(cli, tmp_path):
    plain = tmp_path / "plain"
    plain.write_text("not a folder")
    result = cli.run("figures", "-o", plain)
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert result.stderr.strip() == f"{plain}: is not a folder; figures are written into a folder (-o DIR)"
    bad = tmp_path / "bad.toml"
    bad.write_text(demo_path(DEFAULT_DEMO).read_text(encoding="utf-8").replace(
        "eccentricity = { value = 0.018", "eccentricity = { value = 1.5", 1), encoding="utf-8")
    result = cli.run("figures", bad, "-o", tmp_path / "out")
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert re.search(r"bad\.toml: planets\[\d\] \(\w+\)\.eccentricity: ", result.stderr)
    assert not (tmp_path / "out").exists()


@pytest.mark.slow
def test_the_page_button_downloads_every_figure_of_the_session(expected_names):
    # a session whose palette is not the file's order: b removed, a new planet gets the next colour, and a
    # name holding a formula's dollar signs (shown as typed, never parsed)
    app = OrbitDeckApp(load_system(demo_path(DEFAULT_DEMO)))
    app.system.remove_planet("b")
    app.system.add_planet(Planet(name="$x^2$ new", period=1.5, radius=1.4, transit_time=app.system.epoch + 0.3))
    names = list(app.system.planet_names)
    colours = dict(zip(names, app.colours.colours(names)))
    assert colours["$x^2$ new"] not in app.colours.colours(["c", "d", "e", "f"])
    archive = zipfile.ZipFile(io.BytesIO(app.controls._figures().getvalue()))
    members = archive.namelist()
    assert members[-1] == CAPTIONS_FILE and len(members) == len(expected_names) + 1
    figures, _ = figures_of(app)
    assert members[:-1] == [f"{figure.stem}.png" for figure in figures]
    assert "edited after reading" in archive.read(CAPTIONS_FILE).decode("utf-8")
    for member in members[:-1]:
        with Image.open(io.BytesIO(archive.read(member))) as image:
            assert image.width == SLIDE_WIDTH_PX, member
    layout = archive.read(next(m for m in members if m.split("_")[1] == "layout"))
    counts = colour_pixels(layout, colours, strength=(0.95, 1.0), tolerance=10.0)
    assert all(count >= 150 for count in counts.values()), counts
    assert app.controls.figures.filename == "Ossery_Loom_figures.zip"


def test_the_skies_matrix_figure_puts_each_value_under_its_names(demo_app):
    import holoviews as hv

    figure = next(f for f in figures_of(demo_app)[0] if f.stem.split("_")[1] == "neighbour-skies")
    drawn = hv.renderer("matplotlib").get_plot(figure.plot)
    axes = drawn.handles["axis"]
    columns = {round(x): t.get_text() for x, t in zip(axes.get_xticks(), axes.get_xticklabels())}
    rows = {round(y): t.get_text() for y, t in zip(axes.get_yticks(), axes.get_yticklabels())}
    skies = derive(load_demo(DEFAULT_DEMO)).skies
    expected = {(str(o), str(b)): float(v) for o, b, v in zip(skies["observer"], skies["body"], skies["moon_ratio"])}
    annotations = next(found for found in drawn.traverse(lambda p: p.handles.get("annotations")) if found)
    seen = 0
    for (x, y), text in annotations.items():
        observer, body = rows[round(y)], columns[round(x)]
        if (observer, body) in expected:
            assert text.get_text() == f"{expected[observer, body]:.2g}", (observer, body)
            seen += 1
        else:
            assert observer == body and text.get_text() == "-"
    assert seen == len(expected)


def test_file_names_are_safe():
    for text in ("../../etc/passwd", "C:\\x", "a/b", ".hidden", "\u202eevil", "x" * 300, "$\\frac{", "Ünï cödé"):
        name = slug(text)
        assert re.fullmatch(r"[a-z0-9-]*", name) and len(name) <= 48 and not name.startswith("-")


def test_a_figure_renders_at_any_asked_width(demo_app):
    figure = figures_of(demo_app)[0][0]
    with Image.open(io.BytesIO(render_figure(figure.plot, "png", width_px=800))) as image:
        assert image.width == 800
