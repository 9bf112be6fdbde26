"""Semi-major axes and orbit geometry against astropy, scipy and the Solar System."""

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from scipy import optimize

from orbitdeck.models import derive, orbits


def _kepler_iii_astropy(period, total_mass):
    # independent reference: the same law written with astropy quantities and unit handling
    return ((const.G * total_mass * period**2 / (4 * np.pi**2)) ** (1 / 3)).to(u.au)


def test_earth_year_gives_one_au(solar_system, row_of):
    earth = row_of(derive(solar_system).to_dict()["planets"], "earth")
    # 365.256 d sidereal year around 1 Msun + 1 Mearth is 1 au (definition of the au via the
    # Gaussian constant, IAU 1976/2012; difference from exactly 1 au is ~1e-6)
    assert earth["semi_major_axis_au"] == pytest.approx(1.0, abs=1e-4)
    reference = _kepler_iii_astropy(365.256 * u.day, const.M_sun + const.M_earth)
    assert earth["semi_major_axis_au"] == pytest.approx(reference.value, rel=1e-12)


def test_jupiter_period_gives_5_20_au(solar_system, row_of):
    jupiter = row_of(derive(solar_system).to_dict()["planets"], "jupiter")
    # NASA Jupiter fact sheet: semi-major axis 778.5e6 km = 5.20 au (from memory), period 4332.589 d
    assert jupiter["semi_major_axis_au"] == pytest.approx(5.20, abs=0.01)
    reference = _kepler_iii_astropy(4332.589 * u.day, const.M_sun + const.M_jup)
    assert jupiter["semi_major_axis_au"] == pytest.approx(reference.value, rel=1e-12)


def test_semi_major_axis_function_matches_astropy_for_an_m_dwarf():
    # a made-up 3.1 d planet of 4 Mearth around a 0.2 Msun star, checked with astropy units
    period, star, planet = 3.1 * u.day, 0.2 * const.M_sun, 4 * const.M_earth
    a_m = orbits.semi_major_axis(period.to_value(u.s), (star + planet).to_value(u.kg))
    assert a_m == pytest.approx(_kepler_iii_astropy(period, star + planet).to_value(u.m), rel=1e-12)


def test_orbital_radius_at_periastron_and_apoastron():
    # r = a(1 - e^2)/(1 + e cos f): a(1 - e) at f = 0 and a(1 + e) at f = pi (Murray & Dermott eq. 2.20)
    assert orbits.orbital_radius(2.0, 0.3, 0.0) == pytest.approx(2.0 * 0.7)
    assert orbits.orbital_radius(2.0, 0.3, np.pi) == pytest.approx(2.0 * 1.3)


def test_closest_distance_of_circular_orbits_is_the_gap():
    # two circles about one focus: the nearest points are on one ray, |a2 - a1| (geometry)
    gap = orbits.closest_orbit_distance(0.7233, 0.0, 0.0, 1.0, 0.0, 0.0)
    assert gap == pytest.approx(1.0 - 0.7233, rel=1e-14)


def _ellipse_point(a, e, omega, E):
    """A point of a Keplerian ellipse from its eccentric anomaly E, focus at the origin (Murray & Dermott
    1999 eqs. 2.41: x = a (cos E - e), y = b sin E), turned by the argument of periastron."""
    x, y = a * (np.cos(E) - e), a * np.sqrt(1 - e**2) * np.sin(E)
    return x * np.cos(omega) - y * np.sin(omega), x * np.sin(omega) + y * np.cos(omega)


