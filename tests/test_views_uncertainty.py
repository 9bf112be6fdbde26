"""Monte Carlo intervals in the dashboard's views, without a browser.

What is drawn is compared with ``derive(system, samples, seed)`` (the model's
own intervals) and, for the period ratios, with percentiles computed here
from independent draws of the periods (numpy's normal generator).
"""

from __future__ import annotations

import re

import numpy as np
import panel as pn
import pytest
from bokeh.document import Document
from bokeh.models import Plot, Whisker

import orbitdeck.dashboard.app as app_module
from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.dashboard.cli import DEFAULT_SEED
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import derive, load_system, loads_system

pytestmark = pytest.mark.filterwarnings("ignore:The inplace keyword in DataFrame.reset_index")

SAMPLES = 800

#: an invented two-planet system with a period uncertainty large enough to straddle two rungs
WIDE_PAIR = """
format = "orbitdeck-system/1"
[system]
name = "wide pair"
epoch = 2461000.0
[star]
name = "W"
mass = { value = 0.2, sigma = 0.01 }
radius = { value = 0.22, sigma = 0.01 }
teff = 3200
[[planets]]
name = "b"
period = { value = 4.0, sigma = 0.001 }
radius = 1.2
[[planets]]
name = "c"
period = { value = 5.89, sigma = 0.08 }
radius = 1.3
"""


@pytest.fixture
def app():
    return OrbitDeckApp(load_system(demo_path()), samples=SAMPLES, uncertainty=True)


def test_layout_tooltips_carry_the_semi_major_axis_intervals(app):
    lo, hi = app.derived.intervals["planets"]["semi_major_axis_au"]
    layout = app.views["Layout"]
    assert layout.plot.data["planets"]["a_range"] == [f"{a:.5g}\u2013{b:.5g}" for a, b in zip(lo, hi)]
    # the nominal semi-major axis lies inside its interval, and the intervals have width
    a = app.derived.planets["semi_major_axis_au"]
    assert np.all(lo < a) and np.all(a < hi)
    assert f"{SAMPLES} Monte Carlo draws" in layout.caption.object


def test_flux_bars_are_the_insolation_and_radius_intervals(app):
    s_lo, s_hi = app.derived.intervals["planets"]["insolation_earth"]
    r_lo, r_hi = app.derived.intervals["planets"]["radius_rearth"]
    flux = app.views["Flux & temperature"]
    bars = flux.plot.data["ranges"]
    n = len(s_lo)
    np.testing.assert_array_equal(bars["x0"][:n], s_lo)
    np.testing.assert_array_equal(bars["x1"][:n], s_hi)
    np.testing.assert_array_equal(bars["y0"][:n], app.derived.planets["radius_rearth"])
    np.testing.assert_array_equal(bars["y0"][n:], r_lo)
    np.testing.assert_array_equal(bars["y1"][n:], r_hi)
    table = flux.tables["Orbits and irradiation"].value
    s = app.derived.planets["insolation_earth"]
    spread = re.findall(r">([^<]*)</span>", table["insolation_earth"].iloc[0])[1]
    plus, minus = spread.split(" ")
    assert float(plus[1:]) == pytest.approx(s_hi[0] - s[0], rel=0.06)
    assert float(minus[1:]) == pytest.approx(s[0] - s_lo[0], rel=0.06)
    teq, (_, t_hi) = app.derived.planets["teq_k"], app.derived.intervals["planets"]["teq_k"]
    spread = re.findall(r">([^<]*)</span>", table["teq_k"].iloc[-1])[1]
    assert float(spread.split(" ")[0][1:]) == pytest.approx(t_hi[-1] - teq[-1], rel=0.06)


def test_ladder_bars_are_the_period_ratio_intervals(app):
    lo, hi = app.derived.intervals["pairs"]["period_ratio"]
    data = app.views["Period ladder"].plot.data["errors"]
    np.testing.assert_array_equal(data["y0"], lo)
    np.testing.assert_array_equal(data["y1"], hi)
    np.testing.assert_array_equal(data["x0"], np.arange(len(lo)))


