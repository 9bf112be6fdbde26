"""Monte Carlo intervals in the dashboard's views, without a browser.

What is drawn is compared with ``derive(system, samples, seed)`` (the model's
own intervals) and, for the period ratios, with percentiles computed here
from independent draws of the periods (numpy's normal generator).
"""

from __future__ import annotations

import numpy as np
import pytest

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


def test_layout_bands_are_the_semi_major_axis_intervals(app):
    lo, hi = app.derived.intervals["planets"]["semi_major_axis_au"]
    data = app.views["Layout"].sources["bands"].data
    np.testing.assert_array_equal(data["inner"], lo)
    np.testing.assert_array_equal(data["outer"], hi)
    # the nominal semi-major axis lies inside its band, and the bands have width
    a = app.derived.planets["semi_major_axis_au"]
    assert np.all(lo < a) and np.all(a < hi)
    assert "16th\u201384th percentiles" in app.views["Layout"].note.text
    assert f"{SAMPLES} Monte Carlo draws" in app.views["Layout"].note.text


def test_flux_error_bars_are_the_insolation_intervals(app):
    lo, hi = app.derived.intervals["planets"]["insolation_earth"]
    flux = app.views["Flux & temperature"]
    data = flux.sources["errors"].data
    np.testing.assert_array_equal(data["lower"], lo)
    np.testing.assert_array_equal(data["upper"], hi)
    np.testing.assert_array_equal(data["R"], app.derived.planets["radius_rearth"])
    table = flux.table.value
    s, (_, t_hi) = app.derived.planets["insolation_earth"], app.derived.intervals["planets"]["teq_k"]
    first = table["S err (16\u201384%)"].iloc[0]
    plus, minus = first.split(" ")
    assert float(plus[1:]) == pytest.approx(hi[0] - s[0], rel=3e-3)
    assert float(minus[1:]) == pytest.approx(s[0] - lo[0], rel=3e-3)
    assert "Teq err (16\u201384%)" in table.columns
    assert float(table["Teq err (16\u201384%)"].iloc[-1].split(" ")[0][1:]) == pytest.approx(
        t_hi[-1] - app.derived.planets["teq_k"][-1], rel=2e-3)


def test_ladder_error_bars_are_the_period_ratio_intervals(app):
    lo, hi = app.derived.intervals["pairs"]["period_ratio"]
    data = app.views["Period ladder"].sources["errors"].data
    np.testing.assert_array_equal(data["lower"], lo)
    np.testing.assert_array_equal(data["upper"], hi)
    np.testing.assert_array_equal(data["x"], np.arange(len(lo)))


def test_ladder_intervals_match_independent_period_draws():
    # Independent check: the ratio of two normal period draws, percentiles by numpy (periods
    # without stellar dependence, so the model's interval must agree to Monte Carlo noise).
    system = loads_system(WIDE_PAIR, "wide.toml")
    app = OrbitDeckApp(system, samples=20000, uncertainty=True)
    rng = np.random.default_rng(1)
    ratio = rng.normal(5.89, 0.08, 200_000) / rng.normal(4.0, 0.001, 200_000)
    expected = np.percentile(ratio, [16, 84])
    data = app.views["Period ladder"].sources["errors"].data
    assert data["lower"][0] == pytest.approx(expected[0], abs=3e-3)
    assert data["upper"][0] == pytest.approx(expected[1], abs=3e-3)


def test_ladder_tooltip_fraction_is_the_other_nearest_fraction():
    system = loads_system(WIDE_PAIR, "wide.toml")
    app = OrbitDeckApp(system, samples=4000, uncertainty=True)
    ladder = app.views["Period ladder"]
    fraction = app.derived.extra["other_nearest_fraction"]
    # 5.89/4 = 1.4725, near 3:2 (1.5) and 7:5 (1.4): a sizeable share of draws is nearer another rung
    assert 0.05 < fraction[0] < 0.95
    np.testing.assert_array_equal(ladder.sources["pairs"].data["other_fraction"], fraction)
    assert ladder.sources["pairs"].data["other_text"][0] == (
        f"in {100 * fraction[0]:.1f}% of draws another commensurability is nearer")
    assert ("other rungs", "@other_text") in ladder.hover.tooltips
    d_lo, d_hi = app.derived.intervals["pairs"]["delta"]
    assert ladder.sources["pairs"].data["delta_range"][0] == f"{d_lo[0]:.4g}\u2013{d_hi[0]:.4g}"
    table = ladder.pairs_table.value
    assert table["other rung nearer [% of draws]"].iloc[0] == pytest.approx(100 * fraction[0])