def _radius_along(a, e, omega, theta):
    """Distance from the focus to the ellipse along the direction theta: the eccentric anomaly whose point
    lies in that direction is found with scipy's brentq (the point's polar angle grows with E)."""
    def turn(E):
        x, y = _ellipse_point(a, e, omega, E)
        return np.angle(np.exp(1j * (np.arctan2(y, x) - theta)))   # wrapped to (-pi, pi]
    # the polar angle passes theta once per turn; bracket around the circular guess, widened as needed
    guess = theta - omega
    low, high = guess - 3.0, guess + 3.0
    for _ in range(8):
        grid = np.linspace(low, high, 64)
        values = np.array([turn(E) for E in grid])
        sign = np.flatnonzero((values[:-1] <= 0) & (values[1:] > 0) & (np.abs(values[1:] - values[:-1]) < np.pi))
        if sign.size:
            E = optimize.brentq(turn, grid[sign[0]], grid[sign[0] + 1], xtol=1e-15, rtol=1e-15)
            return float(np.hypot(*_ellipse_point(a, e, omega, E)))
        low, high = low - 1.0, high + 1.0
    raise AssertionError("no eccentric anomaly points along theta")


def _scipy_closest(a1, e1, w1, a2, e2, w2):
    """Independent reference of the model's closest distance: the extreme radial gap along a common direction,
    each radius taken from the ellipse parametrised by eccentric anomaly (not from r = p / (1 + e cos f)); the
    direction from a dense sweep, refined by scipy's bounded minimiser."""
    E = np.linspace(0, 2 * np.pi, 8001)
    sweep = []
    for a, e, w in ((a1, e1, w1), (a2, e2, w2)):
        x, y = _ellipse_point(a, e, w, E)
        angle = np.mod(np.arctan2(y, x), 2 * np.pi)
        order = np.argsort(angle)
        sweep.append((angle[order], np.hypot(x, y)[order]))
    theta = np.linspace(0, 2 * np.pi, 4001)
    rough = (np.interp(theta, *sweep[1], period=2 * np.pi) - np.interp(theta, *sweep[0], period=2 * np.pi))

    def gap(t):
        return _radius_along(a2, e2, w2, t) - _radius_along(a1, e1, w1, t)

    def extreme(sign):
        start = theta[np.argmin(sign * rough)]
        return sign * optimize.minimize_scalar(lambda t: sign * gap(t), bounds=(start - 3e-3, start + 3e-3),
                                               method="bounded", options={"xatol": 1e-13}).fun

    low = extreme(1.0)
    if low > 0:
        return low
    high = extreme(-1.0)
    return -high if high < 0 else 0.0   # crossing orbits touch; otherwise one lies inside the other


def test_closest_distance_of_eccentric_orbits_matches_scipy_minimum():
    args = (1.0, 0.05, 0.3, 1.6, 0.2, 2.0)
    model = orbits.closest_orbit_distance(*args)
    expected = _scipy_closest(*args)
    # the model's value is the gap at some longitude, so never below the true minimum gap, and close to it
    assert model >= expected - 1e-12
    assert model == pytest.approx(expected, rel=1e-11)


def _true_closest(a1, e1, w1, a2, e2, w2):
    """The smallest distance between any point of one ellipse and any point of the other: both parametrised by
    eccentric anomaly, a dense grid of pairs, then scipy's Nelder-Mead over (E1, E2)."""
    E = np.linspace(0, 2 * np.pi, 360, endpoint=False)
    x1, y1 = _ellipse_point(a1, e1, w1, E)
    x2, y2 = _ellipse_point(a2, e2, w2, E)
    d = np.hypot(x1[:, None] - x2[None, :], y1[:, None] - y2[None, :])
    i, j = np.unravel_index(np.argmin(d), d.shape)

    def distance(v):
        (xa, ya), (xb, yb) = _ellipse_point(a1, e1, w1, v[0]), _ellipse_point(a2, e2, w2, v[1])
        return np.hypot(xa - xb, ya - yb)

    return optimize.minimize(distance, [E[i], E[j]], method="Nelder-Mead",
                             options={"xatol": 1e-12, "fatol": 1e-15, "maxiter": 20000}).fun


