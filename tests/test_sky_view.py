"""The sky from one planet and close approaches, against almanac values and independent searches.

The Sun-Venus-Earth-Jupiter system below uses approximate orbital elements
quoted from memory (periods, eccentricities, longitudes of perihelion used as
arguments of periastron with a common node) and puts all orbits in one plane,
which is close to the truth (inclinations to the ecliptic of 3.4 and 1.3 deg).
The orbital phases are arbitrary: the checks only use quantities that repeat
at every conjunction or opposition.
"""

import json

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate, optimize

from orbitdeck.models.motion import ephemeris, sky_view
from orbitdeck.models.files.system import Planet, Star, System

R_EARTH_KM = const.R_earth.to_value(u.km)


def solar_system():
    sun = Star(name="Sun", mass=1.0, radius=1.0, teff=5772.0, luminosity=1.0)
    planets = [
        # Venus: P 224.701 d, e 0.0068, varpi 131.5 deg, mean radius 6051.8 km (from memory)
        Planet(name="Venus", period=224.701, radius=6051.8 / R_EARTH_KM, mass=0.815, eccentricity=0.0068,
               omega=131.5, transit_time=2460000.0),
        # Earth: P 365.256 d, e 0.0167, varpi 102.9 deg (from memory)
        Planet(name="Earth", period=365.256, radius=1.0, mass=1.0, eccentricity=0.0167, omega=102.9,
               transit_time=2460123.0),
        # Jupiter: P 4332.59 d, e 0.0489, varpi 14.3 deg (from memory); equatorial radius R_jup from astropy
        Planet(name="Jupiter", period=4332.59, radius=float(const.R_jup / const.R_earth), mass=317.8,
               eccentricity=0.0489, omega=14.3, transit_time=2460777.0),
    ]
    return System(name="Solar System (approximate)", epoch=2460000.0, star=sun, planets=planets)


def _approaches(doc, body):
    return next(b for b in doc["bodies"] if b["body"] == body)["approaches"]


def _sky_at(system, observer, body, times):
    sky = sky_view.sky_from(system, observer, np.asarray(times))
    return sky, sky["bodies"].index(body)


def test_venus_at_inferior_conjunction():
    # Almanac: Venus spans about 60 arcsec at inferior conjunction (57-64 arcsec as the
    # distance varies from 0.29 to 0.26 au; from memory), and is "new" (phase angle near 180 deg).
    s = solar_system()
    ca = sky_view.close_approaches(s, "Earth", after=2460000.0, count=8)
    venus = _approaches(ca, "Venus")
    assert len(venus) == 8
    sizes = np.array([a["angular_diameter_arcsec"] for a in venus])
    assert np.all((sizes > 56.0) & (sizes < 65.0))
    assert np.mean(sizes) == pytest.approx(60.0, abs=2.5)
    sky, k = _sky_at(s, "Earth", "Venus", [a["time"] for a in venus])
    assert np.all(sky["elongation_deg"][:, k] < 3.0)
    assert np.all(sky["phase_angle_deg"][:, k] > 175.0)
    assert np.all(sky["illuminated_fraction"][:, k] < 1e-3)  # new


def test_jupiter_at_opposition():
    # Almanac: Jupiter spans about 46 arcsec at opposition (44 at aphelic, 50 at perihelic
    # oppositions; from memory), and is full (phase angle near 0).
    s = solar_system()
    ca = sky_view.close_approaches(s, "Earth", after=2460000.0, count=12)
    jupiter = _approaches(ca, "Jupiter")
    assert len(jupiter) == 12
    sizes = np.array([a["angular_diameter_arcsec"] for a in jupiter])
    assert np.all((sizes > 43.5) & (sizes < 50.5))
    assert np.mean(sizes) == pytest.approx(46.5, abs=1.5)
    gaps = np.diff([a["time"] for a in jupiter])
    # synodic period of Jupiter, 398.9 d (almanac; from memory), varies by a few days with eccentricity
    np.testing.assert_allclose(gaps, 398.9, atol=8.0)
    sky, k = _sky_at(s, "Earth", "Jupiter", [a["time"] for a in jupiter])
    assert np.all(sky["elongation_deg"][:, k] > 178.0)
    assert np.all(sky["illuminated_fraction"][:, k] > 0.9999)  # full


