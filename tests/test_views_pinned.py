"""The pinned reference drawn in Layout and the Period ladder, and the chosen adjacent pair (``selected_pair``).

The layers' data are checked against calculations written here: orbit radii
from Kepler's third law with astropy's constants, positions from the transit
convention (a planet transits at omega + f = 90 deg, seen from +y; Winn 2010),
period ratios from the periods in the file.
"""

from __future__ import annotations

import html
import re

import astropy.constants as const
import astropy.units as u
import holoviews as hv
import numpy as np
import panel as pn
import pytest
from bokeh.document import Document
from bokeh.models import Legend, Plot
from PIL import Image

from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.dashboard.views.common import interval
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import Planet, derive, load_demo, load_system

pytestmark = pytest.mark.filterwarnings("ignore:The inplace keyword in DataFrame.reset_index")

PINNED_LABELS = {"pinned reference: orbits", "pinned reference: planets now", "pinned reference: period ratios",
                 "pinned reference: 16th\u201384th percentiles"}


@pytest.fixture
def app():
    return OrbitDeckApp(load_system(demo_path()))


def text_of(pane) -> str:
    return html.unescape(re.sub(r"<[^>]+>", "", pane.object or ""))


def legend(view) -> list[str]:
    """The legend entries shown by a view's live Bokeh plot (built in a document of its own)."""
    if not hasattr(view, "_test_root"):
        view._test_root = pn.pane.HoloViews(view.plot.live()).get_root(Document()).select_one({"type": Plot})
    return [item.label["value"] for entry in view._test_root.select({"type": Legend}) for item in entry.items
            if item.visible]


def kepler_a_au(period_d, star_msun, planet_mearth):
    """a = (G (M* + Mp) P^2 / 4 pi^2)^(1/3) with astropy's G, M_sun and M_earth (Kepler's third law)."""
    mass = star_msun * const.M_sun + planet_mearth * const.M_earth
    return float(np.cbrt(const.G * mass * (period_d * u.day) ** 2 / (4 * np.pi ** 2)).to_value(u.au))


def curve_radii(segments, name) -> np.ndarray:
    """Distances from the star of the segment starts of planet ``name``'s drawn curve."""
    pick = list(segments["colour"])
    x0, y0 = np.asarray(segments["x0"]), np.asarray(segments["y0"])
    per = len(x0) // len(segments["name"])
    i = list(segments["name"]).index(name)
    assert len(set(pick[i * per:(i + 1) * per])) == 1
    return np.hypot(x0[i * per:(i + 1) * per], y0[i * per:(i + 1) * per])


# -- nothing pinned ----------------------------------------------------------------------------
def test_nothing_is_drawn_for_a_reference_until_one_is_pinned(app):
    layout, ladder = app.views["Layout"], app.views["Period ladder"]
    assert app.pinned is None and app.pinned_elements is None
    for data in (layout.plot.data["pinned_orbits"], ladder.plot.data["pinned_errors"]):
        assert len(data["x0"]) == 0
    assert len(layout.plot.data["pinned_planets"]["x"]) == 0 and len(ladder.plot.data["pinned_pairs"]["x"]) == 0
    assert not PINNED_LABELS & set(legend(layout)) and not PINNED_LABELS & set(legend(ladder))
    assert "pinned" not in text_of(layout.caption) and "pinned" not in text_of(ladder.caption)


# -- Layout --------------------------------------------------------------------------------------
def test_layout_draws_the_pinned_orbits_from_the_elements_kept_when_pinned(app):
    layout = app.views["Layout"]
    b = app.system.planets[0]
    a_then = kepler_a_au(b.period, 0.231, b.mass)          # b: circular, 2.6 Mearth, star 0.231 Msun (the file)
    app.pin_reference()
    kept = app.pinned_elements
    assert kept is app.elements                              # the elements of the state pinned, not derived again
    app.system.star.mass = 0.3
    app.time = app.system.epoch + 1.7
    assert app.pinned_elements is kept                       # edits and time leave them alone
    np.testing.assert_allclose(curve_radii(layout.plot.data["pinned_orbits"], "b"), a_then, rtol=1e-9)
    # the current orbit has moved out with the heavier star (a ~ M^(1/3)), the pinned one stayed
    current = layout.plot.data["orbits"]
    a_now = kepler_a_au(b.period, 0.3, b.mass)
    np.testing.assert_allclose(np.hypot(current["x0"][:180], current["y0"][:180]), a_now, rtol=1e-9)
    # every pinned orbit is drawn in its planet's colour
    assert layout.plot.data["pinned_orbits"]["name"] == app.pinned.planet_names
    assert set(layout.plot.data["pinned_orbits"]["colour"]) == set(app.colours.colours(app.pinned.planet_names))
    assert {"pinned reference: orbits", "pinned reference: planets now"} <= set(legend(layout))
    assert "the pinned reference (Ossery Loom, edit 0" in text_of(layout.caption)