def test_ladder_intervals_match_independent_period_draws():
    # Independent check: the ratio of two normal period draws, percentiles by numpy (periods
    # without stellar dependence, so the model's interval must agree to Monte Carlo noise).
    system = loads_system(WIDE_PAIR, "wide.toml")
    app = OrbitDeckApp(system, samples=20000, uncertainty=True)
    rng = np.random.default_rng(1)
    ratio = rng.normal(5.89, 0.08, 200_000) / rng.normal(4.0, 0.001, 200_000)
    expected = np.percentile(ratio, [16, 84])
    data = app.views["Period ladder"].plot.data["errors"]
    assert data["y0"][0] == pytest.approx(expected[0], abs=3e-3)
    assert data["y1"][0] == pytest.approx(expected[1], abs=3e-3)


def test_ladder_tooltip_fraction_is_the_other_nearest_fraction():
    system = loads_system(WIDE_PAIR, "wide.toml")
    app = OrbitDeckApp(system, samples=4000, uncertainty=True)
    ladder = app.views["Period ladder"]
    fraction = app.derived.extra["other_nearest_fraction"]
    # 5.89/4 = 1.4725, near 3:2 (1.5) and 7:5 (1.4): a sizeable share of draws is nearer another rung
    assert 0.05 < fraction[0] < 0.95
    pairs = ladder.plot.data["pairs"]
    assert pairs["other_text"][0] == f"in {100 * fraction[0]:.1f}% of draws another commensurability is nearer"
    d_lo, d_hi = app.derived.intervals["pairs"]["delta"]
    assert pairs["delta_range"][0] == f"{d_lo[0]:.4g}\u2013{d_hi[0]:.4g}"


def test_skies_and_observability_show_ranges(app):
    skies = app.views["Neighbour skies"]
    lo, hi = app.derived.intervals["skies"]["moon_ratio"]
    assert skies.matrix.data["cells"]["moon_range"][0] == f"{lo[0]:.3g}\u2013{hi[0]:.3g}"
    rows = np.flatnonzero(np.asarray(app.derived.skies["observer"]) == app.selected)
    assert skies.bars.data["bars"]["moon_range"] == [f"{a:.3g}\u2013{b:.3g}" for a, b in zip(lo[rows], hi[rows])]
    errors = skies.bars.data["errors"]
    np.testing.assert_allclose(errors["moon_ratio"] - errors["minus"], lo[rows])
    np.testing.assert_allclose(errors["moon_ratio"] + errors["plus"], hi[rows])
    # arcseconds to one decimal, as the nominal diameter beside them (tens of thousands for the star)
    lo, hi = app.derived.intervals["skies"]["max_angular_diameter_arcsec"]
    assert skies.matrix.data["cells"]["arcsec_range"][0] == f"{lo[0]:.1f}\u2013{hi[0]:.1f}"


def test_tsm_bars_carry_their_intervals(app):
    obs = app.views["Observability"]
    lo, hi = app.derived.intervals["planets"]["tsm"]
    tsm = app.derived.planets["tsm"]
    errors = obs.plot.data["errors"]
    np.testing.assert_allclose(errors["tsm"] - errors["minus"], lo)
    np.testing.assert_allclose(errors["tsm"] + errors["plus"], hi)
    assert np.all(errors["plus"] > 0)
    assert obs.plot.data["bars"]["tsm_range"] == [f"{a:.3g}\u2013{b:.3g}" for a, b in zip(lo, hi)]
    np.testing.assert_allclose(errors["tsm"], tsm)


