"""The sky from one planet in the dashboard: placement, sizes, time player."""

from __future__ import annotations

import numpy as np
import pytest

from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.dashboard.views.sky_from import MOON_DEG, SkyFromView, TimePlayer, sky_coordinates
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import load_system
from orbitdeck.models.motion.sky_view import sky_from

pytestmark = pytest.mark.filterwarnings("ignore:The inplace keyword in DataFrame.reset_index")


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
    marks, discs = view.sky.data["marks"], view.sky.data["discs"]
    sky = sky_from(app.system, app.selected, app.time, a_au=app.elements.a_au)
    assert list(marks["body"]) == sky["bodies"]
    # radius in degrees = angular diameter [arcsec] / 2 / 3600: every point of a disc's outline lies that far
    # from the body's direction
    radius = [np.hypot(xs - x, ys - y).mean() for xs, ys, x, y in zip(discs["xs"], discs["ys"], marks["longitude"],
                                                                      marks["latitude"])]
    assert np.asarray(radius) == pytest.approx(sky["angular_diameter_arcsec"] / 7200.0)
    # the Moon from Earth as reference: 2 arcsin(1737.4 / 384400) = 0.518 deg (IAU radius, mean distance)
    moon = view.sky.data["moon"]
    x, y = moon["x"][:-1], moon["y"][:-1]          # the outline's points, the closing one left out
    assert 2 * np.hypot(x - x.mean(), y - y.mean()).mean() == pytest.approx(MOON_DEG)
    assert MOON_DEG == pytest.approx(0.518, abs=0.001)


def test_close_approach_table_lists_minima_after_the_time(app):
    app.selected = app.elements.names[0]
    view = SkyFromView(app)
    times = [float(t) for t in view.table.value["time [BJD_TDB]"]]
    assert len(times) > 0 and all(t > app.time for t in times)
    assert times == sorted(times)


def test_time_player_steps_the_shared_time(app):
    player = TimePlayer(app)
    start = app.time
    player.step.value = "0.5"
    player.advance(+1)
    player.advance(+1)
    player.advance(-1)
    assert app.time == pytest.approx(start + 0.5)
    view = SkyFromView(app)
    assert f"{app.time:.4f}" in view.sky_title.object
    player.step.value = "-2"         # not a step: the buttons keep the default one
    player.advance(+1)
    assert app.time == pytest.approx(start + 0.5 + player.step_days())


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


def test_the_time_plots_name_their_lines_and_keep_one_unit_each(app):
    app.selected = app.elements.names[1]
    view = SkyFromView(app)
    diameters = view.tracks.figure()
    (overlay,) = diameters
    # one line per body seen, named (the legend), all in arcseconds
    assert list(overlay.keys()) == list(view.sky.data["marks"]["body"])
    assert {curve.vdims[0].unit for curve in overlay} == {"arcsec"}
    assert all(curve.label for curve in overlay)
    # the elongation plot follows one chosen body, in degrees
    (curves,) = view.elongation.figure()
    (elongation,) = curves
    assert elongation.vdims[0].unit == "deg" and elongation.label == view.body and list(curves.keys()) == [view.body]
    chosen = app.elements.names[2]
    view.body_select.value = chosen
    (elongation,) = list(view.elongation.figure())[0]
    track = sky_from(app.system, app.selected, app.time + np.linspace(0.0, view.window, 400), a_au=app.elements.a_au)
    index = track["bodies"].index(chosen)
    np.testing.assert_allclose(elongation.dimension_values(1), track["elongation_deg"][:, index])
    assert elongation.label == chosen


def test_a_planet_on_the_observers_own_orbit_is_left_out_of_its_sky_and_the_caption_says_why():
    # two planets given the same period and no transit times sit on top of each other; the page once failed
    # to draw the sky of either (a disc of NaN)
    from orbitdeck.models import Planet, Star, System

    twins = System(name="twins", star=Star(name="s", mass=0.3, radius=0.3, teff=3300.0),
                   planets=[Planet(name="b", period=3.0, radius=1.0), Planet(name="c", period=3.0, radius=1.2),
                            Planet(name="d", period=5.0, radius=1.0)])
    app = OrbitDeckApp(twins)
    app.selected = "b"
    view = SkyFromView(app)
    sky = view.sky.data
    assert list(sky["marks"]["body"]) == ["star", "d"] and list(sky["names"]["text"]) == ["star", "d"]
    assert len(sky["discs"]["xs"]) == 2
    for key in ("x_range", "y_range"):
        assert np.isfinite(sky["discs"][key]).all()
    assert "c overlaps planet b" in view.caption.object
    # the plots over time still list every body; the elongation of one chosen there has gaps where it overlaps
    assert list(view.tracks.data["diameters"]["bodies"]) == ["star", "c", "d"]
    # the whole view renders (HoloViews drew no NaN polygon)
    import holoviews as hv

    hv.render(view.sky.figure(), backend="bokeh")
    app.selected = "d"
    assert list(view.sky.data["marks"]["body"]) == ["star", "b", "c"]


def test_a_planet_inside_its_star_sees_no_star_disc_and_the_view_still_draws():
    from orbitdeck.models import Planet, Star, System

    grazing = System(name="inside", star=Star(name="s", mass=0.5, radius=2.0, teff=4000.0),
                     planets=[Planet(name="b", period=0.2, radius=1.0)])
    app = OrbitDeckApp(grazing)
    view = SkyFromView(app)
    assert list(view.sky.data["marks"]["body"]) == []
    assert np.isfinite(view.sky.data["marks"]["x_range"]).all()
    assert "star overlaps planet b" in view.caption.object