def test_jupiter_brightness_at_opposition():
    # Jupiter at a mean opposition shines at about magnitude -2.7, the full Moon at -12.7
    # (almanac; from memory); Jupiter's visual geometric albedo 0.538 (NASA fact sheet; from memory).
    s = solar_system()
    t = _approaches(sky_view.close_approaches(s, "Earth", 2460000.0, 12), "Jupiter")
    sky = sky_view.sky_from(s, "Earth", np.array([a["time"] for a in t]), geometric_albedo=0.538)
    k = sky["bodies"].index("Jupiter")
    magnitude = -12.74 - 2.5 * np.log10(sky["brightness_moon_ratio"][:, k])
    assert np.mean(magnitude) == pytest.approx(-2.7, abs=0.25)


def test_sun_seen_from_earth():
    # The Sun: 1919 arcsec across at 1 au (32.0 arcmin) and magnitude -26.74 against the full
    # Moon's -12.74 (almanac; from memory), a flux ratio 10^(0.4 * 14.00).
    s = solar_system()
    sky = sky_view.sky_from(s, "Earth", np.linspace(2460000.0, 2460365.0, 12))
    d = sky["distance_au"][:, 0]
    assert sky["bodies"][0] == "star"
    np.testing.assert_allclose(sky["angular_diameter_arcsec"][:, 0] * d, 1919.0, rtol=2e-3)
    # the model's full Moon is the Sun's light reflected with the Moon's geometric albedo 0.12 at its mean
    # distance, p (R_Moon / d_Moon)^2 (the module's stated model), so the Sun at 1 au is 1 / (p (R/d)^2)
    # full Moons; by hand with astropy units, to rounding
    by_hand = float(1.0 / (0.12 * (1737.4 * u.km / (384400.0 * u.km)) ** 2))
    np.testing.assert_allclose(sky["brightness_moon_ratio"][:, 0] * d ** 2, by_hand, rtol=1e-12)
    # against the almanac's 14.00 magnitudes: the albedo 0.12 is given to two digits (+-0.005, 4 %, 0.045 mag),
    # so the model's Sun may stand that far from the measured ratio, and no farther
    magnitudes = 2.5 * np.log10(sky["brightness_moon_ratio"][:, 0] * d ** 2)
    np.testing.assert_allclose(magnitudes, 14.00, atol=0.045)
    assert np.all(np.isnan(sky["phase_angle_deg"][:, 0])) and np.all(sky["elongation_deg"][:, 0] == 0.0)


def test_luminosity_of_a_star_without_one_given():
    # IAU 2015 Resolution B3: the nominal solar radius and Teff = 5772 K give the nominal luminosity (to 1e-4);
    # an M dwarf with astropy's sigma_sb, L = 4 pi R^2 sigma Teff^4 (Stefan-Boltzmann law)
    assert sky_view.stellar_luminosity_lsun(Star(name="sun", mass=1.0, radius=1.0, teff=5772.0)) == pytest.approx(
        1.0, abs=1e-4)
    expected = float(4 * np.pi * (0.21 * const.R_sun) ** 2 * const.sigma_sb * (3150 * u.K) ** 4 / const.L_sun)
    dwarf = Star(name="m", mass=0.2, radius=0.21, teff=3150.0)
    assert sky_view.stellar_luminosity_lsun(dwarf) == pytest.approx(expected, rel=1e-12)
    assert sky_view.stellar_luminosity_lsun(Star(name="m", mass=0.2, radius=0.21, teff=3150.0, luminosity=0.5)) == 0.5


def test_moon_reference_size():
    # the full Moon spans about 0.518 deg (31 arcmin) on average (almanac; DESIGN.md says ~0.52 deg)
    size_deg = sky_view.angular_diameter_arcsec(sky_view.MOON_RADIUS.to_value(u.km),
                                                sky_view.MOON_DISTANCE.to_value(u.km)) / 3600.0
    assert size_deg == pytest.approx(0.518, abs=0.002)


