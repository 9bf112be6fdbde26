"""The sky from one planet in the dashboard: placement, sizes, time player."""

from __future__ import annotations

import numpy as np
import pytest

from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.dashboard.views.sky_from import MOON_DEG, SkyFromView, TimePlayer, sky_coordinates
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import load_system
from orbitdeck.models.sky_view import sky_from


@pytest.fixture
def app():
    return OrbitDeckApp(load_system(demo_path("skew_trio")))


def test_directions_reproduce_the_elongations(app):
    # spherical trigonometry: cos(elongation) = cos(latitude) cos(longitude) for a body
    # at (longitude, latitude) from the star's direction (e.g. Smart, Spherical Astronomy)
    names = list(app.elements.names)
    for observer in names:
        lon, lat = sky_coordinates(app.elements, names.index(observer), app.time + 3.7)
        sky = sky_from(app.system, observer, app.time + 3.7, a_au=app.elements.a_au)
        expected = np.cos(np.radians(sky["elongation_deg"]))
        assert np.cos(np.radians(lat)) * np.cos(np.radians(lon)) == pytest.approx(expected, abs=1e-9)
        assert lon[0] == pytest.approx(0.0, abs=1e-9) and lat[0] == pytest.approx(0.0, abs=1e-9)


def test_discs_are_drawn_at_their_angular_size(app):
    app.selected = app.elements.names[1]
    view = SkyFromView(app)
    data = view.sources["discs"].data
    sky = sky_from(app.system, app.selected, app.time, a_au=app.elements.a_au)
    assert list(data["body"]) == sky["bodies"]
    # radius in degrees = angular diameter [arcsec] / 2 / 3600
    assert np.asarray(data["radius"]) == pytest.approx(sky["angular_diameter_arcsec"] / 7200.0)
    # the Moon from Earth as reference: 2 arcsin(1737.4 / 384400) = 0.518 deg (IAU radius, mean distance)
    assert view.sources["moon"].data["radius"][0] * 2 == pytest.approx(MOON_DEG)
    assert MOON_DEG == pytest.approx(0.518, abs=0.001)


def test_close_approach_table_lists_minima_after_the_time(app):
    app.selected = app.elements.names[0]
    view = SkyFromView(app)
    table = view.table.value
    assert len(table) > 0 and (table["time [BJD_TDB]"] > app.time).all()
    assert list(table["time [BJD_TDB]"]) == sorted(table["time [BJD_TDB]"])


def test_time_player_steps_the_shared_time(app):
    player = TimePlayer(app)
    start = app.time
    player.step.value = 0.5
    player.advance(+1)
    player.advance(+1)
    player.advance(-1)
    assert app.time == pytest.approx(start + 0.5)
    view = SkyFromView(app)
    assert f"{app.time:.4f}" in view.sky.title.text


def test_names_of_bodies_close_in_the_sky_take_turns_above_and_below():
    from orbitdeck.dashboard.views.sky_from import name_offsets

    # longitudes [deg]: a lone body, two a degree apart, three within a degree, one far off
    longitude = [0.0, -123.0, -122.0, 60.0, 60.3, 60.6, 140.0]
    latitude = [0.0, 0.0, 0.2, 0.0, 0.0, 0.0, 0.0]
    offsets = name_offsets(longitude, latitude)
    assert offsets[0] == offsets[6] == -6.0                       # alone: just above
    assert offsets[1] < 0 < offsets[2]                           # a pair: one above, one below
    assert offsets[3] < 0 < offsets[4] and offsets[5] < offsets[3]   # three: above, below, further above
    assert len(set(offsets[3:6])) == 3
    assert name_offsets([], []).size == 0
