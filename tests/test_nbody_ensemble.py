"""N-body ensembles: stability against Gladman's criterion, reproducibility over chunks and schedulers,
progress and cancellation, and the summary statistics against independent computations."""

from __future__ import annotations

import threading

import numpy as np
import pytest
from scipy.stats import norm

from orbitdeck.demo_systems import demo_path
from orbitdeck.models import Planet, Star, System, Uncertainty, load_system
from orbitdeck.models.physics.dynamics import mutual_hill_spacing
from orbitdeck.models.constants import EARTH_TO_SUN_MASS
from orbitdeck.models.nbody import (CLOSE_ENCOUNTER, EJECTION, ENERGY_ERROR, SURVIVED, EnsembleCancelled, Settings,
                                    run_ensemble)
from orbitdeck.models.nbody.results import binomial_interval, half_range, linear_ephemeris_residuals


def hill_spaced_pair(spacing: float, mass_mearth: float = 10.0) -> System:
    """Two planets of a Sun-mass star on circular coplanar orbits ``spacing`` mutual Hill radii apart
    (R_H = ((m1 + m2) / 3 M*)^(1/3) (a1 + a2) / 2, Chambers et al. 1996), the inner mass uncertain."""
    h = (2 * mass_mearth * EARTH_TO_SUN_MASS / 3) ** (1 / 3)
    ratio = (1 + spacing * h / 2) / (1 - spacing * h / 2)          # a2 / a1 for that spacing
    inner = Planet(name="b", period=10.0, radius=2.0, mass=mass_mearth, inclination=90.0, transit_time=2461001.0)
    inner.set_uncertainty("mass", Uncertainty(plus=1.0, minus=1.0))
    outer = Planet(name="c", period=10.0 * ratio ** 1.5, radius=2.0, mass=mass_mearth, inclination=90.0,
                   transit_time=2461004.0)
    return System(name=f"pair {spacing} R_H apart", epoch=2461000.0, star=Star(mass=1.0, radius=1.0, teff=5772.0),
                  planets=[inner, outer])


def test_pair_construction_has_the_intended_spacing():
    system = hill_spaced_pair(1.5)
    a1, a2 = (p.period ** (2 / 3) for p in system.planets)       # Kepler's third law, common factor dropped
    m = 10.0 * EARTH_TO_SUN_MASS
    assert mutual_hill_spacing(a1, a2, m, m, 1.0) == pytest.approx(1.5, rel=1e-6)


def test_pair_closer_than_two_sqrt3_hill_radii_goes_unstable_quickly():
    # Gladman 1993 (Icarus 106, 247): circular coplanar pairs closer than 2 sqrt(3) mutual Hill radii are
    # not Hill stable; at 1.5 R_H nearly every draw meets a close encounter within a few hundred orbits,
    # and a draw that has not yet is chaotic (MEGNO far above 2)
    result = run_ensemble(hill_spaced_pair(1.5), draws=8, orbits=300, seed=2, scheduler="synchronous")
    encounter = result.outcome == CLOSE_ENCOUNTER
    assert encounter.sum() >= 6
    assert np.all(result.survival_orbits[encounter] < 300)
    assert np.all(result.megno[~encounter] > 5.0)
    assert result.stable_fraction == np.count_nonzero(~encounter) / 8
    times, surviving = result.survival_curve()
    assert surviving[-1] == result.stable_fraction and np.all(np.diff(surviving) <= 0)
    assert surviving[0] == 7 / 8                      # past the first stop, one draw fewer runs


def test_hill_stable_pair_survives_with_regular_motion():
    # at 4 mutual Hill radii (beyond 2 sqrt 3) the same pair is Hill stable: every draw survives, and the
    # mean MEGNO is close to 2, the value of quasi-periodic motion (Cincotta & Simo 2000)
    result = run_ensemble(hill_spaced_pair(4.0), draws=8, orbits=300, seed=2, scheduler="synchronous")
    assert np.all(result.outcome == SURVIVED)
    np.testing.assert_allclose(result.megno, 2.0, atol=0.15)
    assert np.all(result.energy_error < 1e-6)


