"""Short N-body integrations and the parts of the integrator against independent solutions (seconds in all).

References: Jacobi coordinates by their definition, each planet relative to
the centre of mass of the star and the planets inside it (Wisdom & Holman
1991, AJ 102, 1528, section 3), by a plain loop; numpy's cumsum and sum;
Kepler's third law with astropy; the ellipse from Kepler's equation solved
with scipy's brentq (Murray & Dermott 1999, eqs. 2.41-2.43 and 2.122 with the
node at 0; from memory) and its velocity by a central difference; the
mid-transit time as the least projected star-planet separation, found with
scipy's brentq; Newton's equations integrated with scipy's DOP853;
the linearised motion about a circular orbit (the Clohessy-Wiltshire or Hill
equations, from memory) for the shadow trajectory of MEGNO (Cincotta & Simo
2000); the apoastron distance a (1 + e) and the mutual Hill radius of Chambers,
Wetherill & Boss 1996 for the stopping rules; the empirical survival function
and a least-squares sinusoid for the results.
"""

from __future__ import annotations

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

from orbitdeck.models import Planet, Star, System
from orbitdeck.models.constants import GM_SUN_AU3_D2
from orbitdeck.models.nbody import CLOSE_ENCOUNTER, EJECTION, SURVIVED, Settings, run_ensemble
from orbitdeck.models.nbody.chunk import advance, start_chunk
from orbitdeck.models.nbody.integrator import WisdomHolman, step_many
from orbitdeck.models.nbody.jacobi import (Masses, cartesian_from_elements, folded_sum, heliocentric_from_jacobi,
                                          jacobi_from_heliocentric, planet_prefix_sums, semi_major_axis)
from orbitdeck.models.nbody.kepler_drift import kepler_drift
from orbitdeck.models.nbody.results import EnsembleResult, ttv_sinusoid
from orbitdeck.models.nbody.setup import chunk_setup, draw_ensemble

from newton_reference import newton

EPOCH = 2461000.0


def kepler_position(a, e, inclination, omega, mean_anomaly):
    """Position on an ellipse with the node at 0, by brentq on Kepler's equation (M&D eqs. 2.41-2.43, 2.122)."""
    m = mean_anomaly - 2 * np.pi * np.round(mean_anomaly / (2 * np.pi))
    big_e = brentq(lambda x: x - e * np.sin(x) - m, m - 1.0 - e, m + 1.0 + e, xtol=1e-15, rtol=1e-15)
    x_orbit, y_orbit = a * (np.cos(big_e) - e), a * np.sqrt(1 - e * e) * np.sin(big_e)
    x = x_orbit * np.cos(omega) - y_orbit * np.sin(omega)
    y = x_orbit * np.sin(omega) + y_orbit * np.cos(omega)
    return np.array([x, y * np.cos(inclination), y * np.sin(inclination)])


def mean_anomaly_at_conjunction(e, omega):
    """M where omega + f = 90 deg: f to E (M&D eq. 2.46, tan(E/2) = sqrt((1-e)/(1+e)) tan(f/2)), E to M."""
    f = np.pi / 2 - omega
    big_e = 2 * np.arctan(np.sqrt((1 - e) / (1 + e)) * np.tan(f / 2))
    return big_e - e * np.sin(big_e)


def system_of(*planets):
    """The planets around the Sun (its IAU 2015 nominal mass), epoch EPOCH."""
    return System(name="short run", epoch=EPOCH, star=Star(mass=1.0, radius=1.0, teff=5772.0), planets=list(planets))


# -- sums and coordinates ------------------------------------------------------------------------------

@pytest.mark.parametrize("planets", range(1, 10))
def test_prefix_and_folded_sums_match_numpy(planets):
    values = np.random.default_rng(planets).uniform(-1.0, 1.0, (3, planets, 4))
    np.testing.assert_allclose(planet_prefix_sums(values.copy()), np.cumsum(values, axis=1), rtol=1e-14, atol=1e-14)
    np.testing.assert_allclose(folded_sum(values.copy(), axis=1), values.sum(axis=1), rtol=1e-14, atol=1e-14)
    np.testing.assert_allclose(folded_sum(values.copy(), axis=0), values.sum(axis=0), rtol=1e-14, atol=1e-14)