def test_pinned_planets_sit_where_the_pinned_orbits_put_them_at_the_current_time(app):
    layout = app.views["Layout"]
    b = app.system.planets[0]
    a_then = kepler_a_au(b.period, 0.231, b.mass)
    app.pin_reference()
    app.system.star.mass = 0.3
    # at b's transit, omega + f = 90 deg: the planet lies on the +y axis, towards the observer (Winn 2010)
    app.time = b.transit_time
    rings = layout.plot.data["pinned_planets"]
    i = rings["name"].index("b")
    np.testing.assert_allclose([rings["x"][i], rings["y"][i]], [0.0, a_then], atol=1e-9 * a_then)
    # a quarter period later a circular orbit has turned through 90 deg more: the -x axis
    app.time = b.transit_time + b.period / 4
    rings = layout.plot.data["pinned_planets"]
    np.testing.assert_allclose([rings["x"][i], rings["y"][i]], [-a_then, 0.0], atol=1e-9 * a_then)
    # the current b, on its wider orbit, is there too
    now = layout.plot.data["planets"]
    j = list(now["name"]).index("b")
    assert np.hypot(now["x"][j], now["y"][j]) == pytest.approx(kepler_a_au(b.period, 0.3, b.mass), rel=1e-9)


def test_the_view_widens_to_show_pinned_orbits_larger_than_the_current_ones(app):
    layout = app.views["Layout"]
    app.pin_reference()
    app.system.star.mass = 0.1                               # every orbit shrinks; the pinned ones do not
    outermost = app.pinned_elements.a_au[-1] * (1 + app.pinned_elements.e[-1])
    assert layout.plot.data["pinned_orbits"]["x_range"][1] > outermost
    assert layout.plot.data["planets"]["x_range"] == layout.plot.data["pinned_orbits"]["x_range"]


def test_clearing_the_pin_removes_the_overlays(app):
    layout, ladder = app.views["Layout"], app.views["Period ladder"]
    app.pin_reference()
    app.system.star.mass = 0.3
    assert PINNED_LABELS - {"pinned reference: 16th\u201384th percentiles"} <= set(legend(layout) + legend(ladder))
    app.clear_reference()
    assert app.pinned_elements is None
    assert len(layout.plot.data["pinned_orbits"]["x0"]) == 0 and len(layout.plot.data["pinned_planets"]["x"]) == 0
    assert len(ladder.plot.data["pinned_pairs"]["x"]) == 0
    assert not PINNED_LABELS & set(legend(layout) + legend(ladder))
    assert "pinned" not in text_of(layout.caption) and "pinned" not in text_of(ladder.caption)


def test_a_derivation_pinned_without_elements_gets_its_orbits_once_but_no_positions():
    # skew_trio: eccentric orbits (e = 0.31, 0.22, 0.45 in the file) to check the orbits made from the derivation
    system = load_demo("skew_trio")
    app = OrbitDeckApp(system.copy())
    pinned = derive(system)
    app.param.update(pinned=pinned, pinned_label="from code")
    elements = app.pinned_elements
    np.testing.assert_allclose(elements.e, [p.eccentricity for p in system.planets], rtol=1e-12)
    np.testing.assert_allclose(elements.omega_rad, np.radians([p.omega for p in system.planets]), rtol=1e-12)
    np.testing.assert_array_equal(elements.a_au, pinned.planets["semi_major_axis_au"])
    app.time = app.time + 3.0
    assert app.pinned_elements is elements                   # made once, not per frame
    layout = app.views["Layout"]
    for planet, a, e in zip(system.planets, elements.a_au, elements.e):
        radii = curve_radii(layout.plot.data["pinned_orbits"], planet.name)
        # the curve starts at periastron a (1 - e); apoastron a (1 + e) is half-way round (Murray & Dermott 1999)
        assert radii[0] == pytest.approx(a * (1 - e), rel=1e-12) and radii.max() <= a * (1 + e) * (1 + 1e-12)
    assert len(layout.plot.data["pinned_planets"]["x"]) == 0
    assert "positions are not drawn" in text_of(layout.caption)
    # pinned again with its elements, the positions come back
    app.param.update(pinned=app.derived, pinned_elements=app.elements)
    assert app.pinned_elements is app.elements and len(layout.plot.data["pinned_planets"]["x"]) == 3


