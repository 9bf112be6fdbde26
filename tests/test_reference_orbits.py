"""Semi-major axes and orbit geometry against astropy, scipy and the Solar System."""

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from scipy import optimize

from orbitdeck.models import derive
from orbitdeck.models.physics import orbits


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


def _ellipse_points(a, e, w, eccentric_anomaly):
    """Points of an ellipse with a focus at the origin, parametrised by the eccentric anomaly
    (x = a (cos E - e), y = a sqrt(1 - e^2) sin E, then turned by omega): independent of the
    polar form the model uses."""
    x = a * (np.cos(eccentric_anomaly) - e)
    y = a * np.sqrt(1.0 - e * e) * np.sin(eccentric_anomaly)
    return np.array([x * np.cos(w) - y * np.sin(w), x * np.sin(w) + y * np.cos(w)])


def _scipy_closest(a1, e1, w1, a2, e2, w2):
    """Independent reference: the smallest distance between points of the two ellipses on a dense
    grid of eccentric anomalies, refined by scipy's Nelder-Mead minimiser over both anomalies."""
    grid = np.linspace(0, 2 * np.pi, 361)
    p1, p2 = _ellipse_points(a1, e1, w1, grid), _ellipse_points(a2, e2, w2, grid)
    distance = np.sqrt(((p1[:, :, None] - p2[:, None, :]) ** 2).sum(axis=0))
    i, j = np.unravel_index(np.argmin(distance), distance.shape)
    result = optimize.minimize(
        lambda x: np.sum((_ellipse_points(a1, e1, w1, x[0]) - _ellipse_points(a2, e2, w2, x[1])) ** 2),
        [grid[i], grid[j]], method="Nelder-Mead", options={"xatol": 1e-13, "fatol": 1e-30, "maxiter": 4000})
    return float(np.sqrt(result.fun))


def test_closest_distance_of_eccentric_orbits_matches_scipy_minimum():
    # the closest points of eccentric orbits need not lie on one ray: the distance over both
    # anomalies is below the smallest radial gap (here by about 2 %)
    a1, e1, w1, a2, e2, w2 = 1.0, 0.3, 0.3, 1.9, 0.4, 2.0
    expected = _scipy_closest(a1, e1, w1, a2, e2, w2)
    theta = np.linspace(0, 2 * np.pi, 100001)
    radial = np.min(orbits.orbital_radius(a2, e2, theta - w2) - orbits.orbital_radius(a1, e1, theta - w1))
    assert expected < 0.99 * radial
    assert orbits.closest_orbit_distance(a1, e1, w1, a2, e2, w2) == pytest.approx(expected, rel=1e-10)



@pytest.mark.parametrize("e_max", [0.02, 0.1, 0.5, 0.9])
def test_closest_distance_matches_scipy_at_every_eccentricity(e_max):
    rng = np.random.default_rng(int(e_max * 100))
    count = 25
    a1 = rng.uniform(0.01, 1.0, count)
    a2 = a1 * rng.uniform(0.5, 3.0, count)       # some "outer" orbits smaller: one inside the other
    e1, e2 = rng.uniform(0, e_max, count), rng.uniform(0, e_max, count)
    w1, w2 = rng.uniform(0, 2 * np.pi, count), rng.uniform(0, 2 * np.pi, count)
    expected = np.array([_scipy_closest(*args) for args in zip(a1, e1, w1, a2, e2, w2)])
    model = orbits.closest_orbit_distance(a1, e1, w1, a2, e2, w2)
    scale = np.maximum(a1, a2)
    crossing = model == 0.0
    # crossing orbits: the reference's minimum is zero to its tolerance
    assert np.all(expected[crossing] <= 1e-6 * scale[crossing])
    error = np.abs(model - expected)[~crossing] / scale[~crossing]
    assert error.max(initial=0.0) <= 1e-10, error.max()
    # thousands of pairs at once, searched in blocks: the same numbers
    many = orbits.closest_orbit_distance(*(np.tile(x, 300) for x in (a1, e1, w1, a2, e2, w2)))
    np.testing.assert_array_equal(many, np.tile(model, 300))


@pytest.mark.parametrize("circle_inside", [True, False])
def test_closest_distance_of_a_circle_and_an_ellipse_matches_scipy_minimum(circle_inside):
    # one orbit circular (e = 0 exactly), the other eccentric, either side: scipy's minimum over both
    # anomalies is the reference, crossing pairs included
    rng = np.random.default_rng(11 if circle_inside else 12)
    count = 40
    a_circle, a_ellipse = rng.uniform(0.05, 1.0, count), rng.uniform(0.05, 1.0, count)
    e, w = rng.uniform(0.001, 0.6, count), rng.uniform(0, 2 * np.pi, count)
    zero = np.zeros(count)
    if circle_inside:
        args = (a_circle, zero, w[::-1], a_ellipse, e, w)
    else:
        args = (a_ellipse, e, w, a_circle, zero, w[::-1])
    expected = np.array([_scipy_closest(*pair) for pair in zip(*args)])
    model = orbits.closest_orbit_distance(*args)
    scale = np.maximum(a_circle, a_ellipse)
    crossing = model == 0.0
    assert 0 < crossing.sum() < count
    assert np.all(expected[crossing] <= 1e-6 * scale[crossing])
    error = np.abs(model - expected)[~crossing] / scale[~crossing]
    assert error.max() <= 1e-10, error.max()


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


def test_periastron_and_apoastron_distances(make_system):
    # r = a (1 - e^2) / (1 + e cos f) is a (1 - e) at f = 0 and a (1 + e) at f = pi (Murray & Dermott 1999,
    # eq. 2.20); a from Kepler's third law written with astropy quantities
    system = make_system([dict(name="b", period=12.0, radius=1.4, mass=2.0, eccentricity=0.3),
                          dict(name="c", period=30.0, radius=2.0, mass=5.0, eccentricity=0.05)])
    extra = derive(system).extra
    for index, (period, mass, e) in enumerate([(12.0, 2.0, 0.3), (30.0, 5.0, 0.05)]):
        a = _kepler_iii_astropy(period * u.day, const.M_sun + mass * const.M_earth).value
        assert extra["periastron_au"][index] == pytest.approx(a * (1 - e), rel=1e-12)
        assert extra["apoastron_au"][index] == pytest.approx(a * (1 + e), rel=1e-12)
