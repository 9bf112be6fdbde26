"""The Dynamics view: its layers show derive()'s numbers and the models' curves, its pair follows the selected
planet and sets it, a hidden tab waits in a served page, and the N-body ensemble runs in the background with
progress, can be cancelled, and its results appear (marked once the system is edited after the run)."""

from __future__ import annotations

import time

import numpy as np
import param
import pytest
from bokeh.document import Document

from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.dashboard.views.dynamics import BETA_AXIS_CAP, CURVE_WIDTH, SELECTED_CURVE_WIDTH, finished_ensemble
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import Planet, Star, System, derive, load_system
from orbitdeck.models.physics import dynamics, ttv
from orbitdeck.models.constants import M_EARTH, M_SUN

pytestmark = pytest.mark.filterwarnings("ignore:The inplace keyword in DataFrame.reset_index")


def dynamics_of(app):
    return app.views["Dynamics"]


def demo_app(**options):
    return OrbitDeckApp(load_system(demo_path()), **options)


def test_the_tab_is_there_and_built_on_demand():
    app = demo_app()
    assert "Dynamics" in list(app.views) and "Dynamics" not in app.views.built()
    view = dynamics_of(app)
    assert view.pair == 0 and view.pair_select.value == 0
    assert list(view.table.value["pair"]) == ["b\u2013c", "c\u2013d", "d\u2013e", "e\u2013f"]
    # the table's columns are the registry's dynamics quantities of the pairs, P2/P1 among them
    assert {"period_ratio", "delta", "super_period_d", "ttv_inner_min", "amd_beta", "overlap_period_ratio",
            "in_overlap_zone"} <= set(view.table.value.columns)