@pytest.mark.parametrize("p1, p2", [(3.0, 7.5), (10.0, 13.0), (2.0, 50.0)])
def test_close_approaches_recur_at_the_synodic_period(p1, p2):
    # circular coplanar orbits: conjunctions every 1 / |1/P1 - 1/P2| at distance a2 - a1 (geometry)
    s = System(star=Star(mass=0.2, radius=0.25, teff=3200.0),
               planets=[Planet(name="b", period=p1, transit_time=0.0), Planet(name="c", period=p2, transit_time=0.4)])
    ca = sky_view.close_approaches(s, "b", after=1.0, count=4)
    c = _approaches(ca, "c")
    times = np.array([a["time"] for a in c])
    synodic = 1.0 / abs(1.0 / p1 - 1.0 / p2)
    np.testing.assert_allclose(np.diff(times), synodic, rtol=1e-6)
    assert times[0] > 1.0 and times[0] - 1.0 <= synodic
    el = ephemeris.orbital_elements(s)
    for a in c:
        assert a["distance_au"] == pytest.approx(el.a_au[1] - el.a_au[0], rel=1e-12)


def test_close_approaches_against_brute_force_search():
    # eccentric, mutually inclined orbits: the minima must match a 20x denser grid search
    # refined by scipy.optimize.minimize_scalar (an independent minimiser)
    s = System(star=Star(mass=0.1, radius=0.12, teff=2700.0), planets=[
        Planet(name="b", period=1.51, eccentricity=0.05, omega=10.0, inclination=89.7, transit_time=0.0),
        Planet(name="c", period=2.42, eccentricity=0.25, omega=200.0, inclination=85.0, transit_time=0.3),
        Planet(name="d", period=4.05, eccentricity=0.4, omega=-70.0, inclination=80.0, transit_time=0.9)])
    ca = sky_view.close_approaches(s, "c", after=10.0, count=5)
    el = ephemeris.orbital_elements(s)

    def separation(t, j):
        pos = ephemeris.positions(el, np.atleast_1d(t))
        return float(np.hypot(np.hypot(pos.x_au[0, j] - pos.x_au[0, 1], pos.y_au[0, j] - pos.y_au[0, 1]),
                              pos.z_au[0, j] - pos.z_au[0, 1]))

    for body in ca["bodies"]:
        j = el.index(body["body"])
        found = body["approaches"]
        grid = np.linspace(10.0, found[-1]["time"] + 0.01, 200_000)
        pos = ephemeris.positions(el, grid)
        d = np.sqrt((pos.x_au[:, j] - pos.x_au[:, 1]) ** 2 + (pos.y_au[:, j] - pos.y_au[:, 1]) ** 2
                    + (pos.z_au[:, j] - pos.z_au[:, 1]) ** 2)
        k = np.nonzero((d[1:-1] < d[:-2]) & (d[1:-1] <= d[2:]))[0] + 1
        assert len(k) == len(found) == 5
        for kk, a in zip(k, found):
            ref = optimize.minimize_scalar(separation, bounds=(grid[kk - 1], grid[kk + 1]), args=(j,),
                                           method="bounded", options={"xatol": 1e-9})
            assert a["time"] == pytest.approx(ref.x, abs=1e-4)
            assert a["distance_au"] == pytest.approx(ref.fun, rel=1e-9)
            r_planet = s.planet(body["body"]).radius * const.R_earth.to_value(u.au)
            assert a["angular_diameter_arcsec"] == pytest.approx(
                np.degrees(2 * np.arcsin(r_planet / ref.fun)) * 3600, rel=1e-8)


def test_illuminated_fraction_and_lambert_phase_function():
    # full phase: whole disc lit; new: none; quadrature: half (geometry of a sphere)
    np.testing.assert_allclose(sky_view.illuminated_fraction([0.0, 90.0, 180.0]), [1.0, 0.5, 0.0], atol=1e-15)
    np.testing.assert_allclose(sky_view.lambert_phase_function([0.0, 180.0]), [1.0, 0.0], atol=1e-15)
    # the phase integral of a Lambert sphere, q = 2 int Phi(a) sin a da = 3/2 (Russell 1916; from memory)
    q, _ = integrate.quad(lambda a: 2 * sky_view.lambert_phase_function(np.degrees(a)) * np.sin(a), 0, np.pi)
    assert q == pytest.approx(1.5, rel=1e-10)


