"""The N-body integrator against the outside world: Kepler's problem, scipy's solve_ivp, the Sun's giants.

Independent references: Kepler's equation solved with scipy.optimize.brentq
and the ellipse in the orbital plane (Murray & Dermott 1999, Solar System
Dynamics, eqs. 2.41-2.43 and 2.122 with the node at 0; equation numbers
from memory); the hyperbolic Kepler equation likewise; Stumpff's functions
in closed form with numpy's trigonometric and hyperbolic functions (Danby
1988); Newton's equations of motion integrated with scipy's DOP853 at
rtol 1e-12.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

from orbitdeck.models.constants import GM_SUN_AU3_D2
from orbitdeck.models.nbody.integrator import WisdomHolman, step_many
from orbitdeck.models.nbody.jacobi import Masses, cartesian_from_elements, heliocentric_from_jacobi, semi_major_axis
from orbitdeck.models.nbody.kepler_drift import kepler_drift, stumpff_c0_to_c3

from newton_reference import newton as _newton


def kepler_position(a, e, inclination, omega, mean_anomaly):
    """Position on an ellipse with the node at 0, by brentq on Kepler's equation (M&D eqs. 2.41-2.43, 2.122)."""
    turns = np.round(mean_anomaly / (2 * np.pi))
    m = mean_anomaly - 2 * np.pi * turns
    big_e = brentq(lambda x: x - e * np.sin(x) - m, m - 1.0 - e, m + 1.0 + e, xtol=1e-15, rtol=1e-15)
    x_orbit, y_orbit = a * (np.cos(big_e) - e), a * np.sqrt(1 - e * e) * np.sin(big_e)
    x = x_orbit * np.cos(omega) - y_orbit * np.sin(omega)
    y = x_orbit * np.sin(omega) + y_orbit * np.cos(omega)
    return np.array([x, y * np.cos(inclination), y * np.sin(inclination)])


def test_stumpff_functions_match_their_closed_forms():
    # c0 = cos sqrt z, c1 = sin sqrt z / sqrt z, c2 = (1 - c0) / z, c3 = (1 - c1) / z (Danby 1988, section 6.9);
    # for z < 0 the hyperbolic cosh and sinh. Arguments large enough that the closed forms lose no digits.
    z = np.array([0.7, 3.0, 25.0, 400.0, -0.7, -3.0, -25.0, -200.0])
    root = np.sqrt(np.abs(z))
    c0_ref = np.where(z > 0, np.cos(root), np.cosh(root))
    c1_ref = np.where(z > 0, np.sin(root), np.sinh(root)) / root
    for got, ref in zip(stumpff_c0_to_c3(z), (c0_ref, c1_ref, (1 - c0_ref) / z, (1 - c1_ref) / z)):
        np.testing.assert_allclose(got, ref, rtol=2e-12, atol=1e-15)
    # small arguments against the first terms of the series: c2 = 1/2 - z/24, c3 = 1/6 - z/120 (+ O(z^2))
    small = np.array([1e-6, -1e-6])
    _, _, c2, c3 = stumpff_c0_to_c3(small)
    np.testing.assert_allclose(c2, 0.5 - small / 24 + small ** 2 / 720, rtol=1e-15)
    np.testing.assert_allclose(c3, 1 / 6 - small / 120 + small ** 2 / 5040, rtol=1e-15)


def test_kepler_drift_matches_keplers_equation_for_ellipses():
    # random ellipses and steps of up to several orbits, against brentq on Kepler's equation
    rng = np.random.default_rng(7)
    count = 200
    e = rng.uniform(0.0, 0.95, count)
    a = rng.uniform(0.3, 3.0, count)
    gm = rng.uniform(0.5, 2.0, count)
    inclination, omega = rng.uniform(0.0, np.pi, count), rng.uniform(0.0, 2 * np.pi, count)
    m0 = rng.uniform(-np.pi, np.pi, count)
    n = np.sqrt(gm / a ** 3)
    dt = rng.uniform(-20.0, 20.0, count) / n
    x, v = cartesian_from_elements(gm, a, e, inclination, omega, m0)
    kepler_drift(x, v, gm, dt)
    expected = np.array([kepler_position(*args) for args in zip(a, e, inclination, omega, m0 + n * dt)]).T
    np.testing.assert_array_less(np.linalg.norm(x - expected, axis=0) / a, 1e-11)


