"""Invariants of the derived quantities and of the system-file round trip (hypothesis)."""

from fractions import Fraction
from math import gcd

import numpy as np
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from orbitdeck.models import Assumptions, Planet, Star, System, Uncertainty, derive
from orbitdeck.models.physics import irradiation, orbits, resonances
from orbitdeck.models.files.system_file import dumps_system, loads_system
from orbitdeck.models.files.names import display_key

from drawn_names import names

M_SUN = 1.988409870698051e30    # only a scale for the monotonicity checks, not a reference value
DAY = 86400.0
FAST = settings(max_examples=80, deadline=None)


def positive(lo, hi):
    return st.floats(min_value=lo, max_value=hi, allow_nan=False, allow_infinity=False)


# -- monotonicity and scaling -----------------------------------------------------------

@FAST
@given(p1=positive(0.1, 1e5), factor=positive(1.0 + 1e-6, 100.0), mass=positive(0.05, 50.0))
def test_semi_major_axis_increases_with_period(p1, factor, mass):
    # Kepler III: a ~ P^(2/3)
    a1, a2 = orbits.semi_major_axis(np.array([p1, p1 * factor]) * DAY, mass * M_SUN)
    assert a2 > a1
    assert abs(a2 / a1 / factor ** (2 / 3) - 1) < 1e-12


@FAST
@given(period=positive(0.1, 1e5), m1=positive(0.05, 50.0), factor=positive(1.0 + 1e-6, 100.0))
def test_semi_major_axis_increases_with_stellar_mass(period, m1, factor):
    # Kepler III: a ~ M^(1/3)
    a1, a2 = orbits.semi_major_axis(period * DAY, np.array([m1, m1 * factor]) * M_SUN)
    assert a2 > a1
    assert abs(a2 / a1 / factor ** (1 / 3) - 1) < 1e-12


@FAST
@given(lum=positive(1e-5, 1e4), a1=positive(1e-3, 100.0), factor=positive(1.0 + 1e-6, 1e3),
       albedo=positive(0.0, 0.95), f=st.sampled_from([0.25, 0.5, 2 / 3]))
def test_teq_decreases_with_distance(lum, a1, factor, albedo, f):
    t1 = irradiation.equilibrium_temperature(irradiation.insolation(lum, a1, 0.0), albedo, f)
    t2 = irradiation.equilibrium_temperature(irradiation.insolation(lum, a1 * factor, 0.0), albedo, f)
    assert t2 < t1
    assert abs(t1 / t2 / np.sqrt(factor) - 1) < 1e-12    # Teq ~ a^(-1/2)


@FAST
@given(s=positive(1e-4, 1e4), a1=positive(0.0, 0.9), step=positive(1e-6, 0.09), f=st.sampled_from([0.25, 0.5, 2 / 3]))
def test_teq_decreases_with_albedo(s, a1, step, f):
    t1 = irradiation.equilibrium_temperature(s, a1, f)
    t2 = irradiation.equilibrium_temperature(s, a1 + step, f)
    assert t2 < t1


@FAST
@given(lum=positive(1e-5, 1e4), a1=positive(1e-3, 100.0), factor=positive(0.01, 100.0), e=positive(0.0, 0.95))
def test_insolation_is_inverse_square(lum, a1, factor, e):
    s1 = irradiation.insolation(lum, a1, e)
    s2 = irradiation.insolation(lum, a1 * factor, e)
    assert abs(s1 / s2 / factor**2 - 1) < 1e-12
    # e -> 0 limit: the plain L / a^2
    assert abs(irradiation.insolation(lum, a1, 0.0) * a1**2 / lum - 1) < 1e-12


@FAST
@given(teff=positive(2600.0, 7200.0), radius=positive(0.08, 5.0))
def test_hz_limits_are_ordered(teff, radius):
    system = System(star=Star(mass=1.0, radius=radius, teff=teff), planets=[Planet(name="b", period=10.0)])
    hz = derive(system).to_dict()["star"]["hz_au"]
    # Kopparapu et al. 2014: recent Venus < runaway greenhouse < maximum greenhouse < early Mars
    assert hz["recent_venus"] < hz["runaway_greenhouse"] < hz["maximum_greenhouse"] < hz["early_mars"]