@pytest.mark.parametrize("e_max", [0.02, 0.1, 0.3, 0.5])
def test_closest_distance_is_within_second_order_of_the_true_closest_points(e_max):
    # The model measures the smallest gap between the orbits along a common direction from the star. The
    # closest points of two eccentric orbits need not lie on one ray, so the true smallest distance (found
    # here by minimising over a point on each ellipse) can be shorter, by a second-order amount: at most
    # about 0.12 a_out e_max^2 (measured with this reference). The model never claims a closer approach
    # than the truth, and equals it for circular orbits.
    rng = np.random.default_rng(int(e_max * 1000))
    for _ in range(25):
        a1, a2 = 1.0, rng.uniform(1.15, 2.5)
        e1, e2 = rng.uniform(0, e_max, 2)
        w1, w2 = rng.uniform(0, 2 * np.pi, 2)
        model = float(orbits.closest_orbit_distance(a1, e1, w1, a2, e2, w2))
        if model == 0.0:
            continue   # crossing orbits: both zero
        true = _true_closest(a1, e1, w1, a2, e2, w2)
        assert true - 1e-12 <= model <= true + 0.15 * a2 * max(e1, e2) ** 2, (a2, e1, w1, e2, w2)
    assert float(orbits.closest_orbit_distance(1.0, 0.0, 0.0, 1.7, 0.0, 0.0)) == pytest.approx(
        _true_closest(1.0, 0.0, 0.0, 1.7, 0.0, 0.0), abs=1e-12)


@pytest.mark.parametrize("e_max", [0.02, 0.1, 0.5, 0.9])
def test_closest_distance_matches_scipy_at_every_eccentricity(e_max):
    rng = np.random.default_rng(int(e_max * 100))
    count = 60
    a1 = rng.uniform(0.01, 1.0, count)
    a2 = a1 * rng.uniform(0.5, 3.0, count)       # some "outer" orbits smaller: one inside the other
    e1, e2 = rng.uniform(0, e_max, count), rng.uniform(0, e_max, count)
    w1, w2 = rng.uniform(0, 2 * np.pi, count), rng.uniform(0, 2 * np.pi, count)
    expected = np.array([_scipy_closest(*args) for args in zip(a1, e1, w1, a2, e2, w2)])
    model = orbits.closest_orbit_distance(a1, e1, w1, a2, e2, w2)
    error = np.abs(model - expected) / np.maximum(a1, a2)
    assert error.max() <= 1e-12, error.max()
    # thousands of pairs at once take the single-precision Newton steps: the same accuracy
    many = orbits.closest_orbit_distance(*(np.tile(x, 50) for x in (a1, e1, w1, a2, e2, w2)))
    assert (np.abs(many - np.tile(expected, 50)) / np.tile(np.maximum(a1, a2), 50)).max() <= 1e-12
    # one Newton step, as used for Monte Carlo draws, is within 2e-6 a for e <= 0.1 (checked against scipy too)
    if e_max <= 0.1:
        one_step = orbits.closest_orbit_distance(a1, e1, w1, a2, e2, w2, steps=1)
        assert np.all(np.abs(one_step - expected) <= 2e-6 * np.maximum(a1, a2))