@pytest.fixture(scope="module")
def demo():
    return load_system(demo_path("skew_trio"))


@pytest.fixture(scope="module")
def reference_run(demo):
    return run_ensemble(demo, draws=7, orbits=30, seed=11, scheduler="synchronous", chunk_draws=7)


def _same(a, b):
    assert np.array_equal(a.outcome, b.outcome)
    assert np.array_equal(a.survival_orbits, b.survival_orbits)
    assert np.array_equal(a.megno, b.megno, equal_nan=True)
    assert np.array_equal(a.energy_error, b.energy_error)
    for x, y in zip(a.transit_times, b.transit_times):
        assert np.array_equal(x, y, equal_nan=True)


@pytest.mark.parametrize("chunk_draws, wave_orbits", [(1, 4), (3, 7), (4, 30)])
def test_same_seed_same_results_whatever_the_chunking(demo, reference_run, chunk_draws, wave_orbits):
    # every draw's numbers depend on its own inputs only: bitwise the same for any split into tasks
    _same(reference_run, run_ensemble(demo, draws=7, orbits=30, seed=11, scheduler="synchronous",
                                      chunk_draws=chunk_draws, wave_orbits=wave_orbits))


def test_threads_and_processes_give_the_same_numbers(demo, reference_run):
    _same(reference_run, run_ensemble(demo, draws=7, orbits=30, seed=11, scheduler="threads", chunk_draws=2))
    _same(reference_run, run_ensemble(demo, draws=7, orbits=30, seed=11, scheduler="processes", chunk_draws=4))


def test_local_dask_cluster_gives_the_same_numbers(demo, reference_run):
    from distributed import Client, LocalCluster

    with LocalCluster(n_workers=2, threads_per_worker=1, processes=False, dashboard_address=None) as cluster, \
            Client(cluster) as client:
        _same(reference_run, run_ensemble(demo, draws=7, orbits=30, seed=11, scheduler=client, chunk_draws=3))
        _same(reference_run, run_ensemble(demo, draws=7, orbits=30, seed=11, scheduler=cluster.scheduler_address,
                                          chunk_draws=2, wave_orbits=10))


def test_a_different_seed_gives_different_draws(demo, reference_run):
    other = run_ensemble(demo, draws=7, orbits=30, seed=12, scheduler="synchronous")
    assert not np.array_equal(other.transit_times[0], reference_run.transit_times[0], equal_nan=True)


def test_progress_is_reported_and_cancellation_stops_the_run(demo):
    reports = []
    run_ensemble(demo, draws=3, orbits=20, seed=1, scheduler="synchronous", wave_orbits=5,
                 progress=lambda done, total: reports.append((done, total)))
    assert reports == [(0, 20), (5, 20), (10, 20), (15, 20), (20, 20)]
    cancel = threading.Event()

    def stop_after_first_wave(done, total):
        if done:
            cancel.set()

    with pytest.raises(EnsembleCancelled):
        run_ensemble(demo, draws=3, orbits=20, seed=1, scheduler="threads", wave_orbits=5,
                     progress=stop_after_first_wave, cancel=cancel)


def test_bad_arguments_are_refused_with_their_names(demo):
    with pytest.raises(ValueError, match="draws"):
        run_ensemble(demo, draws=0, orbits=10)
    with pytest.raises(ValueError, match="orbits"):
        run_ensemble(demo, draws=2, orbits=2.5)
    with pytest.raises(ValueError, match="seed"):
        run_ensemble(demo, draws=2, orbits=2, seed=-1)
    with pytest.raises(ValueError, match="scheduler"):
        run_ensemble(demo, draws=2, orbits=2, scheduler="nonsense")