def test_kepler_drift_follows_a_hyperbola():
    # hyperbolic Kepler equation M = e sinh F - F, r = a (e cosh F - 1), with a > 0 the |semi-major axis|
    # and n = sqrt(GM / a^3) (M&D section 2.8, from memory), solved with brentq
    gm, a, e = 1.0, 1.0, 1.5
    n = np.sqrt(gm / a ** 3)

    def state(mean):
        f = brentq(lambda x: e * np.sinh(x) - x - mean, -20, 20, xtol=1e-15)
        position = np.array([a * (e - np.cosh(f)), a * np.sqrt(e * e - 1) * np.sinh(f), 0.0])
        f_dot = n / (e * np.cosh(f) - 1)
        velocity = np.array([-a * np.sinh(f) * f_dot, a * np.sqrt(e * e - 1) * np.cosh(f) * f_dot, 0.0])
        return position, velocity

    x, v = (value[:, None] for value in state(-2.0))
    kepler_drift(x, v, gm, np.array([5.0 / n]))
    np.testing.assert_allclose(x[:, 0], state(3.0)[0], rtol=1e-12, atol=1e-12)


def test_a_lone_planet_feels_no_interaction():
    # H_int = G m_1 eta_0 / r'_1 - G m_0 m_1 / r_1 vanishes for one planet (x'_1 = d_1, eta_0 = m_0;
    # Wisdom & Holman 1991): the kick is exactly zero, not just small
    masses = Masses.of(np.full((1, 3), 0.3), np.full((1, 3), 1e-4))
    a = semi_major_axis(masses.interior, np.full((1, 3), 3.0))
    x, _ = cartesian_from_elements(masses.interior, a, np.array([0.0, 0.1, 0.5]), 1.0, 0.3, np.array([0.1, 2.0, 4.0]))
    assert np.all(WisdomHolman(masses).accelerations(x) == 0.0)


def test_single_planet_follows_keplers_solution_over_1000_orbits():
    # a lone planet's Jacobi interaction vanishes exactly: the map is Kepler's motion to rounding. At
    # the default step (1/20 of the period) the position stays within 2e-11 of a after 100 orbits and
    # within 1e-9 after 1000 orbits (20 000 steps). Each step rounds the state to double precision, an
    # energy error of about one unit in the last place; their random walk shifts the phase by about
    # 1.1e-16 N^(3/2) = 3e-10 after N = 20 000 steps (Brouwer's law), which is what is measured here
    # (1e-10 to 3.5e-10), so 1e-10 after 1000 orbits is out of reach of any double-precision map.
    e = np.array([0.0, 0.1, 0.4, 0.7])
    inclination, omega, m0 = np.radians([90.0, 89.0, 60.0, 120.0]), np.radians([0.0, 40.0, 200.0, 300.0]), \
        np.array([0.3, 1.0, 2.0, -2.5])
    gm_star, gm_planet = GM_SUN_AU3_D2 * 0.3, GM_SUN_AU3_D2 * 0.3 * 1e-4 * np.array([1.0, 3.0, 10.0, 30.0])
    masses = Masses.of(np.full((1, 4), gm_star), gm_planet[None, :])
    period = np.array([[3.0, 7.5, 20.0, 41.0]])
    a = semi_major_axis(masses.interior, period)
    x, v = cartesian_from_elements(masses.interior, a, e, inclination, omega, m0)
    wh = WisdomHolman(masses)
    done = 0
    for orbits, bound in ((100, 2e-11), (1000, 1e-9)):
        step_many(wh, x, v, period[0] / 20, 20 * (orbits - done))
        done = orbits
        for k in range(4):
            expected = kepler_position(a[0, k], e[k], inclination[k], omega[k], m0[k] + 2 * np.pi * orbits)
            assert np.linalg.norm(x[:, 0, k] - expected) / a[0, k] < bound