def test_draw_search_matches_the_full_search_and_scipy():
    # the single-precision, one-step search of Monte Carlo draws: within 5e-6 of the larger a of
    # the full search (itself checked against scipy above), including the draws it hands back to
    # the full search (e > 0.1, crossing or nested orbits, a poor seed) and circular pairs
    rng = np.random.default_rng(21)
    orbits_count, samples = 8, 1500
    a = np.sort(rng.uniform(0.02, 0.3, (orbits_count, 1)), axis=0) * rng.normal(1.0, 0.01, (1, samples))
    e = np.abs(rng.normal(0.04, 0.04, (orbits_count, samples)))
    e[2] = rng.uniform(0.1, 0.6, samples)          # an eccentric orbit that crosses its neighbours
    e[:, :50] = 0.0                                # circular draws
    e[5:7] = 0.0                                   # two orbits circular in every draw, beside eccentric ones
    w = rng.uniform(0.0, 2 * np.pi, (orbits_count, 1)) + rng.normal(0.0, 0.3, (orbits_count, samples))
    inner, outer = np.triu_indices(orbits_count, 1)
    fast = orbits.closest_distance_of_draws(orbits.DrawOrbits.of(a, e, w), inner, outer)
    assert fast.shape == (inner.size, samples) and fast.dtype == np.float32
    full = orbits.closest_orbit_distance(a[inner], e[inner], w[inner], a[outer], e[outer], w[outer])
    scale = np.maximum(a[inner], a[outer])
    assert np.max(np.abs(fast - full) / scale) <= 5e-6
    assert (full == 0.0).any() and np.all(fast[full == 0.0] == 0.0)   # crossing draws stay exactly 0
    circular = (slice(None), slice(0, 50))
    # circular: |a_out - a_in|, to single precision in a
    assert np.all(np.abs(fast[circular] - np.abs(a[outer] - a[inner])[circular]) <= 3e-7 * scale[circular])
    # a pair circular in every draw is |a_out - a_in| of the single-precision a, exactly
    both = int(np.flatnonzero((inner == 5) & (outer == 6))[0])
    a32 = a.astype(np.float32)
    np.testing.assert_array_equal(fast[both], np.abs(a32[6] - a32[5]))
    for row, sample in zip(rng.integers(0, inner.size, 12), rng.integers(0, samples, 12)):
        i, j = inner[row], outer[row]
        expected = _scipy_closest(a[i, sample], e[i, sample], w[i, sample], a[j, sample], e[j, sample], w[j, sample])
        assert abs(fast[row, sample] - expected) <= 5e-6 * scale[row, sample]


def test_pairs_from_per_orbit_arrays_match_pairwise_calls():
    rng = np.random.default_rng(4)
    a = np.sort(rng.uniform(0.02, 0.2, (3, 6)), axis=1)
    e, w = rng.uniform(0, 0.3, (3, 6)), rng.uniform(0, 2 * np.pi, (3, 6))
    inner, outer = np.triu_indices(6, 1)
    by_pairs = orbits.closest_distance_of_pairs(a, e, w, inner, outer)
    direct = orbits.closest_orbit_distance(a[:, inner], e[:, inner], w[:, inner], a[:, outer], e[:, outer], w[:, outer])
    assert by_pairs.shape == (3, inner.size)
    np.testing.assert_array_equal(by_pairs, direct)


def test_closest_distance_is_vectorised_and_matches_scalar_calls():
    a_in, e_in, w_in = np.array([1.0, 1.0, 0.5]), np.array([0.0, 0.05, 0.1]), np.array([0.0, 0.3, 1.0])
    a_out, e_out, w_out = np.array([1.5, 1.6, 0.6]), np.array([0.0, 0.2, 0.3]), np.array([0.0, 2.0, 4.0])
    vector = orbits.closest_orbit_distance(a_in, e_in, w_in, a_out, e_out, w_out)
    scalar = [orbits.closest_orbit_distance(*args) for args in zip(a_in, e_in, w_in, a_out, e_out, w_out)]
    np.testing.assert_allclose(vector, scalar, rtol=1e-12)
    assert vector[0] == pytest.approx(0.5)   # circular: |a2 - a1|


def test_crossing_orbits_give_zero_distance():
    # periastron of the outer orbit (1.2 * 0.6 = 0.72) inside the inner circle (1.0): they cross
    assert orbits.closest_orbit_distance(1.0, 0.0, 0.0, 1.2, 0.4, 0.0) == 0.0


def test_semi_major_axis_is_vectorised_over_samples_and_planets():
    periods = np.array([[1.0, 2.0, 4.0], [1.5, 3.0, 6.0]]) * 86400.0
    masses = np.full((2, 1), const.M_sun.value)
    a = orbits.semi_major_axis(periods, masses)
    assert a.shape == (2, 3)
    # Kepler III: doubling P multiplies a by 2^(2/3)
    np.testing.assert_allclose(a[:, 1] / a[:, 0], 2 ** (2 / 3), rtol=1e-14)
