"""The Dynamics view: its figures show derive()'s numbers, its pair follows the selected planet and
sets it, and a hidden tab waits in a served page."""

from __future__ import annotations

import holoviews as hv
import numpy as np
import pytest
from bokeh.document import Document

from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import Planet, Star, System, derive, load_system

pytestmark = pytest.mark.filterwarnings("ignore:The inplace keyword in DataFrame.reset_index")


def dynamics_of(app):
    return app.views["Dynamics"]


def curves(overlay) -> dict:
    return {el.label: el for el in overlay if isinstance(el, hv.Curve)}


def test_the_tab_is_there_and_built_on_demand():
    app = OrbitDeckApp(load_system(demo_path()))
    assert "Dynamics" in list(app.views)
    view = dynamics_of(app)
    assert view.pair == "b-c"
    assert list(view.table.value["pair"]) == ["b-c", "c-d", "d-e", "e-f"]


def test_ttv_curves_have_the_derived_amplitudes_and_opposite_phases():
    app = OrbitDeckApp(load_system(demo_path()))
    view = dynamics_of(app)
    view.pair = "d-e"
    drawn = curves(view.ttv_pane.object)
    inner, outer = drawn["planet d"], drawn["planet e"]
    expected = derive(load_system(demo_path())).pairs
    # two super-periods of a sinusoid reach the amplitude |V| (Lithwick, Xie & Wu 2012) to the sampling's ~1e-4
    assert np.max(np.abs(inner.dimension_values("ttv"))) == pytest.approx(expected["ttv_inner_min"][2], rel=1e-3)
    assert np.max(np.abs(outer.dimension_values("ttv"))) == pytest.approx(expected["ttv_outer_min"][2], rel=1e-3)
    # with Z_free = 0, V and V' have opposite signs (-f > 0 > -g): anti-correlated curves
    correlation = np.corrcoef(inner.dimension_values("ttv"), outer.dimension_values("ttv"))[0, 1]
    assert correlation == pytest.approx(-1.0, abs=1e-9)
    span = inner.dimension_values("time")
    assert span[-1] - span[0] == pytest.approx(2 * expected["super_period_d"][2], rel=1e-12)


def test_free_eccentricity_shifts_the_phase():
    system = load_system(demo_path())
    system.assumptions.param.update(free_eccentricity_amplitude=0.004, free_eccentricity_angle=90.0)
    app = OrbitDeckApp(system)
    view = dynamics_of(app)
    view.pair = "d-e"
    drawn = curves(view.ttv_pane.object)
    inner, outer = drawn["planet d"].dimension_values("ttv"), drawn["planet e"].dimension_values("ttv")
    assert abs(np.corrcoef(inner, outer)[0, 1]) < 0.999
    assert "|Z_free| = 0.004 at 90 deg" in view.note.object


def test_bands_and_fractions_with_monte_carlo_draws():
    app = OrbitDeckApp(load_system(demo_path()), uncertainty=True, samples=300)
    view = dynamics_of(app)
    view.pair = "d-e"
    spreads = [el for el in view.ttv_pane.object if isinstance(el, hv.Spread)]
    assert len(spreads) == 2
    low, high = app.derived.intervals["pairs"]["ttv_inner_min"]
    assert np.max(spreads[0].dimension_values("above") + spreads[0].dimension_values("ttv")) == pytest.approx(
        high[2], rel=1e-3)
    assert "%" in view.table.value["Hill stable"][0]
    assert "% of draws" in view.beta_pane.object.opts.get().kwargs["title"]


def test_choosing_a_pair_selects_its_inner_planet_and_selecting_a_planet_chooses_a_pair():
    app = OrbitDeckApp(load_system(demo_path()))
    view = dynamics_of(app)
    view.pair_select.value = "d-e"
    assert view.pair == "d-e" and app.selected == "d"
    app.selected = "b"
    assert view.pair == "b-c"
    app.selected = "f"       # the last planet is only an outer one
    assert view.pair == "e-f"
    view.table.selection = [1]   # a row of the table chooses its pair
    assert view.pair == "c-d" and app.selected == "c" and view.table.selection == [1]


def test_beta_bars_and_overlap_zone_rows_follow_the_pairs():
    app = OrbitDeckApp(load_system(demo_path()))
    view = dynamics_of(app)
    bars = [el for el in view.beta_pane.object if isinstance(el, hv.Bars)][0]
    assert list(bars.dimension_values("pair")) == ["b-c", "c-d", "d-e", "e-f"]
    np.testing.assert_array_equal(bars.dimension_values("beta"), app.derived.pairs["amd_beta"])
    zones = [el for el in view.overlap_pane.object if isinstance(el, hv.Rectangles)][0]
    assert len(zones) == 4
    points = [el for el in view.overlap_pane.object if isinstance(el, hv.Scatter)][0]
    assert points.dimension_values("ratio") == pytest.approx(app.derived.pairs["period_ratio"], rel=1e-12)


def test_a_pair_outside_the_formulas_range_says_so():
    star = Star(name="s", mass=0.5, radius=0.5, teff=3800.0)
    system = System(name="wide", star=star, planets=[Planet(name="b", period=3.0, radius=1.2, mass=2.0),
                                                     Planet(name="c", period=7.6, radius=1.3, mass=2.0)])
    view = dynamics_of(OrbitDeckApp(system))
    assert isinstance(view.ttv_pane.object, hv.Text)   # 7.6 / 3 is nearest 5:2, third order


def test_a_single_planet_has_no_pairs_to_show():
    star = Star(name="s", mass=0.5, radius=0.5, teff=3800.0)
    view = dynamics_of(OrbitDeckApp(System(name="one", star=star, planets=[Planet(name="b", period=3.0)])))
    assert view.pair is None and view.ttv_pane.object is None
    assert "single planet" in view.note.object


def test_a_hidden_dynamics_tab_waits_and_catches_up():
    app = OrbitDeckApp(load_system(demo_path()))
    app.page().server_doc(Document())
    view = dynamics_of(app)
    before = view.table.value["TTV inner [min]"][2]
    app.system.planets[4 - 1].mass *= 2.0   # the perturber of d (e) doubles: d's TTV amplitude about doubles
    assert view.table.value["TTV inner [min]"][2] == before
    assert "Dynamics" in app.stale_tabs()
    app._catch_up(list(app.views).index("Dynamics"))
    assert float(view.table.value["TTV inner [min]"][2]) == pytest.approx(2 * float(before), rel=0.02)


def test_the_free_eccentricity_entries_edit_the_assumption_and_refuse_bad_values():
    app = OrbitDeckApp(load_system(demo_path()))
    view = dynamics_of(app)
    view.z_amplitude.value = 0.003
    view.z_angle.value = 45.0
    assert app.system.assumptions.free_eccentricity_amplitude == 0.003
    assert app.derived.system["free_eccentricity"] == {"amplitude": 0.003, "angle": 45.0}
    view.z_amplitude.value = -0.1
    assert app.system.assumptions.free_eccentricity_amplitude == 0.003
    assert "free eccentricity amplitude" in view.z_message.object and "-0.1" in view.z_message.object