def _planets(mass_ratios, periods, e, inclination, omega, m0, star=1.0):
    gm_star = GM_SUN_AU3_D2 * star
    masses = Masses.of(np.array([[gm_star]]), gm_star * np.array(mass_ratios)[:, None])
    a = semi_major_axis(masses.interior, np.array(periods)[:, None])
    x, v = cartesian_from_elements(masses.interior, a, np.array(e)[:, None], np.radians(inclination)[:, None],
                                   np.radians(omega)[:, None], np.array(m0)[:, None])
    return masses, x, v


def _barycentric(masses, x, v):
    """Barycentric positions and velocities (3, bodies) of the star and planets of one draw."""
    gm = np.concatenate([masses.gm_star[:, 0], masses.gm[:, 0]])
    position = np.concatenate([np.zeros((3, 1)), heliocentric_from_jacobi(x, masses.jacobi_ratio)[:, :, 0]], axis=1)
    velocity = np.concatenate([np.zeros((3, 1)), heliocentric_from_jacobi(v, masses.jacobi_ratio)[:, :, 0]], axis=1)
    position -= (position * gm).sum(axis=1, keepdims=True) / gm.sum()
    velocity -= (velocity * gm).sum(axis=1, keepdims=True) / gm.sum()
    return gm, position, velocity


@pytest.mark.parametrize("planets", [1, 2, 3, 4, 7])
def test_energy_is_the_barycentric_sum(planets):
    # definition: E = sum m v^2 / 2 - sum_(i<j) G m_i m_j / r_ij over the star and planets, barycentric
    rng = np.random.default_rng(planets)
    masses, x, v = _planets(rng.uniform(1e-5, 1e-3, planets), 5.0 * 1.6 ** np.arange(planets),
                            rng.uniform(0, 0.2, planets), rng.uniform(80, 100, planets), rng.uniform(0, 360, planets),
                            rng.uniform(0, 6, planets))
    gm, position, velocity = _barycentric(masses, x, v)
    kinetic = 0.5 * (gm * (velocity ** 2).sum(axis=0)).sum()
    potential = -sum(gm[i] * gm[j] / np.linalg.norm(position[:, i] - position[:, j])
                     for i in range(planets + 1) for j in range(i + 1, planets + 1))
    assert WisdomHolman(masses).energy(x, v)[0] == pytest.approx(kinetic + potential, rel=1e-13)


@pytest.mark.parametrize("case, orbits, default_bound", [
    # two planets of 3e-5 and 1e-4 stellar masses near 3:2, over 100 orbits of the inner one (about 2e-4
    # measured at the default step)
    (([3e-5, 1e-4], [10.0, 15.3], [0.05, 0.02], [90.0, 91.2], [20.0, 60.0], [0.0, 2.0]), 100, 4e-4),
    # four Jupiter-mass planets, whose planet-planet terms of second order in the masses (the Jacobi
    # transform of their pulls) show; an even count also exercises the pair rows listed twice
    (([1e-3, 5e-4, 1e-3, 2e-4], [10.0, 21.0, 45.0, 100.0], [0.02, 0.05, 0.01, 0.1], [90.0, 90.5, 89.0, 92.0],
      [0.0, 100.0, 200.0, 300.0], [0.0, 1.5, 3.0, 4.5]), 30, 3e-3),
])
def test_planets_agree_with_solve_ivp(case, orbits, default_bound):
    # Newton's equations for the star and planets in barycentric coordinates, DOP853 at rtol 1e-12; the
    # Wisdom-Holman map is second order: its error is a small fraction of the planet-star mass ratios at
    # the default step (1/20 of the inner period) and shrinks 16-fold at a quarter step
    masses, x, v = _planets(*case)
    gm, position, velocity = _barycentric(masses, x, v)
    bodies = gm.size
    span = orbits * case[1][0]
    solution = solve_ivp(_newton, (0.0, span), np.concatenate([position.ravel(), velocity.ravel()]), args=(gm,),
                         method="DOP853", rtol=1e-12, atol=1e-16)
    end = solution.y[:3 * bodies, -1].reshape(3, bodies)
    expected = end[:, 1:] - end[:, :1]

    def error(steps_per_orbit):
        masses, x, v = _planets(*case)
        step_many(WisdomHolman(masses), x, v, case[1][0] / steps_per_orbit, orbits * steps_per_orbit)
        got = heliocentric_from_jacobi(x, masses.jacobi_ratio)[:, :, 0]
        return np.max(np.linalg.norm(got - expected, axis=0) / np.linalg.norm(expected, axis=0))

    default, quarter = error(20), error(80)
    assert default < default_bound
    assert 12.0 < default / quarter < 20.0


