"""Transit forecasts from a linear ephemeris: epochs, growing windows, durations, secondary eclipses, overlaps.

Each check names its source beside it: hand arithmetic, Winn 2010
("Transits and Occultations", arXiv:1001.2010), or scipy as an independent
solver of Kepler's equation.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.optimize import brentq

from orbitdeck.demo_systems import demo_path
from orbitdeck.models import Planet, Star, System, Uncertainty, derive, load_system
from orbitdeck.models.motion.forecast import (MAX_RANGE_DAYS, ForecastInputError, epochs_in_range, forecast_transits,
                                       mid_time_sigma, nominal_transit_durations, secondary_eclipse_delay,
                                       secondary_eclipse_delay_first_order)
from orbitdeck.models.motion.visibility import forecast_rows


def small_system(*planets, star=None) -> System:
    return System(name="forecast test", star=star or Star(name="s", mass=0.2, radius=0.22, teff=3200.0),
                  planets=list(planets))


def test_window_growth_on_a_hand_example():
    # hand arithmetic: sigma_T0 = 0.0010 d, sigma_P = 0.0002 d, n = 100:
    # sqrt(0.0010^2 + (100 * 0.0002)^2) = sqrt(1.0e-6 + 4.0e-4) = sqrt(4.01e-4) = 0.0200249844 d
    assert mid_time_sigma(0.0010, 0.0002, 100) == pytest.approx(0.0200249844, rel=1e-9)
    # n = 0 leaves sigma_T0; past epochs (n < 0) widen the same way
    assert mid_time_sigma(0.0010, 0.0002, 0) == pytest.approx(0.0010, rel=1e-12)
    assert mid_time_sigma(0.0010, 0.0002, -100) == pytest.approx(0.0200249844, rel=1e-9)


def test_a_forecast_carries_the_growing_window_of_each_epoch():
    planet = Planet(name="b", period=3.0, radius=1.0, transit_time=2461000.5)
    planet.set_uncertainty("transit_time", Uncertainty.from_sigma(0.0010))
    planet.set_uncertainty("period", Uncertainty(0.0002, 0.0001))    # asymmetric: the larger side is used
    forecast = forecast_transits(small_system(planet), 2461299.0, 2461302.0)
    # hand arithmetic: (2461299.0 - 2461000.5) / 3 = 99.5, so the one epoch is n = 100 at 2461300.5
    assert forecast.epoch.tolist() == [100] and forecast.mid.tolist() == [2461300.5]
    assert forecast.sigma[0] == pytest.approx(0.0200249844, rel=1e-9)
    low, high = forecast.window(3.0)
    assert high[0] - low[0] == pytest.approx(6 * 0.0200249844, abs=2e-9)   # differences of BJD ~2.5e6 d
    assert forecast_rows(forecast)[0]["sigma_min"] == pytest.approx(0.0200249844 * 1440.0, rel=1e-9)


def test_ttv_padding_is_added_to_the_windows_and_labelled():
    planet = Planet(name="b", period=3.0, radius=1.0, transit_time=2461000.5)
    planet.set_uncertainty("transit_time", Uncertainty.from_sigma(0.001))
    forecast = forecast_transits(small_system(planet), 2461000.0, 2461010.0, ttv_padding={"b": 0.01})
    low, high = forecast.window(1.0)
    assert np.allclose(high - forecast.mid, 0.011) and np.allclose(forecast.mid - low, 0.011)
    assert forecast_rows(forecast)[0]["ttv_padding_min"] == pytest.approx(14.4)
    assert "ttv_padding_min" not in forecast_rows(forecast_transits(small_system(planet), 2461000.0, 2461010.0))[0]


def test_epochs_of_a_range_by_hand():
    # hand arithmetic: T0 = 2461000.5, P = 3: transits at 2461012.5 (n = 4), 015.5 (5), 018.5 (6) in [010, 020];
    # a second planet before its T0: T0 = 2461030.0, P = 7: 2461016.0 (n = -2) only
    planet, epoch = epochs_in_range([2461000.5, 2461030.0], [3.0, 7.0], 2461010.0, 2461020.0)
    assert planet.tolist() == [0, 0, 0, 1] and epoch.tolist() == [4, 5, 6, -2]
    # both ends belong to the range
    planet, epoch = epochs_in_range([2461000.5], [3.0], 2461012.5, 2461018.5)
    assert epoch.tolist() == [4, 5, 6]


def test_ingress_and_egress_lie_half_the_derived_duration_either_side():
    system = load_system(demo_path())
    durations_h = derive(system).planets["transit_duration_h"]
    assert nominal_transit_durations(system) * 24.0 == pytest.approx(durations_h, rel=1e-12)
    forecast = forecast_transits(system, 2461041.5, 2461071.5)
    expected = np.asarray(durations_h)[forecast.planet] / 24.0
    assert forecast.egress - forecast.ingress == pytest.approx(expected, abs=2e-9)   # BJD ~2.5e6 d: ~5e-10 d steps
    assert (forecast.ingress + forecast.egress) / 2 == pytest.approx(forecast.mid, abs=1e-9)
    assert np.all(np.diff(forecast.mid) >= 0.0)


def _true_anomaly_at(t, period, e):
    """True anomaly in [0, 2 pi) at time t after periastron, Kepler's equation solved by scipy's brentq
    (independent of the project's own solver and of its anomaly conversions)."""
    mean = 2.0 * math.pi * (t / period % 1.0)
    eccentric = brentq(lambda E: E - e * math.sin(E) - mean, 0.0, 2.0 * math.pi, xtol=1e-15)
    f = 2.0 * math.atan2(math.sqrt(1 + e) * math.sin(eccentric / 2), math.sqrt(1 - e) * math.cos(eccentric / 2))
    return f % (2.0 * math.pi)


def _time_of_true_anomaly(f, period, e):
    """The time after periastron at which the true anomaly is ``f`` (f increases monotonically over an orbit)."""
    target = f % (2.0 * math.pi)
    return brentq(lambda t: _true_anomaly_at(t, period, e) - target, 0.0, period * (1 - 1e-12), xtol=1e-13)


@pytest.mark.parametrize("e, omega_deg", [(0.3, 40.0), (0.6, 200.0), (0.1, 280.0), (0.0, 90.0)])
def test_secondary_eclipse_delay_against_a_forward_solution_of_keplers_equation(e, omega_deg):
    # Winn 2010 section 2.1: transit at f = pi/2 - omega, occultation at f = 3 pi/2 - omega (observer on +Z);
    # the times of those true anomalies are found here forwards, time -> anomaly, with scipy's root finder
    period, omega = 10.0, math.radians(omega_deg)
    transit = _time_of_true_anomaly(math.pi / 2 - omega, period, e)
    occultation = _time_of_true_anomaly(1.5 * math.pi - omega, period, e)
    expected = (occultation - transit) % period
    assert float(secondary_eclipse_delay(period, e, omega)) == pytest.approx(expected, abs=1e-9)


def test_forecast_puts_each_secondary_eclipse_after_its_transit():
    # an eccentric planet's occultation follows each transit by the delay found forwards with scipy (Winn 2010
    # section 2.1, as above), not half a period; the forecast carries it for every epoch
    period, e, omega_deg, t0 = 6.0, 0.3, 40.0, 2461000.25
    planet = Planet(name="b", period=period, radius=1.5, transit_time=t0, eccentricity=e, omega=omega_deg)
    forecast = forecast_transits(small_system(planet), t0 - 0.5, t0 + 20.0)
    omega = math.radians(omega_deg)
    delay = (_time_of_true_anomaly(1.5 * math.pi - omega, period, e)
             - _time_of_true_anomaly(math.pi / 2 - omega, period, e)) % period
    assert abs(delay - period / 2) > 0.5                       # far from half a period at this e and omega
    assert forecast.secondary - forecast.mid == pytest.approx(np.full(len(forecast), delay), abs=1e-8)
    assert forecast_rows(forecast)[1]["secondary_eclipse_bjd_tdb"] == pytest.approx(t0 + period + delay, abs=1e-8)


def test_secondary_eclipse_limits_and_first_order_agreement():
    # circular orbit: half a period exactly (Winn 2010 eq. 33 with e = 0)
    assert secondary_eclipse_delay(12.0, 0.0, 1.3) == pytest.approx(6.0, abs=1e-12)
    # small e: the exact delay and Winn 2010 eq. 33 agree to second order in e
    for omega in np.radians([0.0, 30.0, 135.0, 250.0]):
        exact = secondary_eclipse_delay(10.0, 0.01, omega)
        first = secondary_eclipse_delay_first_order(10.0, 0.01, omega)
        assert abs(exact - first) < 10.0 * 0.01 ** 2
    # e cos omega > 0 puts the occultation later than half a period (Winn 2010 eq. 33)
    assert secondary_eclipse_delay(10.0, 0.2, 0.0) > 5.0 > secondary_eclipse_delay(10.0, 0.2, np.pi)


def test_overlapping_transits_of_different_planets_are_flagged():
    # hand example: P = 2 and 3 d from a common T0 coincide every 6 d (T0, T0 + 6, ...); b alone at T0 + 2, 4,
    # c alone at T0 + 3; both last about 1.4 h, so only the shared times overlap
    t0 = 2461000.0
    b = Planet(name="b", period=2.0, radius=1.0, transit_time=t0)
    c = Planet(name="c", period=3.0, radius=1.0, transit_time=t0)
    forecast = forecast_transits(small_system(b, c), t0 - 0.1, t0 + 12.1)
    flagged = {(forecast.planet_names[p], round(m - t0, 6)): o
               for p, m, o in zip(forecast.planet, forecast.mid, forecast.overlaps)}
    assert flagged == {("b", 0.0): ("c",), ("c", 0.0): ("b",), ("b", 2.0): (), ("c", 3.0): (), ("b", 4.0): (),
                       ("b", 6.0): ("c",), ("c", 6.0): ("b",), ("b", 8.0): (), ("c", 9.0): (), ("b", 10.0): (),
                       ("b", 12.0): ("c",), ("c", 12.0): ("b",)}


def test_transits_that_only_touch_the_duration_apart_do_not_overlap_but_closer_ones_do():
    t0 = 2461000.0
    b = Planet(name="b", period=2.0, radius=1.0, transit_time=t0)
    durations = nominal_transit_durations(small_system(b, Planet(name="c", period=5.0, radius=1.0, transit_time=t0)))
    mean = float(durations.mean())
    for offset, overlapping in ((1.02 * mean, False), (0.98 * mean, True)):
        c = Planet(name="c", period=5.0, radius=1.0, transit_time=t0 + offset)
        forecast = forecast_transits(small_system(b, c), t0 - 0.5, t0 + 0.5 + offset)
        assert bool(forecast.overlaps[0]) is overlapping


def test_missing_transit_times_are_named():
    with pytest.raises(ForecastInputError) as error:
        forecast_transits(small_system(Planet(name="b", period=2.0, radius=1.0)), 2461000.0, 2461010.0)
    assert error.value.problems == [("planets[0] (b).transit_time",
                                     "has none (a mid-transit time, BJD_TDB), which forecasts need")]
    # some with, some without: the others are forecast and the missing field is named in a note
    forecast = forecast_transits(small_system(Planet(name="b", period=2.0, radius=1.0),
                                              Planet(name="c", period=3.0, radius=1.0, transit_time=2461000.0)),
                                 2461000.0, 2461010.0)
    assert set(forecast.planet_names[i] for i in forecast.planet) == {"c"}
    assert "planets[0] (b).transit_time: has none (a mid-transit time, BJD_TDB), which forecasts need; it is " \
           "left out" in forecast.notes


@pytest.mark.parametrize("start, end, field", [(2461010.0, 2461000.0, "end"), (2461000.0, 2461000.0, "end"),
                                               (2461000.0, 2461000.0 + MAX_RANGE_DAYS + 1.0, "end"),
                                               (float("nan"), 2461000.0, "start")])
def test_bad_ranges_are_refused_naming_the_field(start, end, field):
    planet = Planet(name="b", period=2.0, radius=1.0, transit_time=2461000.0)
    with pytest.raises(ForecastInputError) as error:
        forecast_transits(small_system(planet), start, end)
    assert error.value.problems[0][0] == field


def test_five_years_is_the_longest_range():
    # 5 Julian years = 1826.25 d (stated maximum)
    assert MAX_RANGE_DAYS == pytest.approx(1826.25)
    planet = Planet(name="b", period=20.0, radius=1.0, transit_time=2461000.0)
    assert len(forecast_transits(small_system(planet), 2461000.0, 2461000.0 + MAX_RANGE_DAYS)) == 92