# -- Period ladder -------------------------------------------------------------------------------
def test_ladder_rings_are_the_pinned_period_ratios_with_their_intervals():
    system = load_system(demo_path())
    app = OrbitDeckApp(system, uncertainty=True, samples=300)
    ladder = app.views["Period ladder"]
    periods_then = [p.period for p in system.planets]
    app.pin_reference()
    system.planets[1].period = 2.9                          # c moves: the b-c and c-d ratios change
    rings = ladder.plot.data["pinned_pairs"]
    n = len(periods_then) - 1
    # ratios outer / inner of the periods in the file, the inner planet's ring then the outer's
    expected = np.array(periods_then[1:]) / np.array(periods_then[:-1])
    np.testing.assert_allclose(rings["y"][:n], expected, rtol=1e-14)
    np.testing.assert_allclose(rings["y"][n:], expected, rtol=1e-14)
    np.testing.assert_array_equal(rings["y"][:n], app.pinned.pairs["period_ratio"])
    # beside their own pair, in its planets' colours
    np.testing.assert_allclose(rings["x"][:n], np.arange(n) + 0.28)
    assert rings["colour"][:n] == app.colours.colours(app.pinned.pairs["inner"])
    assert rings["colour"][n:] == app.colours.colours(app.pinned.pairs["outer"])
    np.testing.assert_allclose(rings["now"][:n], app.derived.pairs["period_ratio"])
    assert rings["y"][0] != pytest.approx(app.derived.pairs["period_ratio"][0])
    low, high = interval(app.pinned, "pairs", "period_ratio")
    bars = ladder.plot.data["pinned_errors"]
    np.testing.assert_array_equal(bars["y0"], low)
    np.testing.assert_array_equal(bars["y1"], high)
    assert np.all(low <= expected) and np.all(expected <= high)
    assert set(PINNED_LABELS) - {"pinned reference: orbits", "pinned reference: planets now"} <= set(legend(ladder))
    caption = text_of(ladder.caption)
    assert f"the pinned reference ({app.pinned_label})" in caption and "percentiles dashed" in caption


def test_ladder_leaves_out_pinned_pairs_whose_planets_are_no_longer_neighbours(app):
    ladder = app.views["Period ladder"]
    app.pin_reference()
    app.system.add_planet(Planet(name="x", period=3.5, radius=1.0))     # between c (2.80 d) and d (4.30 d)
    rings = ladder.plot.data["pinned_pairs"]
    pinned_pairs = list(zip(app.pinned.pairs["inner"], app.pinned.pairs["outer"]))
    kept = [pair for pair in pinned_pairs if pair != ("c", "d")]
    assert rings["pair"][:len(kept)] == [f"{a}\u2013{b}" for a, b in kept]
    # each drawn beside the current pair of the same planets: b-c at 0, d-e and e-f after c-x and x-d
    now = list(zip(app.derived.pairs["inner"], app.derived.pairs["outer"]))
    np.testing.assert_allclose(rings["x"][:len(kept)], [now.index(pair) + 0.28 for pair in kept])
    assert "no longer neighbours are not drawn: c\u2013d" in text_of(ladder.caption)


def test_ladder_range_takes_in_pinned_ratios_beyond_the_current_ones(app):
    ladder = app.views["Period ladder"]
    app.pin_reference()
    app.system.planets[-1].period = 12.0                     # the outer ratio drops from about 2.6 to under 1.9
    lo, hi = ladder.plot.data["pinned_pairs"]["y_range"]
    assert hi > max(app.pinned.pairs["period_ratio"]) > max(app.derived.pairs["period_ratio"])


# -- both backends -----------------------------------------------------------------------------------
@pytest.mark.parametrize("title", ["Layout", "Period ladder"])
def test_pinned_overlays_save_through_matplotlib(title, tmp_path):
    app = OrbitDeckApp(load_system(demo_path()), uncertainty=True, samples=200)
    app.pin_reference()
    app.system.star.mass = 0.3
    app.system.planets[1].period = 2.9
    app.selected_pair = 1
    figure = app.views[title].figure("matplotlib")
    groups = {el.group for el in figure}
    assert {"Layout": {"LayoutPinnedOrbit", "LayoutPinnedPlanet"},
            "Period ladder": {"LadderPinnedPair", "LadderPinnedRange", "LadderPairBand"}}[title] <= groups
    path = tmp_path / "figure.png"
    hv.save(figure, path, backend="matplotlib")
    image = np.asarray(Image.open(path).convert("RGB"))
    assert image.shape[0] > 200 and len(np.unique(image.reshape(-1, 3), axis=0)) > 50