@pytest.mark.slow
def test_energy_error_of_a_near_resonant_circular_pair_over_10000_orbits():
    # the map conserves a nearby Hamiltonian, so the energy error oscillates without growing. Two planets
    # of 1e-6 stellar masses near 3:2 (Delta = 0.01) on circular orbits stay below 1e-7 at the default
    # step; the amplitude grows with the mass ratio (1.3e-7 measured at 3e-6, an Earth around the Sun)
    masses, x, v = _planets([1e-6, 1e-6], [10.0, 15.15], [0.0, 0.0], [90.0, 90.0], [0.0, 0.0], [0.0, 2.5])
    wh = WisdomHolman(masses)
    energy0 = wh.energy(x, v)
    errors = []
    for _ in range(1000):                                  # 1000 x 10 orbits of the inner planet
        step_many(wh, x, v, 0.5, 200)
        errors.append(float(np.abs(wh.energy(x, v) / energy0 - 1.0)[0]))
    assert max(errors) < 1e-7                              # about 4.4e-8 measured
    # bounded, not drifting: the largest error of the second 5000 orbits is that of the first
    # (the error is modulated over about 3000 orbits, so each half holds a peak)
    assert max(errors[500:]) < 1.5 * max(errors[:500])


def test_sun_jupiter_saturn_show_the_great_inequality():
    # Jupiter's and Saturn's mean longitudes oscillate with the period of 5 n_Saturn - 2 n_Jupiter, the
    # great inequality, about 900 years (from memory: 883 yr). Seen as the timing variations of their
    # conjunctions with the line of sight; the dominant period of Jupiter's is found by a sinusoid fit.
    # NASA fact-sheet values from memory: periods 4332.59 and 10759.22 d, masses 317.83 and 95.16 Earth
    # masses, eccentricities 0.0489 and 0.0565, mutual inclination about 1.25 deg.
    from orbitdeck.models import Planet, Star, System
    from orbitdeck.models.nbody import run_ensemble
    from orbitdeck.models.nbody.results import ttv_sinusoid

    system = System(name="Sun, Jupiter, Saturn", epoch=2451545.0, star=Star(mass=1.0, radius=1.0, teff=5772.0),
                    planets=[Planet(name="Jupiter", period=4332.59, radius=11.2, mass=317.83, eccentricity=0.0489,
                                    omega=275.0, inclination=90.0, transit_time=2451000.0),
                             Planet(name="Saturn", period=10759.22, radius=9.4, mass=95.16, eccentricity=0.0565,
                                    omega=336.0, inclination=91.25, transit_time=2455000.0)])
    result = run_ensemble(system, draws=1, orbits=760, seed=1, scheduler="synchronous")   # 9000 years
    assert result.stable.all()
    jupiter = result.transit_times[0] - result.epoch
    trial_years = np.arange(600.0, 1400.0, 2.0)
    amplitude = np.array([ttv_sinusoid(jupiter, years * 365.25)[0][0] for years in trial_years])
    best = trial_years[np.argmax(amplitude)]
    assert 850.0 < best < 930.0
    assert amplitude.max() > 1.0                     # days: a large signal, not noise