def test_skies_and_observability_show_ranges(app):
    skies = app.views["Neighbour skies"]
    lo, hi = app.derived.intervals["skies"]["moon_ratio"]
    assert skies.sources["cells"].data["moon_range"][0] == f"{lo[0]:.3g}\u2013{hi[0]:.3g}"
    assert any(label.startswith("16th") for label, _ in skies.cell_hover.tooltips)
    rows = np.flatnonzero(np.asarray(app.derived.skies["observer"]) == app.selected)
    assert skies.sources["bars"].data["moon_range"] == [f"{a:.3g}\u2013{b:.3g}" for a, b in zip(lo[rows], hi[rows])]
    # arcseconds to one decimal, as the nominal diameter beside them (tens of thousands for the star)
    lo, hi = app.derived.intervals["skies"]["max_angular_diameter_arcsec"]
    assert skies.sources["cells"].data["arcsec_range"][0] == f"{lo[0]:.1f}\u2013{hi[0]:.1f}"
    table = app.views["Observability"].table.value
    for column in ("depth", "T14", "TSM", "K"):
        assert f"{column} err (16\u201384%)" in table.columns
    k, (k_lo, _) = app.derived.planets["rv_semi_amplitude_ms"], app.derived.intervals["planets"][
        "rv_semi_amplitude_ms"]
    assert float(table["K err (16\u201384%)"].iloc[0].split(" ")[1][1:]) == pytest.approx(k[0] - k_lo[0], rel=2e-3)


def test_switch_derives_once_per_change_and_removes_the_marks(monkeypatch):
    calls = []
    real = app_module.derive

    def counting(system, samples=0, seed=None):
        calls.append((samples, seed))
        return real(system, samples=samples, seed=seed)

    monkeypatch.setattr(app_module, "derive", counting)
    app = OrbitDeckApp(load_system(demo_path()), samples=SAMPLES)
    assert calls == [(0, None)] and app.derived.intervals == {}
    layout, flux, ladder = app.views["Layout"], app.views["Flux & temperature"], app.views["Period ladder"]
    assert len(layout.sources["bands"].data["inner"]) == 0
    calls.clear()
    app.samples = 1000  # switch off: a new sample count derives nothing
    assert calls == []
    app.uncertainty = True
    assert calls == [(1000, DEFAULT_SEED)]
    assert len(layout.sources["bands"].data["inner"]) == 5
    assert len(flux.sources["errors"].data["lower"]) == 5
    assert len(ladder.sources["errors"].data["lower"]) == 4
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
    for source in (layout.sources["bands"], flux.sources["errors"], ladder.sources["errors"]):
        assert all(len(v) == 0 for v in source.data.values())
    assert "err (16" not in " ".join(flux.table.value.columns)
    assert ("other rungs", "@other_text") not in ladder.hover.tooltips
    assert flux.error_note.text == "" and ladder.error_note.text == ""


def test_the_switch_widget_drives_the_app():
    app = OrbitDeckApp(load_system(demo_path()), samples=SAMPLES)
    app.controls.uncertainty.value = True
    assert app.uncertainty and app.derived.samples == SAMPLES
    assert "16th\u201384th percentiles of 800 Monte Carlo draws" in app.controls.uncertainty_message.object


def test_snapshot_style_assignment_shows_intervals_with_the_switch_off():
    system = load_system(demo_path())
    app = OrbitDeckApp(system)
    app.derived = derive(system, samples=SAMPLES, seed=7)
    assert not app.uncertainty
    np.testing.assert_array_equal(app.views["Layout"].sources["bands"].data["outer"],
                                  app.derived.intervals["planets"]["semi_major_axis_au"][1])
    np.testing.assert_array_equal(app.views["Flux & temperature"].sources["errors"].data["upper"],
                                  app.derived.intervals["planets"]["insolation_earth"][1])