def test_jacobi_coordinates_match_their_definition():
    # x'_i = d_i - (sum_(k<i) m_k d_k) / (m_0 + sum_(k<i) m_k): each planet from the centre of mass of the star
    # (at the origin of heliocentric d) and the planets inside it; Jacobi mass m'_i = m_i eta_(i-1) / eta_i
    rng = np.random.default_rng(3)
    planets, draws = 5, 3
    gm_star, gm = rng.uniform(0.5, 2.0, (1, draws)), rng.uniform(1e-3, 1e-1, (planets, draws))
    helio = rng.uniform(-3.0, 3.0, (3, planets, draws))
    expected = np.empty_like(helio)
    interior = gm_star[0].copy()
    weighted = np.zeros((3, draws))
    for i in range(planets):
        expected[:, i] = helio[:, i] - weighted / interior
        assert Masses.of(gm_star, gm).interior_before[i] == pytest.approx(interior, rel=1e-14)
        assert Masses.of(gm_star, gm).reduced[i] == pytest.approx(gm[i] * interior / (interior + gm[i]), rel=1e-14)
        weighted = weighted + gm[i] * helio[:, i]
        interior = interior + gm[i]
        assert Masses.of(gm_star, gm).interior[i] == pytest.approx(interior, rel=1e-14)
    masses = Masses.of(gm_star, gm)
    np.testing.assert_allclose(jacobi_from_heliocentric(helio, masses), expected, rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(heliocentric_from_jacobi(expected, masses.jacobi_ratio), helio, rtol=1e-12, atol=1e-12)


def test_semi_major_axis_is_keplers_third_law():
    # a^3 = G M P^2 / (4 pi^2) with astropy: the Earth's sidereal year about the Sun, and a 3-day orbit of 0.3 Msun
    for mass, period in ((1.0, 365.256363), (0.3, 3.0)):
        expected = (const.G * mass * const.M_sun * (period * u.day) ** 2 / (4 * np.pi**2)) ** (1 / 3)
        assert semi_major_axis(GM_SUN_AU3_D2 * mass, period) == pytest.approx(expected.to_value(u.au), rel=1e-12)


def test_elements_give_the_ellipse_and_its_velocity():
    # the position from brentq on Kepler's equation; the velocity by a central difference of it in time
    gm = GM_SUN_AU3_D2 * 0.6
    for a, e, inclination, omega, mean in ((0.05, 0.0, 1.5, 0.3, 2.0), (0.1, 0.3, 1.2, 4.0, -1.0),
                                           (0.4, 0.7, 2.5, 2.2, 0.4)):
        n = np.sqrt(gm / a**3)
        position, velocity = cartesian_from_elements(gm, a, e, inclination, omega, mean)
        np.testing.assert_allclose(position, kepler_position(a, e, inclination, omega, mean), rtol=0, atol=1e-13 * a)
        h = 1e-4
        numeric = (kepler_position(a, e, inclination, omega, mean + h)
                   - kepler_position(a, e, inclination, omega, mean - h)) / (2 * h / n)
        np.testing.assert_allclose(velocity, numeric, rtol=0, atol=1e-7 * np.linalg.norm(numeric))


def test_kepler_drift_carries_the_velocity_along_the_ellipse():
    # after a drift of up to three orbits either way, the velocity is the time derivative of the ellipse of
    # Kepler's equation at the new mean anomaly (central difference of the brentq solution)
    rng = np.random.default_rng(11)
    count = 12
    gm, a, e = rng.uniform(0.5, 2.0, count), rng.uniform(0.3, 3.0, count), rng.uniform(0.0, 0.9, count)
    inclination, omega, mean = rng.uniform(0.0, np.pi, count), rng.uniform(0.0, 2 * np.pi, count), \
        rng.uniform(-np.pi, np.pi, count)
    n = np.sqrt(gm / a**3)
    dt = rng.uniform(-3.0, 3.0, count) * 2 * np.pi / n
    x, v = cartesian_from_elements(gm, a, e, inclination, omega, mean)
    kepler_drift(x, v, gm, dt)
    h = 1e-4
    for k in range(count):
        later = mean[k] + n[k] * dt[k]
        numeric = (kepler_position(a[k], e[k], inclination[k], omega[k], later + h)
                   - kepler_position(a[k], e[k], inclination[k], omega[k], later - h)) / (2 * h / n[k])
        np.testing.assert_allclose(v[:, k], numeric, rtol=0, atol=1e-7 * np.linalg.norm(numeric))


# -- the map against Newton's equations --------------------------------------------------------------

def test_five_planets_agree_with_solve_ivp():
    # an odd number of planets (every pair row also read backwards), Jupiter-like masses so that the planet-planet
    # terms show; Newton's equations in barycentric coordinates with DOP853 at rtol 1e-12 over 10 inner orbits.
    # The map is second order: its error in the positions and the velocities falls 16-fold at a quarter step
    ratios, periods = [1e-3, 3e-4, 8e-4, 2e-4, 5e-4], [10.0, 17.0, 31.0, 55.0, 90.0]
    e, inclination = [0.02, 0.05, 0.01, 0.08, 0.03], np.radians([90.0, 88.0, 91.0, 89.5, 92.0])
    omega, mean = np.radians([0.0, 70.0, 140.0, 210.0, 280.0]), [0.0, 1.0, 2.0, 3.0, 4.0]

    def start():
        masses = Masses.of(np.array([[GM_SUN_AU3_D2]]), GM_SUN_AU3_D2 * np.array(ratios)[:, None])
        a = semi_major_axis(masses.interior, np.array(periods)[:, None])
        x, v = cartesian_from_elements(masses.interior, a, np.array(e)[:, None], inclination[:, None],
                                       omega[:, None], np.array(mean)[:, None])
        return masses, x, v

    masses, x, v = start()
    gm = np.concatenate([masses.gm_star[:, 0], masses.gm[:, 0]])
    position = np.concatenate([np.zeros((3, 1)), heliocentric_from_jacobi(x, masses.jacobi_ratio)[:, :, 0]], axis=1)
    velocity = np.concatenate([np.zeros((3, 1)), heliocentric_from_jacobi(v, masses.jacobi_ratio)[:, :, 0]], axis=1)
    position -= (position * gm).sum(axis=1, keepdims=True) / gm.sum()
    velocity -= (velocity * gm).sum(axis=1, keepdims=True) / gm.sum()
    span, bodies = 10 * periods[0], gm.size
    solution = solve_ivp(newton, (0.0, span), np.concatenate([position.ravel(), velocity.ravel()]), args=(gm,),
                         method="DOP853", rtol=1e-12, atol=1e-16)
    end = solution.y[:, -1].reshape(2, 3, bodies)
    expected = end[:, :, 1:] - end[:, :, :1]                    # heliocentric positions and velocities

    def error(steps_per_orbit):
        masses, x, v = start()
        step_many(WisdomHolman(masses), x, v, periods[0] / steps_per_orbit, 10 * steps_per_orbit)
        got = np.stack([heliocentric_from_jacobi(z, masses.jacobi_ratio)[:, :, 0] for z in (x, v)])
        return np.max(np.linalg.norm(got - expected, axis=1) / np.linalg.norm(expected, axis=1))

    default, quarter = error(20), error(80)
    assert default < 1e-4                                       # 3.4e-5 measured
    assert 12.0 < default / quarter < 20.0


# -- transit times --------------------------------------------------------------------------------------

def test_a_lone_planet_transits_once_every_period():
    # edge-on: the least projected separation is the conjunction omega + f = 90 deg, which the transit time fixes;
    # a lone planet follows Kepler's orbit, so its transits come every period exactly. Seven orbits in waves of
    # three (3 + 3 + 1), transit 1.2 d after the epoch.
    planet = Planet(name="b", period=3.7, radius=1.0, mass=2.0, eccentricity=0.3, omega=40.0, inclination=90.0,
                    transit_time=EPOCH + 1.2)
    result = run_ensemble(system_of(planet), draws=1, orbits=7, seed=1, scheduler="synchronous", wave_orbits=3)
    assert result.outcome[0] == SURVIVED and result.survival_orbits[0] == 7.0
    assert result.energy_error[0] < 1e-12
    times = result.transit_times[0][0]
    assert np.count_nonzero(np.isfinite(times)) == 7
    np.testing.assert_allclose(times[:7], EPOCH + 1.2 + 3.7 * np.arange(7), rtol=0, atol=2e-9)


def test_inclined_eccentric_transits_are_the_least_projected_separations():
    # mid-transit as the time of least sky-plane distance to the star, where x dx/dt + y dy/dt = 0, found with
    # brentq on the ellipse of Kepler's equation (mean anomaly from the conjunction at the given transit time,
    # velocity by a central difference); an inclined eccentric orbit puts it a little off the conjunction
    period, e, omega, inclination, t0 = 5.3, 0.25, 110.0, 87.0, EPOCH + 2.0
    planet = Planet(name="b", period=period, radius=1.0, mass=5.0, eccentricity=e, omega=omega,
                    inclination=inclination, transit_time=t0)
    result = run_ensemble(system_of(planet), draws=1, orbits=6, seed=1, scheduler="synchronous",
                          settings=Settings(chaos=False))
    gm = float(GM_SUN_AU3_D2 * (1.0 + 5.0 * const.M_earth / const.M_sun))
    a = semi_major_axis(gm, period)
    mean_t0 = mean_anomaly_at_conjunction(e, np.radians(omega))

    def position(since_t0):
        return kepler_position(a, e, np.radians(inclination), np.radians(omega), mean_t0 + 2 * np.pi * since_t0 / period)

    def approach(since_t0, h=1e-6):
        x, velocity = position(since_t0), (position(since_t0 + h) - position(since_t0 - h)) / (2 * h)
        return x[0] * velocity[0] + x[1] * velocity[1]

    times = result.transit_times[0][0] - t0
    assert np.count_nonzero(np.isfinite(times)) == 6
    for k in range(6):
        found = brentq(approach, k * period - 0.01 * period, k * period + 0.01 * period, xtol=1e-14)
        assert abs(found - k * period) > 5e-5                   # off the conjunction, by about eight seconds
        assert times[k] == pytest.approx(found, abs=2e-9)


def barycentric_start(ensemble):
    """Barycentric positions and velocities (3, bodies) of the star and planets of a one-draw ensemble."""
    masses = ensemble.masses
    gm = np.concatenate([masses.gm_star[:, 0], masses.gm[:, 0]])
    states = []
    for jacobi in (ensemble.xj, ensemble.vj):
        state = np.concatenate([np.zeros((3, 1)), heliocentric_from_jacobi(jacobi, masses.jacobi_ratio)[:, :, 0]], 1)
        states.append(state - (state * gm).sum(axis=1, keepdims=True) / gm.sum())
    return gm, states[0], states[1]


def test_transit_times_of_a_pair_agree_with_solve_ivp():
    # two planets of 10 and 33 Mearth wide of 3:2 (TTVs of tens of minutes), coplanar and edge-on. Reference:
    # Newton's equations with DOP853 at rtol 1e-12 from the same initial state, mid-transits as the rising roots
    # of x vx + y vy of the star-planet vector with the planet in front (z > 0), found by solve_ivp's events.
    # The ensemble at 80 steps per inner orbit over 20 orbits agrees to 2.4e-6 d (measured; the TTVs span 0.08 d)
    planets = [Planet(name="b", period=10.0, radius=2.0, mass=10.0, eccentricity=0.05, omega=30.0, inclination=90.0,
                      transit_time=EPOCH + 2.0),
               Planet(name="c", period=15.3, radius=4.0, mass=33.0, eccentricity=0.02, omega=200.0,
                      inclination=90.0, transit_time=EPOCH + 9.0)]
    system = system_of(*planets)
    settings = Settings(steps_per_orbit=80, chaos=False)
    result = run_ensemble(system, draws=1, orbits=20, seed=1, scheduler="synchronous", settings=settings)
    gm, position, velocity = barycentric_start(draw_ensemble(system, 1, seed=1))
    bodies = gm.size

    def event(planet):
        def crossing(t, y, *args):
            p, v = y[:3 * bodies].reshape(3, bodies), y[3 * bodies:].reshape(3, bodies)
            dx, dv = p[:, planet] - p[:, 0], v[:, planet] - v[:, 0]
            return dx[0] * dv[0] + dx[1] * dv[1]
        crossing.direction = 1.0
        return crossing

    solution = solve_ivp(newton, (0.0, 200.0), np.concatenate([position.ravel(), velocity.ravel()]), args=(gm,),
                         method="DOP853", rtol=1e-12, atol=1e-16, events=[event(1), event(2)])
    for planet in (1, 2):
        states = solution.y_events[planet - 1]
        in_front = states[:, 2 * bodies + planet] > states[:, 2 * bodies]          # z of the planet, of the star
        expected = EPOCH + solution.t_events[planet - 1][in_front]
        got = result.transit_times[planet - 1][0]
        got = got[np.isfinite(got)]
        assert got.size == expected.size >= 13
        np.testing.assert_allclose(got, expected, rtol=0, atol=1e-5)


# -- MEGNO ------------------------------------------------------------------------------------------------

def test_megno_of_a_lone_circular_orbit_follows_the_linear_shear():
    # a shadow offset along the velocity of a circular orbit, eps = delta0 n a, moves by the Clohessy-Wiltshire
    # solution: after k orbits (t = k P) it is 3 eps t behind along the track with a relative velocity eps along
    # it and 3 eps n t towards the star, so its distance in units of a and n a is
    # delta_k = delta0 sqrt(1 + 18 (n t)^2) = delta0 sqrt(1 + 72 pi^2 k^2). MEGNO (Cincotta & Simo 2000):
    # Y(t) = (2/t) int_0^t s d(ln delta), <Y>(t) = (1/t) int_0^t Y ds, the integrals over each orbit by the
    # midpoint and rectangle rules as the module documents, tending to 2 (quasi-periodic motion)
    planet = Planet(name="b", period=4.0, radius=1.0, mass=1.0, inclination=90.0, transit_time=EPOCH + 0.7)
    settings = Settings()
    ensemble = draw_ensemble(system_of(planet), 1, seed=1)
    direction = np.zeros_like(ensemble.shadow_direction)
    direction[1] = 3.0 * ensemble.vj / np.linalg.norm(ensemble.vj)      # any length: the offset is delta0
    setup = chunk_setup(ensemble, np.arange(1), settings, np.array([40]))
    state = start_chunk(setup, ensemble.xj, ensemble.vj, settings, direction)
    blocks = 30
    state, _ = advance(setup, state, settings, blocks)
    k = np.arange(blocks + 1)
    growth = np.diff(np.log(np.sqrt(1 + 72 * np.pi**2 * k**2)))
    y = 2 * np.cumsum((k[1:] - 0.5) * growth) / k[1:]
    expected = y.sum() / blocks
    assert expected == pytest.approx(2.18, abs=0.01)
    assert state.megno[0] == pytest.approx(expected, abs=1e-4)


# -- stopping rules -----------------------------------------------------------------------------------------

def test_close_encounter_at_the_first_conjunction():
    # two light planets on circular coplanar orbits in conjunction at the epoch, periods 10 and 12.5 d: they meet
    # again after the synodic period 1 / (1/10 - 1/12.5) = 50 d, step 100 of 0.5 d, a_out - a_in apart. With the
    # encounter distance just above that gap (in mutual Hill radii of Chambers et al. 1996, astropy) the draw stops
    # there, 5 orbits in; just below it the pair survives
    masses, periods = (0.01, 0.02), (10.0, 12.5)
    a = [(const.G * (const.M_sun + m * const.M_earth) * (p * u.day) ** 2 / (4 * np.pi**2)) ** (1 / 3)
         for m, p in zip(masses, periods)]
    hill = (float(sum(masses) * const.M_earth / (3 * const.M_sun)) ** (1 / 3) * (a[0] + a[1]) / 2).to_value(u.au)
    gap = (a[1] - a[0]).to_value(u.au)
    planets = [Planet(name=n, period=p, radius=0.3, mass=m, inclination=90.0, transit_time=EPOCH)
               for n, p, m in zip("bc", periods, masses)]
    for factor, outcome, orbits in ((1.0001, CLOSE_ENCOUNTER, 5.0), (0.9999, SURVIVED, 6.0)):
        result = run_ensemble(system_of(*planets), draws=1, orbits=6, seed=1, scheduler="synchronous",
                              settings=Settings(hill_multiple=factor * gap / hill, chaos=False))
        assert result.outcome[0] == outcome and result.survival_orbits[0] == orbits, factor


def test_ejection_beyond_the_outermost_orbit_at_apoastron():
    # the outer planet, e = 0.5, starts at apoastron (transit at omega + f = 90 deg with omega = 270 deg, f = 180
    # deg) a (1 + e) = 1.5 a from the star and is there again after its period, five orbits of the inner planet:
    # an ejection distance of 1.5 (1 - 1e-6) outermost semi-major axes is passed at the end of the fifth
    planets = [Planet(name="b", period=10.0, radius=0.3, mass=0.01, inclination=90.0, transit_time=EPOCH + 3.0),
               Planet(name="c", period=50.0, radius=0.3, mass=0.01, eccentricity=0.5, omega=270.0, inclination=90.0,
                      transit_time=EPOCH)]
    for factor, outcome, orbits in ((1.0 - 1e-6, EJECTION, 5.0), (1.0 + 1e-6, SURVIVED, 7.0)):
        result = run_ensemble(system_of(*planets), draws=1, orbits=7, seed=1, scheduler="synchronous",
                              settings=Settings(ejection_multiple=1.5 * factor, chaos=False))
        assert result.outcome[0] == outcome and result.survival_orbits[0] == orbits, factor


# -- results ---------------------------------------------------------------------------------------------------

def test_ttv_sinusoid_recovers_an_injected_sinusoid():
    # t_n = T0 + n P + A sin(2 pi t_n / S) + B cos(2 pi t_n / S), solved for t_n by fixed-point iteration (the
    # sinusoid's slope is far below 1), then least squares must give sqrt(A^2 + B^2) and atan2(B, A)
    period, super_period, a_sin, b_cos = 3.1, 47.0, 2e-3, -1.5e-3
    n = np.arange(60.0)
    times = 0.4 + n * period
    for _ in range(60):
        angle = 2 * np.pi * times / super_period
        times = 0.4 + n * period + a_sin * np.sin(angle) + b_cos * np.cos(angle)
    padded = np.concatenate([times, np.full(5, np.nan)])[None, :]
    amplitude, phase = ttv_sinusoid(padded, super_period)
    assert amplitude[0] == pytest.approx(np.hypot(a_sin, b_cos), rel=1e-9)
    assert phase[0] == pytest.approx(np.arctan2(b_cos, a_sin), abs=1e-9)
    assert np.isnan(ttv_sinusoid(padded[:, :4], super_period)[0][0])     # fewer than five transits


def test_ttv_amplitudes_are_half_the_range_of_the_residuals_from_a_fitted_line():
    # each draw's transits t_n = 5 + 2 n + A_d sin(pi n / 2), eight of them: residuals from numpy's polyfit line, in
    # minutes, half their range; the summary takes the 16th, 50th and 84th percentiles over the surviving draws
    amplitudes = np.array([1e-3, 2e-3, 3e-3, 4e-3, 5e-3, 6e-3])
    n = np.arange(8.0)
    times = 5.0 + 2.0 * n + amplitudes[:, None] * np.sin(np.pi * n / 2)
    draws = amplitudes.size
    outcome = np.array([SURVIVED, SURVIVED, CLOSE_ENCOUNTER, SURVIVED, SURVIVED, EJECTION])
    result = EnsembleResult(system_name="s", names=("b",), epoch=0.0, draws=draws, orbits=8, seed=None,
                            settings=Settings(), inner_period=np.full(draws, 2.0), outcome=outcome,
                            survival_orbits=np.full(draws, 8.0), megno=np.full(draws, np.nan),
                            energy_error=np.zeros(draws), transit_times=(times,), mass_estimated=np.array([False]))
    expected = []
    for row in times:
        residual = row - np.polyval(np.polyfit(n, row, 1), n)
        expected.append(1440.0 * np.ptp(residual) / 2)
    np.testing.assert_allclose(result.ttv_amplitude_min[:, 0], expected, rtol=1e-9)
    stable = outcome == SURVIVED
    np.testing.assert_allclose(result.ttv_summary()[0], np.percentile(np.array(expected)[stable], [16, 50, 84]),
                               rtol=1e-9)


def test_survival_curve_is_the_empirical_survival_function():
    # S(t) = the share of draws whose integration ran beyond t, at each stopping time; at the end, the share that
    # survived every rule (a loop over the draws here)
    survival = np.array([10.0, 100.0, 35.0, 100.0, 10.0, 60.0])
    outcome = np.array([CLOSE_ENCOUNTER, SURVIVED, EJECTION, SURVIVED, CLOSE_ENCOUNTER, CLOSE_ENCOUNTER])
    draws = survival.size
    result = EnsembleResult(system_name="s", names=("b",), epoch=0.0, draws=draws, orbits=100, seed=None,
                            settings=Settings(), inner_period=np.ones(draws), outcome=outcome,
                            survival_orbits=survival, megno=np.full(draws, np.nan), energy_error=np.zeros(draws),
                            transit_times=(np.full((draws, 3), np.nan),), mass_estimated=np.array([False]))
    times, surviving = result.survival_curve()
    np.testing.assert_array_equal(times, [10.0, 35.0, 60.0, 100.0])
    expected = [sum(s > t for s in survival) / draws for t in (10.0, 35.0, 60.0)] + [2 / draws]
    np.testing.assert_allclose(surviving, expected, rtol=1e-15)
    assert result.stable_fraction == 2 / draws