# -- commensurabilities ---------------------------------------------------------------------

CANDIDATES = [Fraction(p, q) for p in range(2, 13) for q in range(max(1, p - 3), p) if gcd(p, q) == 1]


@settings(max_examples=150, deadline=None)
@given(p1=positive(0.2, 500.0), ratio=positive(1.0, 6.0))
def test_nearest_commensurability_is_lowest_terms_and_nearest(p1, ratio):
    p2 = p1 * ratio
    assume(p2 > p1)
    system = System(planets=[Planet(name="b", period=p1), Planet(name="c", period=p2)])
    pair = derive(system).to_dict()["pairs"][0]
    p, q = map(int, pair["nearest"].split(":"))
    r = p2 / p1
    assert gcd(p, q) == 1 and 1 <= p - q <= 3 and pair["order"] == p - q
    # nearest of all rungs up to third order (brute force with exact fractions)
    best = min(abs(Fraction(r) - c) for c in CANDIDATES)
    assert abs(Fraction(r) - Fraction(p, q)) == best
    # Delta = ratio q / p - 1 (Lithwick et al. 2012 eq. 5), to the last bit
    assert pair["period_ratio"] == r
    assert pair["delta"] == r * q / p - 1.0
    assert abs(Fraction(pair["delta"]) - (Fraction(r) * q / p - 1)) < Fraction(1, 10**15)


@FAST
@given(ratio=positive(1.0, 5.0))
def test_delta_is_zero_on_the_rung(ratio):
    p, q, _ = resonances.nearest_commensurability(ratio)
    assert abs(resonances.resonance_offset(p / q, p, q)) < 1e-15


@settings(max_examples=200, deadline=None)
@given(rung=st.integers(0, resonances._P.size - 1), offsets=st.lists(st.floats(-0.3, 0.3), min_size=1, max_size=30),
       midpoint=st.booleans())
def test_nearest_differs_agrees_with_the_search(rung, offsets, midpoint):
    # the shortcut used for Monte Carlo draws must give the search's answer ratio by ratio, on the
    # rung, across it, beyond its neighbours and exactly half way to them (ties)
    p, q = resonances._P[rung], resonances._Q[rung]
    ratios = p / q + np.array(offsets)
    if midpoint:
        ratios = np.concatenate([ratios, 0.5 * (resonances._SORTED_RATIO[:-1] + resonances._SORTED_RATIO[1:])])
    ratios = ratios[ratios >= 1.0].reshape(-1, 1)
    found_p, found_q, _ = resonances.nearest_commensurability(ratios)
    expected = (found_p != p) | (found_q != q)
    np.testing.assert_array_equal(resonances.nearest_differs(ratios, [p], [q]), expected)


# -- file round trip ------------------------------------------------------------------------

# text of any Unicode character that UTF-8 can encode (no lone surrogates)
TEXT = st.text(st.characters(blacklist_categories=("Cs",)), max_size=20)
NAME = names(max_size=20)   # names show as themselves


@st.composite
def uncertainty(draw, scale):
    kind = draw(st.sampled_from(["none", "sigma", "sides"]))
    if kind == "none":
        return None
    if kind == "sigma":
        return Uncertainty.from_sigma(draw(positive(0.0, scale)))
    return Uncertainty(draw(positive(0.0, scale)), draw(positive(0.0, scale)))


@st.composite
def body(draw, cls, ranges, name=None):
    values, spreads, refs = {}, {}, {}
    for key, (lo, hi, optional) in ranges.items():
        if optional and draw(st.booleans()):
            continue
        values[key] = draw(positive(lo, hi))
        spread = draw(uncertainty((hi - lo) * 0.05 + 1e-3))
        if spread is not None:
            spreads[key] = spread
        if draw(st.booleans()):
            refs[key] = draw(TEXT)
    if name is not None:
        values["name"] = name
    return cls(**values, uncertainties=spreads, refs=refs)