def test_ttv_curves_are_the_models_curves_with_the_derived_amplitudes():
    app = demo_app()
    view = dynamics_of(app)
    view.pair_select.value = 2   # d-e, near 3:2
    curves = view.ttv.data["curves"]
    expected = derive(load_system(demo_path()))
    inner, outer = curves["ys"]
    days = curves["xs"][0]
    # two super-periods (Lithwick, Xie & Wu 2012: P_sup = 1 / |j/P' - (j-1)/P|) from the system epoch
    assert days[-1] - days[0] == pytest.approx(2 * expected.pairs["super_period_d"][2], rel=1e-12)
    period = expected.planets["period_d"]
    assert expected.pairs["super_period_d"][2] == pytest.approx(1 / abs(3 / period[3] - 2 / period[2]), rel=1e-12)
    # a sinusoid of amplitude |V| over two full periods reaches it to the sampling's ~1e-4 (LXW12 eqs. 8-9)
    assert np.max(np.abs(inner)) == pytest.approx(expected.pairs["ttv_inner_min"][2], rel=1e-3)
    assert np.max(np.abs(outer)) == pytest.approx(expected.pairs["ttv_outer_min"][2], rel=1e-3)
    # with Z_free = 0, V and V' have opposite signs (-f > 0 > -g): anti-correlated curves
    assert np.corrcoef(inner, outer)[0, 1] == pytest.approx(-1.0, abs=1e-9)
    # point for point the models' curves of the complex amplitudes derive() keeps, at the transit times
    system = load_system(demo_path())
    v_in, v_out = (expected.extra[k][2] * 1440.0 for k in ("ttv_inner_complex", "ttv_outer_complex"))
    planets = system.planets
    want = ttv.ttv_curves(system.epoch + days, v_in, v_out, planets[2].period, planets[3].period,
                          planets[2].transit_time, planets[3].transit_time, 3)
    np.testing.assert_allclose(inner, want[0], rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(outer, want[1], rtol=1e-12, atol=1e-12)
    assert abs(v_in) == pytest.approx(expected.pairs["ttv_inner_min"][2], rel=1e-12)


def test_free_eccentricity_shifts_the_phase():
    system = load_system(demo_path())
    system.assumptions.param.update(free_eccentricity_amplitude=0.004, free_eccentricity_angle=90.0)
    view = dynamics_of(OrbitDeckApp(system))
    view.pair_select.value = 2
    inner, outer = view.ttv.data["curves"]["ys"]
    assert abs(np.corrcoef(inner, outer)[0, 1]) < 0.999
    assert "|Z_free| = 0.004 at 90 deg" in view.ttv_caption.object


def test_bands_span_the_percentile_amplitudes_with_monte_carlo_draws():
    app = demo_app(uncertainty=True, samples=300)
    view = dynamics_of(app)
    view.pair_select.value = 2
    bands = view.ttv.data["bands"]
    assert len(bands["ys"]) == 2 and bands["colour"] == app.colours.colours(["d", "e"])
    low, high = app.derived.intervals["pairs"]["ttv_inner_min"]
    # the band of the inner planet reaches the 84th percentile amplitude at the curve's crests and its
    # narrow edge the 16th
    points = len(view.ttv.data["curves"]["xs"][0])
    upper, lower = bands["ys"][0][:points], bands["ys"][0][points:]
    assert np.max(upper) == pytest.approx(high[2], rel=1e-3)
    assert np.max(lower) == pytest.approx(low[2], rel=1e-3)
    assert "% of draws" in view.table.value["hill_stable"][0]
    assert "AMD-stable in" in view.pairs_caption.object and "% of the draws" in view.pairs_caption.object


def test_choosing_a_pair_selects_its_inner_planet_and_selecting_a_planet_chooses_a_pair():
    app = demo_app()
    view = dynamics_of(app)
    view.pair_select.value = 2
    assert view.pair == 2 and app.selected == "d"
    app.selected = "b"
    assert view.pair == 0
    app.selected = "f"       # the last planet is only an outer one
    assert view.pair == 3
    view.table.selection = [1]   # a row of the table chooses its pair
    assert view.pair == 1 and app.selected == "c" and view.table.selection == [1]
    assert view.pair_select.value == 1
    app.selected = "d"       # the other planet of the pair shown keeps the pair
    assert view.pair == 1
    view.table.selection = [2]
    # the selected planet's curve is the wider one
    assert app.selected == "d" and view.ttv.data["curves"]["width"] == [SELECTED_CURVE_WIDTH, CURVE_WIDTH]
    app.selected = "e"
    assert view.pair == 2 and view.ttv.data["curves"]["width"] == [CURVE_WIDTH, SELECTED_CURVE_WIDTH]


def test_the_pair_goes_to_the_apps_selected_pair_when_it_has_one():
    class WithPair(OrbitDeckApp):
        selected_pair = param.Integer(default=None, allow_None=True)

    app = WithPair(load_system(demo_path()))
    view = dynamics_of(app)
    assert app.selected_pair == 0
    view.pair_select.value = 3
    assert app.selected_pair == 3
    app.selected_pair = 1            # chosen elsewhere: followed here
    assert view.pair == 1 and view.pair_select.value == 1
    app.system.planets = app.system.planets[:1]
    assert app.selected_pair is None and view.pair is None


def test_beta_bars_and_overlap_rows_follow_the_pairs():
    app = demo_app()
    view = dynamics_of(app)
    d = app.derived
    bars = view.beta.data["bars"]
    assert bars["pair"] == ["b\u2013c", "c\u2013d", "d\u2013e", "e\u2013f"]
    np.testing.assert_array_equal(bars["beta"], d.pairs["amd_beta"])      # all below the cap here
    assert bars["colour"] == app.colours.colours(["b", "c", "d", "e"])   # the inner planets' colours
    zones = view.overlap.data["zones"]
    # each zone ends at the Deck, Payne & Holman 2013 edge 1.46 ((m+m')/M*)^(2/7) in (a'-a)/a, taken to a period
    # ratio by Kepler's third law with the planets' masses: worked here from the derived masses
    mu = d.planets["mass_mearth"] * M_EARTH / (d.star["mass_msun"] * M_SUN)
    edge = (1 + 1.46 * (mu[:-1] + mu[1:]) ** (2 / 7)) ** 1.5 * np.sqrt((1 + mu[:-1]) / (1 + mu[1:]))
    np.testing.assert_allclose(zones["x1"], edge, rtol=1e-12)
    np.testing.assert_array_equal(zones["x0"], 1.0)
    points = view.overlap.data["pairs"]
    np.testing.assert_allclose(points["ratio"], d.pairs["period_ratio"], rtol=1e-15)
    # a pair is in the zone exactly when its ratio lies below the edge
    assert [r < e for r, e in zip(points["ratio"], edge)] == list(d.pairs["in_overlap_zone"])
    rung_names = view.overlap.data["rung_names"]["text"]
    assert rung_names[:2] == ["2:1", "3:2"]


def test_a_pair_inside_the_overlap_zone_has_an_infinite_beta_drawn_at_the_cap():
    star = Star(name="s", mass=0.2, radius=0.2, teff=3000.0)
    system = System(name="tight", star=star, planets=[Planet(name="b", period=2.0, radius=1.0, mass=5.0),
                                                      Planet(name="c", period=2.1, radius=1.0, mass=5.0)])
    view = dynamics_of(OrbitDeckApp(system))
    d = view.app.derived
    assert d.pairs["in_overlap_zone"][0] and d.pairs["amd_beta"][0] == np.inf
    assert view.beta.data["bars"]["beta"][0] == BETA_AXIS_CAP
    assert view.beta.data["clipped"]["text"] == ["\u221e"]
    assert "infinite" in view.beta.data["bars"]["beta_text"][0]
    assert view.overlap.data["pairs"]["inside"] == ["yes"]
    assert d.pairs["period_ratio"][0] < dynamics.overlap_period_ratio(
        2 * 5.0 * M_EARTH / (0.2 * M_SUN), 5.0 * M_EARTH / (0.2 * M_SUN), 5.0 * M_EARTH / (0.2 * M_SUN))


def test_a_pair_outside_the_formulas_range_says_so():
    star = Star(name="s", mass=0.5, radius=0.5, teff=3800.0)
    system = System(name="wide", star=star, planets=[Planet(name="b", period=3.0, radius=1.2, mass=2.0),
                                                     Planet(name="c", period=7.6, radius=1.3, mass=2.0)])
    view = dynamics_of(OrbitDeckApp(system))
    assert view.ttv.data["curves"]["xs"] == []   # 7.6 / 3 is nearest 5:2, third order
    assert "no near-resonant TTV prediction" in view.ttv_caption.object


def test_a_single_planet_has_no_pairs_to_show():
    star = Star(name="s", mass=0.5, radius=0.5, teff=3800.0)
    view = dynamics_of(OrbitDeckApp(System(name="one", star=star, planets=[Planet(name="b", period=3.0)])))
    assert view.pair is None and view.ttv.data["curves"]["xs"] == [] and view.beta.data["bars"]["pair"] == []
    assert "single planet" in view.ttv_caption.object


def test_a_hidden_dynamics_tab_waits_and_catches_up():
    app = demo_app()
    app.page().server_doc(Document())
    view = dynamics_of(app)
    before = view.table.value["ttv_inner_min"][2]
    app.system.planets[3].mass *= 2.0   # the perturber of d (e) doubles: d's TTV amplitude about doubles
    assert view.table.value["ttv_inner_min"][2] == before
    assert "Dynamics" in app.stale_tabs()
    app.tabs.active = list(app.views).index("Dynamics")   # the tab opened: its waiting update runs
    assert float(view.table.value["ttv_inner_min"][2]) == pytest.approx(2 * float(before), rel=0.02)


def test_the_free_eccentricity_entries_edit_the_assumption_and_refuse_bad_values():
    app = demo_app()
    view = dynamics_of(app)
    view.z_amplitude.value = 0.003
    view.z_angle.value = 45.0
    assert app.system.assumptions.free_eccentricity_amplitude == 0.003
    assert app.derived.system["free_eccentricity"] == {"amplitude": 0.003, "angle": 45.0}
    view.z_amplitude.value = -0.1
    assert app.system.assumptions.free_eccentricity_amplitude == 0.003
    assert "free eccentricity amplitude" in view.z_message.object and "-0.1" in view.z_message.object
    app.read_only = True   # a page following a presenter edits nothing
    view.z_amplitude.value = 0.002
    assert app.system.assumptions.free_eccentricity_amplitude == 0.003 and view.z_amplitude.value == 0.003


# -- the N-body ensemble ------------------------------------------------------------------------------

def run_to_the_end(section, timeout=120.0) -> list:
    """Poll a running section as the session's periodic callback would; the progress values seen."""
    seen = []
    deadline = time.monotonic() + timeout
    while section.job.running:
        assert time.monotonic() < deadline, "the ensemble did not end"
        time.sleep(0.02)
        section.poll()
        seen.append((section.progress.value, section.progress.max, section.progress.visible))
    section.poll()
    return seen


def test_the_ensemble_runs_in_the_background_with_progress_and_its_results_appear():
    app = demo_app()
    view = dynamics_of(app)
    view.pair_select.value = 1   # c-d: super-period 65 d, two of them inside 80 orbits of b (161 d)
    section = view.ensemble
    section.draws.value, section.orbits.value = 3, 80
    assert "No N-body ensemble has been run" in section.summary.object
    section.run_button.clicks += 1
    # the button returns at once: the run goes on in its own thread, the buttons say so
    assert section.job.running and section.run_button.disabled and not section.cancel_button.disabled
    seen = run_to_the_end(section)
    done = [value for value, total, shown in seen if shown]
    assert done == sorted(done) and any(0 < value < 80 for value in done), seen
    assert not section.progress.visible and not section.run_button.disabled and section.cancel_button.disabled
    result = section.finished.result
    assert (result.draws, result.orbits) == (3, 80)
    assert "Stable to the end" in section.summary.object and "Model estimates" in section.summary.object
    low, high = result.stable_interval
    assert f"{100 * low:.1f}\u2013{100 * high:.1f} %" in section.summary.object
    # the survival histogram holds every draw (stopped in its bins, survivors in the last bar)
    survival = section.survival.data
    assert survival["stopped"]["counts"].sum() + survival["survived"]["counts"].sum() == 3
    assert survival["survived"]["counts"][0] == np.count_nonzero(result.stable)
    # the N-body TTVs of c and d within the two super-periods shown: the median of the stable draws at each
    # transit, from the result's own TTV bands
    nbody = view.ttv.data["nbody"]
    assert set(nbody["planet"]) == {"c", "d"} and len(nbody["x"]) > 10
    times, band = result.ttv_band(result.names.index("c"))
    first = nbody["planet"].index("c")
    assert nbody["median"][first] == band[1, 0] and nbody["x"][first] == pytest.approx(times[0] - app.system.epoch)
    assert np.all(nbody["x"] <= view.ttv.data["curves"]["xs"][0][-1])
    assert "Dots and bars" in view.ttv_caption.object
    assert finished_ensemble(app) is section.finished
    # an edit after the run: the results belong to the previous state, and leave the TTV plot
    app.system.planets[2].mass *= 1.3
    assert "belong to an earlier state" in section.summary.object
    assert len(view.ttv.data["nbody"]["x"]) == 0 and "earlier state" in view.ttv_caption.object
    app.history.undo()   # back to the state integrated: current again
    assert "earlier state" not in section.summary.object and len(view.ttv.data["nbody"]["x"]) > 10


def test_a_run_can_be_cancelled():
    app = demo_app()
    section = dynamics_of(app).ensemble
    section.draws.value, section.orbits.value = 2, 50_000
    section.start()
    deadline = time.monotonic() + 60
    while section.job.progress[0] == 0:
        assert time.monotonic() < deadline
        time.sleep(0.02)
    section.cancel_button.clicks += 1
    section.job.join(timeout=30)
    assert not section.job.running
    section.poll()
    assert section.finished is None and "cancelled" in section.status.object
    assert not section.run_button.disabled and not section.progress.visible


def test_snapshots_show_a_finished_ensemble_or_say_there_is_none():
    from orbitdeck.dashboard.snapshot import Provenance, snapshot_layout
    from orbitdeck.models.files.sources import SystemSource

    app = demo_app()
    section = dynamics_of(app).ensemble
    section.draws.value, section.orbits.value = 2, 30
    section.start()
    run_to_the_end(section)
    info = Provenance(SystemSource("demo.toml", b"x"), "2026-12-01T12:00:00Z", 0, None, app.system.epoch)
    layout = snapshot_layout(app.system.copy(), info, ensemble=finished_ensemble(app))
    texts = " ".join(str(p.object) for p in layout.select(lambda o: hasattr(o, "object")) if isinstance(
        getattr(p, "object", None), str))
    assert "Stable to the end" in texts and "earlier state" not in texts
    # a static page has no controls to run anything
    section.show(section.finished, static=True)
    assert not section.controls.visible
    edited = app.system.copy()
    edited.planets[0].mass = 3.0
    texts = " ".join(str(p.object) for p in snapshot_layout(edited, info, ensemble=finished_ensemble(app)).select(
        lambda o: isinstance(getattr(o, "object", None), str)))
    assert "belong to an earlier state" in texts
    texts = " ".join(str(p.object) for p in snapshot_layout(app.system.copy(), info).select(
        lambda o: isinstance(getattr(o, "object", None), str)))
    assert "No N-body ensemble was run for this state" in texts