def _random_system(periods, eccs, omegas, incs, t0s):
    return System(star=Star(mass=0.3, radius=0.3, teff=3400.0), planets=[
        Planet(name=name, period=p, eccentricity=e, omega=w, inclination=i, transit_time=t)
        for name, p, e, w, i, t in zip("bcd", periods, eccs, omegas, incs, t0s)])


@settings(max_examples=60, deadline=None)
@given(periods=st.lists(st.floats(0.5, 100.0), min_size=3, max_size=3, unique=True),
       eccs=st.lists(st.floats(0.0, 0.6), min_size=3, max_size=3),
       omegas=st.lists(st.floats(-180.0, 180.0), min_size=3, max_size=3),
       incs=st.lists(st.floats(60.0, 120.0), min_size=3, max_size=3),
       t0s=st.lists(st.floats(0.0, 10.0), min_size=3, max_size=3),
       time=st.floats(-500.0, 500.0))
def test_triangle_of_star_observer_body(periods, eccs, omegas, incs, t0s, time):
    # the angles of the triangle star-observer-body add up to 180 deg (plane geometry)
    s = _random_system(periods, eccs, omegas, incs, t0s)
    observer = s.planets[0].name
    sky = sky_view.sky_from(s, observer, time)
    pos = ephemeris.positions(ephemeris.orbital_elements(s), time)
    xyz = np.stack([pos.x_au, pos.y_au, pos.z_au], axis=-1)
    for b, name in enumerate(sky["bodies"][1:], start=1):
        at_star = np.degrees(np.arccos(np.clip(np.dot(xyz[0], xyz[s.planet_names.index(name)])
                                               / np.linalg.norm(xyz[0]) / np.linalg.norm(xyz[s.planet_names.index(name)]),
                                               -1, 1)))
        assert sky["elongation_deg"][b] + sky["phase_angle_deg"][b] + at_star == pytest.approx(180.0, abs=1e-5)
    assert np.all((sky["illuminated_fraction"] >= 0) & (sky["illuminated_fraction"] <= 1))
    assert np.all(sky["brightness_moon_ratio"] >= 0)


def test_vectorised_sky_equals_one_time_at_a_time():
    s = solar_system()
    times = np.linspace(2460000.0, 2461000.0, 9)
    sky = sky_view.sky_from(s, "Venus", times)
    assert sky["distance_au"].shape == (9, 3) and sky["bodies"] == ["star", "Earth", "Jupiter"]
    for k, t in enumerate(times):
        one = sky_view.sky_from(s, "Venus", t)
        for key in ("distance_au", "elongation_deg", "brightness_moon_ratio"):
            np.testing.assert_allclose(one[key], sky[key][k], rtol=1e-13)


def test_sky_document_is_json_ready():
    s = solar_system()
    doc = sky_view.sky_document(s, "Earth", 2460100.0)
    text = json.dumps(doc, allow_nan=False)
    assert json.loads(text)["observer"] == "Earth" and doc["time"] == 2460100.0
    assert [b["body"] for b in doc["bodies"]] == ["star", "Venus", "Jupiter"]
    assert doc["bodies"][0]["phase_angle_deg"] is None and doc["bodies"][1]["phase_angle_deg"] is not None
    assert set(doc["bodies"][1]) == {"body", "distance_au", "angular_diameter_arcsec", "elongation_deg",
                                     "phase_angle_deg", "illuminated_fraction", "brightness_moon_ratio"}
    assert sky_view.sky_document(s, "Earth")["time"] == s.epoch


def test_bad_inputs_give_clear_errors():
    s = solar_system()
    with pytest.raises(ValueError, match="no planet named 'Mars'"):
        sky_view.sky_from(s, "Mars", 0.0)
    with pytest.raises(ValueError, match="geometric_albedo"):
        sky_view.sky_from(s, "Earth", 0.0, geometric_albedo=-1)
    with pytest.raises(ValueError, match="count"):
        sky_view.close_approaches(s, "Earth", 0.0, 0)
    with pytest.raises(ValueError, match="after"):
        sky_view.close_approaches(s, "Earth", [0.0, 1.0], 2)
    with pytest.raises(ValueError, match="one time"):
        sky_view.sky_document(s, "Earth", [0.0, 1.0])


