"""Apparent sizes in each planet's sky, and warnings on doubtful systems."""

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest

from orbitdeck.models import derive
from orbitdeck.models.physics import skies
from orbitdeck.models.constants import MOON_ANGULAR_DIAMETER, RAD_TO_ARCSEC


def _sky(doc, observer, body):
    rows = [r for r in doc["skies"] if r["observer"] == observer and r["body"] == body]
    assert len(rows) == 1
    return rows[0]


def test_sun_seen_from_earth(solar_system):
    sun = _sky(derive(solar_system).to_dict(), "earth", "star")
    # Astronomical Almanac: solar semidiameter at 1 au 959.63" (from memory), i.e. ~1919" = 0.533 deg;
    # with the IAU 2015 nominal R_sun = 695,700 km the diameter is 1918.5"
    assert sun["max_angular_diameter_arcsec"] == pytest.approx(1919.0, abs=2.0)
    assert sun["max_angular_diameter_arcsec"] / 3600 == pytest.approx(0.533, abs=0.001)
    # the Sun and the Moon look nearly the same size from Earth (~0.533 / ~0.518 deg)
    assert sun["moon_ratio"] == pytest.approx(1.03, abs=0.005)
    assert sun["closest_distance_au"] == pytest.approx(1.0, abs=1e-4)


def test_moon_reference_diameter():
    # NASA Moon fact sheet (from memory): mean apparent diameter ~0.518 deg (31.1') at 384,400 km
    assert np.degrees(MOON_ANGULAR_DIAMETER) == pytest.approx(0.518, abs=0.001)


def test_venus_seen_from_earth(solar_system):
    doc = derive(solar_system).to_dict()
    venus = _sky(doc, "earth", "venus")
    # circular orbits: closest distance a_E - a_V (geometry)
    planets = {p["name"]: p for p in doc["planets"]}
    gap = planets["earth"]["semi_major_axis_au"] - planets["venus"]["semi_major_axis_au"]
    assert venus["closest_distance_au"] == pytest.approx(gap, rel=1e-12)
    # almanac: Venus near inferior conjunction appears ~60-66" across (from memory); circular orbits
    # give the lower end; by hand 2 arcsin(R_V / d) with astropy units
    by_hand = (2 * np.arcsin(float(6051.8 * u.km / (gap * u.au))) * u.rad).to_value(u.arcsec)
    assert venus["max_angular_diameter_arcsec"] == pytest.approx(by_hand, rel=1e-9)
    assert venus["max_angular_diameter_arcsec"] == pytest.approx(60.0, abs=1.5)


def test_jupiter_seen_from_earth(solar_system):
    doc = derive(solar_system).to_dict()
    jupiter = _sky(doc, "earth", "jupiter")
    # circular orbits: closest distance a_J - a_E, each a from Kepler's third law written with astropy
    def a(period_d, mass):
        return (const.G * (const.M_sun + mass) * (period_d * u.day) ** 2 / (4 * np.pi**2)) ** (1 / 3)

    gap = a(4332.589, const.M_jup) - a(365.256, const.M_earth)
    assert jupiter["closest_distance_au"] == pytest.approx(gap.to_value(u.au), rel=1e-12)
    by_hand = (2 * np.arcsin(float(const.R_jup / gap)) * u.rad).to_value(u.arcsec)
    assert jupiter["max_angular_diameter_arcsec"] == pytest.approx(by_hand, rel=1e-9)
    # almanac: Jupiter's equatorial diameter at a mean opposition (4.20 au) is 46.9" (from memory), to the
    # 0.05" of its last digit
    assert jupiter["max_angular_diameter_arcsec"] == pytest.approx(46.9, abs=0.05)


def test_jupiter_at_its_closest_to_earth_spans_the_published_maximum():
    # NASA Jupiter fact sheet: minimum distance from Earth 588.5e6 km (from memory) and maximum apparent
    # diameter 50.1" (stored copy of a planetary data sheet), from the 71,492 km equatorial radius: to the
    # 0.05" of the published last digit
    diameter = skies.angular_diameter(71492.0, 588.5e6) * RAD_TO_ARCSEC
    assert diameter == pytest.approx(50.1, abs=0.05)


def test_star_is_largest_at_periastron(make_system):
    # the star looks largest from the closest point of the orbit, periastron a (1 - e) (geometry):
    # from e = 0.31 that is 1 / 0.69 = 1.45 times its size at a
    doc = derive(make_system([dict(name="b", period=100.0, radius=1.0, mass=1.0, eccentricity=0.31)])).to_dict()
    a = doc["planets"][0]["semi_major_axis_au"] * (1.0 - 0.31)
    star = _sky(doc, "b", "star")
    assert star["closest_distance_au"] == pytest.approx(a, rel=1e-12)
    # 2 arcsin(R/d) for a sphere, evaluated independently with astropy units
    by_hand = (2 * np.arcsin(float(const.R_sun / (a * u.au))) * u.rad).to_value(u.arcsec)
    assert star["max_angular_diameter_arcsec"] == pytest.approx(by_hand, rel=1e-9)