def test_error_bars_switched_on_after_the_plots_were_drawn_are_shown():
    # the plots are drawn first without draws (as when a page opens), then the switch is turned on
    app = OrbitDeckApp(load_system(demo_path()), samples=SAMPLES)
    figures = {title: pn.pane.HoloViews(plot.live()).get_root(Document()).select_one({"type": Plot})
               for title, plot in (("Neighbour skies", app.views["Neighbour skies"].bars),
                                   ("Observability", app.views["Observability"].plot))}
    for figure in figures.values():
        whisker = figure.select_one({"type": Whisker})
        assert not np.isfinite(whisker.source.data["upper"]).any()   # nothing to draw yet
    app.uncertainty = True
    for title, figure in figures.items():
        whisker = figure.select_one({"type": Whisker})
        upper, lower = np.asarray(whisker.source.data["upper"]), np.asarray(whisker.source.data["lower"])
        assert whisker.visible and np.all(upper > lower), title
    lo, hi = app.derived.intervals["planets"]["tsm"]
    whisker = figures["Observability"].select_one({"type": Whisker})
    np.testing.assert_allclose(whisker.source.data["lower"], lo)
    np.testing.assert_allclose(whisker.source.data["upper"], hi)


def test_switch_derives_once_per_change_and_removes_the_marks(monkeypatch):
    calls = []
    real = app_module.derive

    def counting(system, samples=0, seed=None):
        calls.append((samples, seed))
        return real(system, samples=samples, seed=seed)

    monkeypatch.setattr(app_module, "derive", counting)
    app = OrbitDeckApp(load_system(demo_path()), samples=SAMPLES)
    assert calls == [(0, None)] and app.derived.intervals == {}
    flux, ladder, obs = app.views["Flux & temperature"], app.views["Period ladder"], app.views["Observability"]
    assert len(flux.plot.data["ranges"]["x0"]) == 0 and not np.isfinite(obs.plot.data["errors"]["plus"]).any()
    calls.clear()
    app.samples = 1000  # switch off: a new sample count derives nothing
    assert calls == []
    app.uncertainty = True
    assert calls == [(1000, DEFAULT_SEED)]
    assert len(flux.plot.data["ranges"]["x0"]) == 10
    assert len(ladder.plot.data["errors"]["y0"]) == 4
    calls.clear()
    app.system.star.mass = app.system.star.mass * 1.02  # an edit with the switch on: one derivation with draws
    assert calls == [(1000, DEFAULT_SEED)]
    calls.clear()
    app.samples = 500
    assert calls == [(500, DEFAULT_SEED)] and app.derived.samples == 500
    calls.clear()
    app.uncertainty = False
    assert calls == [(0, None)]
    assert app.derived.intervals == {}
    assert len(flux.plot.data["ranges"]["x0"]) == 0 and len(ladder.plot.data["errors"]["y0"]) == 0
    assert not np.isfinite(obs.plot.data["errors"]["plus"]).any()   # no bar drawn
    assert "od-range" not in " ".join(flux.tables["Orbits and irradiation"].value["insolation_earth"])
    assert "Monte Carlo" not in flux.caption.object


def test_the_switch_and_the_draws_entry_drive_the_app():
    app = OrbitDeckApp(load_system(demo_path()), samples=SAMPLES)
    app.controls.uncertainty.value = [app.controls.uncertainty.options[0]]
    assert app.uncertainty and app.derived.samples == SAMPLES
    assert "16th\u201384th percentiles of 800 Monte Carlo draws" in app.controls.uncertainty_message.object
    app.controls.samples.value = "1200"
    assert app.samples == 1200 and app.derived.samples == 1200
    app.controls.samples.value = "1200.5"
    assert "whole number" in app.controls.samples_message.object and app.samples == 1200
    app.controls.samples.value = "50"
    assert "&gt;= 100" in app.controls.samples_message.object and app.samples == 1200
    app.uncertainty = False
    assert app.controls.uncertainty.value == []


def test_snapshot_style_assignment_shows_intervals_with_the_switch_off():
    system = load_system(demo_path())
    app = OrbitDeckApp(system)
    app.derived = derive(system, samples=SAMPLES, seed=7)
    assert not app.uncertainty
    np.testing.assert_array_equal(app.views["Period ladder"].plot.data["errors"]["y1"],
                                  app.derived.intervals["pairs"]["period_ratio"][1])
    np.testing.assert_array_equal(app.views["Flux & temperature"].plot.data["ranges"]["x1"][:5],
                                  app.derived.intervals["planets"]["insolation_earth"][1])