def test_constant_separation_has_no_close_approach():
    # equal periods on circular coplanar orbits: the distance never changes (geometry),
    # so rounding noise must not be reported as minima
    s = System(star=Star(mass=0.2, radius=0.25, teff=3200.0),
               planets=[Planet(name="b", period=3.0, transit_time=0.0), Planet(name="c", period=3.0, transit_time=1.0)])
    ca = sky_view.close_approaches(s, "b", after=0.0, count=2, max_samples=50_000)
    assert _approaches(ca, "c") == [] and "only 0 of 2" in ca["warnings"][-1]
    assert ca["bodies"][0]["synodic_period_d"] is None


def test_a_body_overlapping_the_observer_has_no_place_in_its_sky():
    # two planets given the same orbit and phase sit on top of each other: geometry gives a distance but no
    # direction, and inside the sum of the radii no apparent size, phase or brightness means anything
    s = System(star=Star(mass=0.3, radius=0.3, teff=3300.0),
               planets=[Planet(name="b", period=3.0, radius=1.0, transit_time=0.0),
                        Planet(name="c", period=3.0, radius=1.2, transit_time=0.0),
                        Planet(name="d", period=5.0, radius=1.0, transit_time=1.0)])
    sky = sky_view.sky_from(s, "b", 0.5)
    c, d = sky["bodies"].index("c"), sky["bodies"].index("d")
    # c's centre is off b's only by the planets' masses in Kepler's third law: far less than the two radii
    assert sky["distance_au"][c] < 2.2 * sky_view.R_EARTH_AU
    for key in ("angular_diameter_arcsec", "elongation_deg", "phase_angle_deg", "illuminated_fraction",
                "brightness_moon_ratio"):
        assert np.isnan(sky[key][c]) and np.isfinite(sky[key][d]), key
    assert np.isfinite(sky["angular_diameter_arcsec"][0])
    assert [w for w in sky["warnings"] if "overlaps" in w] == [
        "c overlaps planet b at BJD_TDB 0.5000 (their centres are closer than the sum of their radii): its size, "
        "direction, phase and brightness in b's sky are not given there"]
    # over many times the warning counts them; the JSON document gives null, never NaN
    track = sky_view.sky_from(s, "b", np.linspace(0.0, 3.0, 7))
    assert np.isnan(track["angular_diameter_arcsec"][:, c]).all()
    assert np.isfinite(track["angular_diameter_arcsec"][:, d]).all()
    assert any("c overlaps planet b at 7 of the 7 times" in w for w in track["warnings"])
    doc = sky_view.sky_document(s, "b", 0.5)
    json.dumps(doc, allow_nan=False)
    assert doc["bodies"][c]["angular_diameter_arcsec"] is None and doc["bodies"][c]["distance_au"] is not None


def test_a_body_just_clear_of_the_observer_keeps_its_sky():
    # the star seen from a planet whose orbit grazes it: centres 1.01 times the two radii apart, just clear
    star = Star(mass=0.3, radius=0.3, teff=3300.0)
    clear = 1.01 * (0.3 * sky_view.R_SUN_AU + sky_view.R_EARTH_AU)
    one_day = System(star=star, planets=[Planet(name="b", period=1.0, radius=1.0)])
    a_one_day = float(ephemeris.orbital_elements(one_day).a_au[0])
    period = (clear / a_one_day) ** 1.5   # Kepler's third law, P proportional to a^(3/2)
    s = System(star=star, planets=[Planet(name="b", period=period, radius=1.0, transit_time=0.0)])
    sky = sky_view.sky_from(s, "b", 0.0)
    assert sky["distance_au"][0] == pytest.approx(clear, rel=1e-6)
    assert np.isfinite(sky["angular_diameter_arcsec"][0]) and not any("overlaps" in w for w in sky["warnings"])
    inside = System(star=star, planets=[Planet(name="b", period=period * 0.98 ** 1.5, radius=1.0, transit_time=0.0)])
    assert np.isnan(sky_view.sky_from(inside, "b", 0.0)["angular_diameter_arcsec"][0])