def test_the_document_holds_the_promised_keys(reference_run):
    doc = reference_run.to_dict()
    assert {"draws", "orbits", "seed", "stable_fraction", "stable_interval", "survival_orbits"} <= set(doc)
    assert doc["draws"] == 7 and doc["orbits"] == 30 and doc["seed"] == 11
    assert len(doc["survival_orbits"]) == 7
    low, high = doc["stable_interval"]
    assert low <= doc["stable_fraction"] <= high
    assert [p["name"] for p in doc["planets"]] == ["b", "c", "d"]
    assert all("ttv_amplitude_min" in p for p in doc["planets"])
    assert "estimates" in doc["assumptions"]


def test_ttv_band_follows_the_draws(reference_run):
    # the band's middle is the median over the stable draws of each transit's residual (numpy's nanmedian)
    middle, band = reference_run.ttv_band(0)
    stable = reference_run.stable
    residuals = reference_run.ttv_residuals_min[0][stable]
    seen = np.isfinite(middle)
    assert seen.sum() >= 1
    np.testing.assert_allclose(band[1, seen], np.nanmedian(residuals[:, seen], axis=0))
    assert np.all(band[0, seen] <= band[1, seen]) and np.all(band[1, seen] <= band[2, seen])


def test_wilson_interval_matches_its_closed_form():
    # Wilson 1927 (JASA 22, 209): (p + z^2/2n +- z sqrt(p(1-p)/n + z^2/4n^2)) / (1 + z^2/n), z for 68.27 %
    z = norm.ppf(0.5 + 0.6827 / 2)
    for k, n in ((0, 10), (7, 10), (97, 100), (1000, 1000)):
        p = k / n
        centre, half = p + z * z / (2 * n), z * np.sqrt(p * (1 - p) / n + z * z / (4 * n * n))
        expected = ((centre - half) / (1 + z * z / n), (centre + half) / (1 + z * z / n))
        np.testing.assert_allclose(binomial_interval(k, n), expected, rtol=1e-9, atol=1e-12)


def test_linear_ephemeris_matches_numpy_polyfit():
    rng = np.random.default_rng(5)
    times = 3.0 + 2.5 * np.arange(40) + rng.normal(0, 0.01, 40)
    times[30:] = np.nan
    t0, period, residuals = linear_ephemeris_residuals(times[None, :])
    slope, intercept = np.polyfit(np.arange(30), times[:30], 1)
    assert period[0] == pytest.approx(slope, rel=1e-12) and t0[0] == pytest.approx(intercept, rel=1e-12)
    assert half_range(residuals)[0] == pytest.approx(np.ptp(residuals[0, :30]) / 2)


def test_each_stopping_rule_stops_the_draws_it_should(demo):
    # a huge close-encounter radius stops every draw at the first step
    result = run_ensemble(demo, draws=2, orbits=5, seed=1, scheduler="synchronous",
                          settings=Settings(hill_multiple=1e3, chaos=False))
    assert np.all(result.outcome == CLOSE_ENCOUNTER)
    assert np.all(result.survival_orbits == 1 / 20)
    assert np.all(np.isnan(result.megno))
    # an ejection distance inside the outermost orbit, and an energy threshold no integration meets,
    # stop every draw at the end of the first orbit
    for settings, reason in ((Settings(ejection_multiple=0.5), EJECTION), (Settings(energy_threshold=1e-300),
                                                                            ENERGY_ERROR)):
        result = run_ensemble(demo, draws=2, orbits=5, seed=1, scheduler="synchronous", settings=settings)
        assert np.all(result.outcome == reason) and np.all(result.survival_orbits == 1.0)
        assert result.stable_fraction == 0.0
    # a finer step changes the numbers only slightly
    fine = run_ensemble(demo, draws=2, orbits=5, seed=1, scheduler="synchronous", settings=Settings(steps_per_orbit=40))
    coarse = run_ensemble(demo, draws=2, orbits=5, seed=1, scheduler="synchronous")
    difference = np.nanmax(np.abs(fine.transit_times[0] - coarse.transit_times[0]))
    assert 0.0 < difference < 1e-4                               # days
