"""Kepler's equation and the anomalies, against independent references."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate, optimize

from orbitdeck.models.motion import kepler


def _brentq_reference(M, e):
    # scipy's bracketing root finder as an independent solver of E - e sin E = M;
    # the root lies in [M - e, M + e] because |E - M| = e |sin E| <= e.
    return optimize.brentq(lambda E: E - e * np.sin(E) - M, M - e - 1e-9, M + e + 1e-9, xtol=1e-15, rtol=1e-15)


@pytest.mark.parametrize("e_max", [0.99, 0.999])
def test_solve_kepler_matches_brentq_for_random_inputs(e_max):
    rng = np.random.default_rng(20240 + int(e_max * 1000))
    M = np.concatenate([rng.uniform(-4 * np.pi, 4 * np.pi, 600), [0.0, 1e-9, 1e-4, np.pi, -np.pi, 2 * np.pi - 1e-9]])
    e = np.concatenate([rng.uniform(0.0, e_max, 600), [e_max, e_max, e_max, e_max, 0.0, 0.5]])
    e[:40] = 0.0      # circular orbits
    e[40:120] = e_max   # the most eccentric orbits the docstring promises (0.999)
    M[80:120] = rng.uniform(-0.05, 0.05, 40)   # near periastron, where E - e sin E is flattest
    E = kepler.solve_kepler(M, e)
    ref = np.array([_brentq_reference(m, ee) for m, ee in zip(M, e)])
    # the solver stops when |E - e sin E - M| <= 1e-12 / 2; an error in M becomes one in E divided by
    # dM/dE = 1 - e cos E (up to 1000x at e = 0.999 near periastron)
    allowed = 0.5e-12 / (1 - e * np.cos(ref)) + 4e-15 * np.maximum(1.0, np.abs(ref))
    assert np.all(np.abs(E - ref) <= allowed), np.max(np.abs(E - ref) / allowed)


def test_solve_kepler_matches_scipy_newton():
    # scipy.optimize.newton, vectorised, started from E = M (a different start and method)
    rng = np.random.default_rng(7)
    M = rng.uniform(0, 2 * np.pi, 2000)
    e = rng.uniform(0, 0.8, 2000)
    ref = optimize.newton(lambda E: E - e * np.sin(E) - M, M, fprime=lambda E: 1 - e * np.cos(E),
                          tol=1e-14, maxiter=100)
    np.testing.assert_allclose(kepler.solve_kepler(M, e), ref, rtol=0, atol=1e-11)


def _residual(E, M, e):
    return kepler.wrap_angle(E - e * np.sin(E) - M)


def test_residual_bound_on_a_large_random_sample():
    rng = np.random.default_rng(3)
    M = rng.uniform(-50, 50, 200_000)
    e = rng.uniform(0, 0.999, 200_000)
    E = kepler.solve_kepler(M, e)
    assert np.max(np.abs(_residual(E, M, e))) <= 1e-12
    # E stays on the revolution of M: |E - M| <= e
    assert np.all(np.abs(E - M) <= e + 1e-12)


@settings(max_examples=300, deadline=None)
@given(M=st.floats(-1e3, 1e3, allow_nan=False), e=st.floats(0.0, 0.999))
def test_residual_bound_property(M, e):
    E = kepler.solve_kepler(M, e)
    assert abs(float(_residual(E, M, e))) <= 1e-12


def test_broadcasting_and_shapes():
    M = np.linspace(0, 6, 3)[:, None]
    e = np.array([0.0, 0.1, 0.5, 0.9])
    E = kepler.solve_kepler(M, e)
    assert E.shape == (3, 4)
    np.testing.assert_allclose(E[:, 0], M[:, 0], atol=1e-15)  # e = 0: E = M
    assert np.ndim(kepler.solve_kepler(1.0, 0.3)) == 0


def test_nan_passes_through_and_bad_eccentricity_is_refused():
    E = kepler.solve_kepler(np.array([np.nan, 1.0]), 0.5)
    assert np.isnan(E[0]) and np.isfinite(E[1])
    for bad in (1.0, -0.1, np.nan):
        with pytest.raises(ValueError, match="eccentricity"):
            kepler.solve_kepler(1.0, bad)


def test_one_step_from_the_starting_guess_reaches_the_tolerance_up_to_e_08():
    # Mikkola 1987: the cubic starting guess is good to a few 1e-3 rad; Danby 1987: the quartic step takes an
    # error eps to O(eps^4), so one step reaches the 1e-12 tolerance for moderate eccentricities (here e <= 0.8;
    # near e = 0.9 a few residuals land between 5e-13 and 1e-12 and take a second step), and two suffice to 0.999
    rng = np.random.default_rng(5)
    M = rng.uniform(-np.pi, np.pi, 100_000)
    E = kepler.solve_kepler(M, rng.uniform(0.0, 0.8, M.size), max_iter=1)
    assert np.all(np.isfinite(E))
    E = kepler.solve_kepler(M, rng.uniform(0.8, 0.999, M.size), max_iter=2)
    assert np.all(np.isfinite(E))


def test_non_convergence_is_reported():
    with pytest.raises(RuntimeError, match="did not converge"):
        kepler.solve_kepler(np.linspace(0.1, 3, 50), 0.95, max_iter=0)


def test_true_anomaly_against_cosine_and_sine_forms():
    # cos f = (cos E - e) / (1 - e cos E), sin f = sqrt(1 - e^2) sin E / (1 - e cos E)
    # (Murray & Dermott 1999, ch. 2), an independent form of the same relation
    rng = np.random.default_rng(11)
    E = rng.uniform(-np.pi, np.pi, 1000)
    e = rng.uniform(0, 0.99, 1000)
    den = 1 - e * np.cos(E)
    ref = np.arctan2(np.sqrt(1 - e ** 2) * np.sin(E) / den, (np.cos(E) - e) / den)
    np.testing.assert_allclose(kepler.true_anomaly(E, e), ref, atol=1e-12)
    np.testing.assert_allclose(kepler.eccentric_anomaly(ref, e), E, atol=1e-11)


def test_orbital_radius_against_conic_equation():
    # r = a (1 - e^2) / (1 + e cos f) (polar equation of the ellipse, Murray & Dermott 1999, ch. 2)
    e = np.linspace(0, 0.95, 20)
    E = np.linspace(-3, 3, 20)
    f = kepler.true_anomaly(E, e)
    np.testing.assert_allclose(kepler.orbital_radius(2.5, e, E), 2.5 * (1 - e ** 2) / (1 + e * np.cos(f)), rtol=1e-12)


def test_mean_anomaly_of_transit_circular_orbit():
    # e = 0: M = E = f = 90 deg - omega (Winn 2010, section 2.1)
    omega = np.radians([0.0, 90.0, 200.0, -45.0])
    np.testing.assert_allclose(kepler.mean_anomaly_of_transit(0.0, omega),
                               kepler.wrap_angle(np.pi / 2 - omega), atol=1e-15)


@pytest.mark.parametrize("e, omega_deg", [(0.2, 30.0), (0.6, 250.0), (0.95, 100.0), (0.4, -60.0)])
def test_mean_anomaly_of_transit_from_kepler_second_law(e, omega_deg):
    # Independent route: by the areal law the mean anomaly at true anomaly f is
    # (1 - e^2)^(3/2) * integral_0^f dphi / (1 + e cos phi)^2 (Murray & Dermott 1999, ch. 2),
    # integrated numerically with scipy.integrate.quad.
    f_tr = kepler.wrap_angle(np.pi / 2 - np.radians(omega_deg))
    integral, _ = integrate.quad(lambda p: 1.0 / (1 + e * np.cos(p)) ** 2, 0.0, float(f_tr), epsabs=1e-13, epsrel=1e-13)
    expected = (1 - e ** 2) ** 1.5 * integral
    assert kepler.mean_anomaly_of_transit(e, np.radians(omega_deg)) == pytest.approx(expected, abs=1e-10)


def test_starting_guess_is_close():
    # Mikkola 1987: the corrected cubic approximation is good to a few 1e-3 rad (from memory)
    M = np.linspace(-np.pi, np.pi, 2001)[:, None]
    e = np.linspace(0, 0.99, 100)
    E = kepler.solve_kepler(M, e)
    assert np.max(np.abs(kepler.kepler_starting_guess(M, e) - E)) < 5e-3