STAR_RANGES = {"mass": (0.08, 3.0, False), "radius": (0.1, 5.0, False), "teff": (2300.0, 9000.0, False),
               "luminosity": (1e-4, 100.0, True), "j_mag": (-1.0, 20.0, True), "k_mag": (-1.0, 20.0, True),
               "distance": (1.0, 1000.0, True)}
PLANET_RANGES = {"period": (0.2, 1000.0, False), "radius": (0.3, 20.0, False), "mass": (0.1, 5000.0, True),
                 "eccentricity": (0.0, 0.95, True), "inclination": (0.0, 180.0, True),
                 "omega": (-360.0, 360.0, True), "transit_time": (2.45e6, 2.47e6, True)}


@st.composite
def systems(draw):
    names = draw(st.lists(NAME, min_size=1, max_size=4, unique_by=display_key))  # no two look alike
    planets = [draw(body(Planet, PLANET_RANGES, name=n)) for n in names]
    star = draw(body(Star, STAR_RANGES, name=draw(NAME)))
    assumptions = draw(body(Assumptions, {"bond_albedo": (0.0, 0.95, False)}))
    assumptions.heat_redistribution = draw(st.sampled_from(["full", "dayside", "none"]))
    if draw(st.booleans()):
        assumptions.free_eccentricity_amplitude = draw(st.floats(0.0, 0.99))
        assumptions.free_eccentricity_angle = draw(st.floats(-360.0, 360.0))
    return System(name=draw(NAME), notes=draw(TEXT), epoch=draw(positive(-1e7, 1e7)),
                  star=star, assumptions=assumptions, planets=planets)


def _bookkeeping(system):
    objects = [system.star, system.assumptions, *system.planets]
    return [(o.uncertainties, o.refs) for o in objects]


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(system=systems())
def test_system_file_round_trip(system):
    text = dumps_system(system)
    again = loads_system(text)
    assert again.name == system.name and again.notes == system.notes and again.epoch == system.epoch
    assert again.planet_names == system.planet_names
    for a, b in zip([system.star, system.assumptions, *system.planets], [again.star, again.assumptions, *again.planets]):
        if not isinstance(a, Assumptions):
            assert a.name == b.name
        for key in a.UNITS:
            assert getattr(a, key) == getattr(b, key), key
    assert _bookkeeping(again) == _bookkeeping(system)
    assert again.assumptions.heat_redistribution == system.assumptions.heat_redistribution
    for key in ("free_eccentricity_amplitude", "free_eccentricity_angle"):
        assert getattr(again.assumptions, key) == getattr(system.assumptions, key), key
    assert derive(again).to_dict() == derive(system).to_dict()
    assert derive(again, samples=24, seed=11).to_dict() == derive(system, samples=24, seed=11).to_dict()
    # a second trip writes the same text
    assert dumps_system(again) == text


# -- the fast value mirror -----------------------------------------------------------------

@FAST
@given(period=positive(0.2, 500.0), radius=positive(0.3, 20.0), mass=st.one_of(st.none(), positive(0.1, 300.0)),
       e=st.floats(0.0, 0.9), use_update=st.booleans())
def test_values_of_follows_every_way_of_setting_a_parameter(period, radius, mass, e, use_update):
    planet = Planet(name="b", period=3.0, radius=1.0)
    if use_update:
        planet.param.update(period=period, radius=radius, mass=mass, eccentricity=e)
    else:
        planet.period, planet.radius, planet.mass, planet.eccentricity = period, radius, mass, e
    fields = ["period", "radius", "mass", "eccentricity", "inclination", "omega"]
    assert planet.values_of(fields) == [getattr(planet, f) for f in fields]
    assert System(planets=[planet]).copy().planets[0].values_of(fields) == planet.values_of(fields)
