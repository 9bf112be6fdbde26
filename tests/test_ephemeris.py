"""Positions on Keplerian orbits, against hand calculation and a numerical two-body integration."""

import json

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from scipy.integrate import solve_ivp

from orbitdeck.models.motion import ephemeris, kepler
from orbitdeck.models.files.system import Planet, Star, System


def _system(*planets, mass=1.0, epoch=2461000.0):
    return System(name="test", epoch=epoch, star=Star(mass=mass, radius=1.0, teff=5772.0), planets=list(planets))


def test_kepler_third_law_earth():
    # Earth: sidereal year 365.256363 d, a = 1.000001 au (JPL planetary elements; from memory)
    earth = Planet(name="b", period=365.256363, radius=1.0, mass=1.0, transit_time=2461000.0)
    el = ephemeris.orbital_elements(_system(earth))
    assert el.a_au[0] == pytest.approx(1.000001, abs=2e-5)


def test_kepler_third_law_against_astropy_units():
    # the same law written with astropy quantities, an independent unit path
    P = 12.5 * u.day
    M = 0.3 * const.M_sun + 4.0 * const.M_earth
    a_ref = ((const.G * M * P ** 2 / (4 * np.pi ** 2)) ** (1 / 3)).to_value(u.au)
    el = ephemeris.orbital_elements(_system(Planet(name="b", period=12.5, mass=4.0, transit_time=0.0), mass=0.3))
    assert el.a_au[0] == pytest.approx(a_ref, rel=1e-12)


def test_circular_orbit_by_hand():
    # e = 0, omega = 90 deg: transit at f = 0. With Omega = 0 the position is
    # (a cos(omega + f), a sin(omega + f) cos i, a sin(omega + f) sin i) (Murray & Dermott 1999, ch. 2),
    # and f advances by 360 deg / P per day.
    t0, P, a, inc = 100.0, 8.0, 0.05, 60.0
    s = _system(Planet(name="b", period=P, inclination=inc, omega=90.0, transit_time=t0))
    el = ephemeris.orbital_elements(s, a_au=[a])
    x, y, z, f = ephemeris.positions(el, t0 + np.array([0.0, P / 4, P / 2, 3 * P / 4, 5 * P]))
    ci, si = np.cos(np.radians(inc)), np.sin(np.radians(inc))
    np.testing.assert_allclose(x[:, 0], [0, -a, 0, a, 0], atol=1e-15)
    np.testing.assert_allclose(y[:, 0], [a * ci, 0, -a * ci, 0, a * ci], atol=1e-15)
    np.testing.assert_allclose(z[:, 0], [a * si, 0, -a * si, 0, a * si], atol=1e-15)
    assert np.all((f >= 0) & (f < 2 * np.pi))
    np.testing.assert_allclose(kepler.wrap_angle(f[:, 0] - np.radians([0, 90, 180, 270, 0])), 0.0, atol=1e-11)


def _two_body_reference(a, e, omega, inc, period, gm, t_peri, times):
    # Independent solution: start at periastron with r = a (1 - e) and the vis-viva speed
    # v^2 = GM (2/r - 1/a) (Murray & Dermott 1999, ch. 2), along the periastron direction
    # P = (cos w, sin w cos i, sin w sin i) and the velocity direction Q = (-sin w, cos w cos i, cos w sin i),
    # then integrate r'' = -GM r / |r|^3 with scipy's DOP853.
    r_p = a * (1 - e)
    v_p = np.sqrt(gm * (2 / r_p - 1 / a))
    P = np.array([np.cos(omega), np.sin(omega) * np.cos(inc), np.sin(omega) * np.sin(inc)])
    Q = np.array([-np.sin(omega), np.cos(omega) * np.cos(inc), np.cos(omega) * np.sin(inc)])

    def rhs(_, s):
        r = s[:3]
        return np.concatenate([s[3:], -gm * r / np.linalg.norm(r) ** 3])

    sol = solve_ivp(rhs, (t_peri, times[-1]), np.concatenate([r_p * P, v_p * Q]), method="DOP853",
                    t_eval=times, rtol=1e-12, atol=1e-15)
    return sol.y[:3].T


@pytest.mark.parametrize("e, omega_deg, inc_deg", [(0.3, 40.0, 87.0), (0.7, 200.0, 60.0), (0.05, -30.0, 90.0)])
def test_eccentric_orbit_against_numerical_integration(e, omega_deg, inc_deg):
    P, mstar, mp = 20.0, 0.5, 10.0
    s = _system(Planet(name="b", period=P, mass=mp, eccentricity=e, omega=omega_deg, inclination=inc_deg,
                       transit_time=1000.0), mass=mstar)
    el = ephemeris.orbital_elements(s)
    # G (M* + Mp) in au^3 / d^2 from astropy's constants
    gm = float((const.G * (mstar * const.M_sun + mp * const.M_earth)).to_value(u.au**3 / u.day**2))
    # time of periastron: where the mean anomaly is zero
    m_tr = float(ephemeris.mean_anomaly_at(el, 1000.0)[0])
    t_peri = 1000.0 - m_tr / (2 * np.pi / P)
    times = t_peri + np.linspace(0.0, 0.4 * P, 41)
    ref = _two_body_reference(el.a_au[0], e, np.radians(omega_deg), np.radians(inc_deg), P, gm, t_peri, times)
    x, y, z, _ = ephemeris.positions(el, times)
    got = np.stack([x[:, 0], y[:, 0], z[:, 0]], axis=-1)
    np.testing.assert_allclose(got, ref, rtol=0, atol=1e-9 * el.a_au[0])


