"""The page keeps to the same limits as the files: times, planet count, names, file size (without a browser)."""

from __future__ import annotations

import html
import re

import pytest

from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import Planet, System, dumps_system, load_system
from orbitdeck.models.files.system_file import MAX_FILE_BYTES
from orbitdeck.models.files.system import MAX_PLANETS

pytestmark = pytest.mark.filterwarnings("ignore:The inplace keyword in DataFrame.reset_index")


def shown(pane) -> str:
    """The text a user reads in an HTML pane."""
    return html.unescape(re.sub(r"<[^>]+>", "", pane.object or ""))


@pytest.fixture
def app():
    return OrbitDeckApp(load_system(demo_path()))


@pytest.mark.parametrize("text", ["1e308", "-1e308", "10000001", "1e7000"])
def test_the_time_entry_refuses_times_beyond_the_range(app, text):
    before = app.time
    app.controls.time_entry.value = text
    assert app.time == before
    assert shown(app.controls.time_message).startswith("time: must be")
    app.controls.time_entry.value = "2461003.25"
    assert app.time == 2461003.25 and shown(app.controls.time_message) == ""


def test_a_new_planet_needs_a_name_that_shows_as_itself_and_looks_like_no_other(app):
    c = app.controls
    count = len(app.system.planets)
    for name, reason in (("B", "a planet named 'b' already exists (it looks the same as 'B')"),
                         ("\uff42", "already exists"), ("i\u202e", "bidirectional-text control"),
                         ("i\u200b", "invisible character")):
        c.new_name.value, c.new_period.value = name, "41.0"
        c._add(None)
        assert reason in shown(c.add_message), shown(c.add_message)
        assert len(app.system.planets) == count


def test_no_planet_is_added_beyond_the_limit():
    system = System(name="full", planets=[Planet(name=f"p{i}", period=1.0 + 0.1 * i, radius=1.0)
                                          for i in range(MAX_PLANETS)])
    app = OrbitDeckApp(system)
    c = app.controls
    c.new_name.value, c.new_period.value = "one-more", "50"
    c._add(None)
    assert shown(c.add_message) == f"new planet: a system holds at most {MAX_PLANETS} planets; remove one first"
    assert len(app.system.planets) == MAX_PLANETS


def test_an_upload_with_too_many_planets_is_refused_before_any_computation(app):
    text = dumps_system(load_system(demo_path()))
    block = text[text.index("[[planets]]"):]
    first = block.split("\n\n")[0] + "\n\n"
    many = text[:text.index("[[planets]]")] + "".join(
        first.replace('name = "b"', f'name = "x{i}"') for i in range(MAX_PLANETS + 1))
    system, revision = app.system, app.system.revision
    app.controls.file_input.receive("many.toml", many.encode())
    assert shown(app.controls.file_message) == (f"not loaded, the current system is kept: many.toml: planets: holds "
                                                f"{MAX_PLANETS + 1} planets; a system may hold at most {MAX_PLANETS}")
    assert app.system is system and system.revision == revision


def test_a_file_over_the_limit_is_refused_by_its_size(app):
    system = app.system
    app.controls.file_input.receive("big.toml", b"#" * (MAX_FILE_BYTES + 1))
    assert shown(app.controls.file_message) == (f"not loaded, the current system is kept: big.toml: file is "
                                                f"{MAX_FILE_BYTES + 1} bytes; system files are limited to "
                                                f"{MAX_FILE_BYTES} bytes")
    # the browser's own refusal: only the name and the size arrive
    app.controls.file_input.refused = "1 16777216 huge.toml"
    assert "huge.toml: file is 16777216 bytes" in shown(app.controls.file_message)
    assert app.system is system
    assert app.controls.file_input.max_bytes == MAX_FILE_BYTES


def test_an_unusual_unit_is_noted_with_the_file_and_field(app):
    text = demo_path().read_text().replace("radius = { value = 0.246,", 'radius = { value = 0.246, unit = "Rsun s2/s/s",', 1)
    assert "Rsun s2/s/s" in text
    app.controls.file_input.receive("units.toml", text.encode())
    message = shown(app.controls.file_message)
    assert message.startswith("loaded units.toml")
    assert "units.toml: star.radius.unit: astropy: 'Rsun s2/s/s' contains multiple slashes" in message