def test_every_observer_sees_the_star_and_every_other_planet(solar_system):
    doc = derive(solar_system).to_dict()
    names = [p["name"] for p in doc["planets"]]
    pairs = {(r["observer"], r["body"]) for r in doc["skies"]}
    expected = {(o, b) for o in names for b in ["star", *names] if b != o}
    assert pairs == expected and len(doc["skies"]) == len(expected)


def test_angular_diameter_is_exact_for_a_sphere():
    # 2 arcsin(R/d): a sphere seen from 2R subtends 60 deg (geometry)
    assert np.degrees(skies.angular_diameter(1.0, 2.0)) == pytest.approx(60.0, rel=1e-12)
    # from inside or on the surface it fills half the sky
    assert skies.angular_diameter(1.0, 0.5) == pytest.approx(np.pi)


def test_closest_distance_for_circular_orbits_is_the_gap(make_system):
    system = make_system([dict(name="b", period=3.0, radius=1.0, mass=1.0),
                          dict(name="c", period=7.0, radius=1.0, mass=1.0)])
    doc = derive(system).to_dict()
    a = {p["name"]: p["semi_major_axis_au"] for p in doc["planets"]}
    assert _sky(doc, "b", "c")["closest_distance_au"] == pytest.approx(a["c"] - a["b"], rel=1e-12)
    assert _sky(doc, "c", "b")["closest_distance_au"] == pytest.approx(a["c"] - a["b"], rel=1e-12)


def test_crossing_eccentric_orbits_give_zero_and_a_warning(make_system):
    # a_c = 1.6^(2/3) a_b = 1.37 a_b, so the outer periastron 0.5 a_c = 0.68 a_b lies inside the
    # inner circle: the orbits cross (Kepler III by hand)
    system = make_system([dict(name="b", period=10.0, radius=1.0, mass=1.0),
                          dict(name="c", period=16.0, radius=1.0, mass=1.0, eccentricity=0.5)])
    doc = derive(system).to_dict()
    assert _sky(doc, "b", "c")["closest_distance_au"] == 0.0
    # at zero distance the neighbour fills half the sky (2 arcsin 1 = 180 deg)
    assert _sky(doc, "b", "c")["max_angular_diameter_arcsec"] == pytest.approx(180 * 3600.0)
    assert sum("orbits cross" in w for w in doc["warnings"]) == 1


def test_planet_inside_the_star_warns(make_system):
    # P = 0.1 d around the Sun: a = 0.0019 au < R_sun = 0.00465 au (Kepler III by hand)
    a = ((const.G * const.M_sun * (0.1 * u.day) ** 2 / (4 * np.pi**2)) ** (1 / 3)).to_value(u.au)
    assert a < float(const.R_sun / const.au)
    doc = derive(make_system([dict(name="b", period=0.1, radius=1.0, mass=1.0)])).to_dict()
    assert any("inside the star" in w for w in doc["warnings"])


def test_eccentric_periastron_inside_the_star_warns(make_system):
    # a = 0.0196 au at P = 1 d; with e = 0.8 periastron 0.0039 au < R_sun (0.00465 au)
    doc = derive(make_system([dict(name="b", period=1.0, radius=1.0, mass=1.0, eccentricity=0.8)])).to_dict()
    assert any("inside the star" in w for w in doc["warnings"])


def test_ordinary_system_has_no_warnings(solar_system):
    assert derive(solar_system).to_dict()["warnings"] == []


def test_sky_rows_list_the_star_then_every_other_planet_for_each_observer():
    from orbitdeck.models.engine.quantities.skies import all_sky_rows

    for n in (1, 2, 5, 9):
        observer, body = all_sky_rows(n)
        # built independently: for each observer, -1 (the star), then the other planets in order
        expected = [(o, b) for o in range(n) for b in [-1, *(k for k in range(n) if k != o)]]
        assert list(zip(observer.tolist(), body.tolist())) == expected


def test_many_crossing_pairs_are_summarised(make_system):
    # a crowded eccentric system: every pair crosses; the warnings name a few and count the rest
    from orbitdeck.models.engine.checks import MAX_LISTED_CROSSINGS

    # period ratios of 1.01 put the orbits 0.7 % apart in a, far inside e = 0.3 (Kepler III by hand)
    system = make_system([dict(name=f"p{k}", period=10.0 * 1.01**k, radius=1.0, mass=1.0, eccentricity=0.3,
                               omega=30.0 * k) for k in range(12)])
    warnings = derive(system).warnings
    named = [w for w in warnings if w.endswith("their orbits cross.")]
    assert len(named) == MAX_LISTED_CROSSINGS
    assert any(w.startswith(f"... and {66 - MAX_LISTED_CROSSINGS} more pairs") for w in warnings)