# -- the chosen pair -----------------------------------------------------------------------------
def test_the_ladder_shows_the_chosen_pair_on_a_band_and_selects_its_row(app):
    ladder = app.views["Period ladder"]
    assert app.selected_pair is None and len(ladder.plot.data["pair_band"]["x0"]) == 0
    assert ladder.pairs_table.selection == [] and "chosen pair" not in legend(ladder)
    app.selected_pair = 2
    band = ladder.plot.data["pair_band"]
    assert band["x0"][0] < 2 - 0.09 and band["x1"][0] > 2 + 0.09                 # both discs of pair 2 on it
    assert (band["y0"][0], band["y1"][0]) == ladder.plot.data["pairs"]["y_range"]   # the full height
    assert ladder.pairs_table.selection == [2] and "chosen pair" in legend(ladder)
    # a row picked in the table chooses its pair; unpicking it chooses none
    ladder.pairs_table.selection = [0]
    assert app.selected_pair == 0 and ladder.plot.data["pair_band"]["x0"][0] < 0
    ladder.pairs_table.selection = []
    assert app.selected_pair is None and len(ladder.plot.data["pair_band"]["x0"]) == 0


def test_the_chosen_pair_stays_whatever_planet_is_selected(app):
    app.selected_pair = 1
    for name in app.derived.planet_names:
        app.selected = name
        assert app.selected_pair == 1


def test_the_chosen_pair_follows_its_planets_through_edits(app):
    ladder = app.views["Period ladder"]
    app.selected_pair = 1                                    # c-d
    app.system.add_planet(Planet(name="a0", period=1.2, radius=0.8))     # innermost: every index moves up
    assert app.derived.pairs["inner"][app.selected_pair] == "c" and app.selected_pair == 2
    assert ladder.pairs_table.selection == [2] and ladder.plot.data["pair_band"]["x0"][0] < 2 < \
        ladder.plot.data["pair_band"]["x1"][0]
    app.system.planets[-1].period = 7.0                      # an edit that keeps the order keeps the pair
    assert app.selected_pair == 2
    app.system.remove_planet("a0")
    assert app.selected_pair == 1
    app.history.undo()                                       # back to the state with a0 (by names again)
    assert app.selected_pair == 2
    app.system.add_planet(Planet(name="x", period=3.5, radius=1.0))      # between c and d: the pair is gone
    assert app.selected_pair is None and ladder.pairs_table.selection == []
    assert len(ladder.plot.data["pair_band"]["x0"]) == 0


def test_a_pair_index_beyond_the_pairs_chooses_none(app):
    app.selected_pair = 4                                    # five planets: pairs 0 to 3
    assert app.selected_pair is None
    with pytest.raises(ValueError):
        app.selected_pair = -1
    assert OrbitDeckApp(load_demo("skew_trio"), selected_pair=5).selected_pair is None


# -- sharing: followers and snapshots ---------------------------------------------------------------
def test_followers_see_the_presenters_reference_with_its_positions_and_the_chosen_pair():
    from test_presenter import session   # a session whose document queues its updates, as a server runs them

    from orbitdeck.dashboard.presenter import PresenterChannel

    channel = PresenterChannel(token="t")
    (a, _, _), (b, _, doc_b) = session(channel), session(channel)
    doc_b.run()
    a.pin_reference()
    a.system.star.mass = 0.9
    a.selected_pair = 1
    doc_b.run()
    assert b.pinned is a.pinned and b.pinned_elements is a.pinned_elements and b.selected_pair == 1
    layout = b.views["Layout"]
    assert len(layout.plot.data["pinned_planets"]["x"]) == len(a.pinned.planet_names)


def test_a_snapshot_draws_the_reference_with_its_positions(app):
    app.pin_reference()
    app.system.star.mass = 0.3
    page = app.controls._snapshot().getvalue().decode()
    assert "Dashed orbits and rings: the pinned reference" in page
    assert "Rings right of each pair: the pinned reference" in page