@pytest.mark.parametrize("e, omega_deg", [(0.0, 90.0), (0.4, 25.0), (0.8, 300.0)])
def test_planet_is_in_front_of_the_star_at_its_transit_time(e, omega_deg):
    # Winn 2010: mid-transit at omega + f = 90 deg, the planet between star and observer (+Z)
    tt, P = 5000.0, 3.3
    s = _system(Planet(name="b", period=P, eccentricity=e, omega=omega_deg, inclination=90.0, transit_time=tt))
    el = ephemeris.orbital_elements(s)
    x, y, z, f = ephemeris.positions(el, tt)
    assert abs(x[0]) < 1e-12 and abs(y[0]) < 1e-12 and z[0] > 0
    offset = (np.degrees(f[0]) + omega_deg - 90.0 + 180.0) % 360.0 - 180.0
    assert offset == pytest.approx(0.0, abs=1e-9)
    # sky-projected distance is smallest at the transit time (edge-on: exactly 0 there)
    grid = tt + np.linspace(-0.05 * P, 0.05 * P, 2001)
    gx, gy, gz, _ = ephemeris.positions(el, grid)
    rho = np.hypot(gx[:, 0], gy[:, 0])
    assert abs(grid[np.argmin(rho)] - tt) <= 0.1 * P / 2000


def test_inclined_eccentric_orbit_projected_minimum_near_transit():
    # with i != 90 deg the smallest sky separation falls within a tiny fraction of P of
    # omega + f = 90 deg (Winn 2010, section 2.1: the difference is of order e cos^2 i)
    tt, P = 0.0, 10.0
    el = ephemeris.orbital_elements(_system(Planet(name="b", period=P, eccentricity=0.3, omega=40.0,
                                                   inclination=88.0, transit_time=tt)))
    grid = tt + np.linspace(-0.02 * P, 0.02 * P, 40001)
    x, y, z, _ = ephemeris.positions(el, grid)
    rho = np.hypot(x[:, 0], y[:, 0])
    assert abs(grid[np.argmin(rho)] - tt) < 1e-3 * P
    assert z[np.argmin(rho), 0] > 0


def test_missing_transit_time_uses_epoch_and_warns():
    s = _system(Planet(name="b", period=2.0, transit_time=10.0), Planet(name="c", period=5.0), epoch=2461234.5)
    el = ephemeris.orbital_elements(s)
    assert el.tref_d.tolist() == [10.0, 2461234.5]
    assert el.tref_is_transit.tolist() == [True, False]
    assert len(el.warnings) == 1 and "'c'" in el.warnings[0] and "epoch" in el.warnings[0]


def test_shapes_and_vectorisation():
    s = _system(*(Planet(name=n, period=p, eccentricity=0.1, transit_time=0.0) for n, p in zip("bcd", (1.0, 2.2, 4.7))))
    el = ephemeris.orbital_elements(s)
    assert ephemeris.positions(el, 3.0).x_au.shape == (3,)
    times = np.linspace(0, 10, 7)
    pos = ephemeris.positions(el, times)
    assert pos.x_au.shape == (7, 3) and pos.true_anomaly_rad.shape == (7, 3)
    for k, t in enumerate(times):  # the vectorised call equals one call per time
        np.testing.assert_array_equal(ephemeris.positions(el, t).z_au, pos.z_au[k])
    empty = ephemeris.orbital_elements(_system())
    assert ephemeris.positions(empty, times).x_au.shape == (7, 0)


def test_bad_inputs_give_clear_errors():
    s = _system(Planet(name="b", period=2.0, transit_time=0.0), Planet(name="c", period=3.0, transit_time=0.0))
    with pytest.raises(ValueError, match="a_au.*shape"):
        ephemeris.orbital_elements(s, a_au=[0.1])
    with pytest.raises(ValueError, match="a_au.*> 0"):
        ephemeris.orbital_elements(s, a_au=[0.1, -0.2])
    el = ephemeris.orbital_elements(s)
    with pytest.raises(ValueError, match="times"):
        ephemeris.positions(el, [0.0, np.nan])
    with pytest.raises(ValueError, match="times"):
        ephemeris.positions(el, "soon")
    with pytest.raises(ValueError, match="no planet named 'z'"):
        el.index("z")


def test_positions_document_is_json_ready():
    s = _system(Planet(name="b", period=4.0, omega=90.0, transit_time=2461000.0), Planet(name="c", period=9.0))
    doc = ephemeris.positions_document(s)
    json.dumps(doc, allow_nan=False)
    assert doc["time"] == 2461000.0 and [p["name"] for p in doc["planets"]] == ["b", "c"]
    # at its transit time a circular planet with omega = 90 deg has f = 0 and sits at (0, 0, a)
    b = doc["planets"][0]
    assert min(b["true_anomaly_deg"], 360.0 - b["true_anomaly_deg"]) == pytest.approx(0.0, abs=1e-9)
    assert b["x_au"] == pytest.approx(0.0, abs=1e-15) and b["z_au"] > 0
    assert doc["warnings"] and "'c'" in doc["warnings"][0]
    with pytest.raises(ValueError, match="one time"):
        ephemeris.positions_document(s, [1.0, 2.0])
