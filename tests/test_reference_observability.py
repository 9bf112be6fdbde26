"""Transit geometry, radial velocity and TSM/ESM against outside references."""

import json

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from astropy.modeling.physical_models import BlackBody

from orbitdeck.models import derive
from orbitdeck.models.physics import observability

EARTH_AU_IN_RSUN = float(const.au / const.R_sun)   # a / R* for Earth, ~215.03


def _period_for(a_au, star_msun=1.0, planet_mearth=1.0):
    # Kepler III inverted with astropy units
    mass = star_msun * const.M_sun + planet_mearth * const.M_earth
    return float((2 * np.pi * np.sqrt((a_au * u.au) ** 3 / (const.G * mass))).to_value(u.day))


# -- transits of the Earth ------------------------------------------------------------

def test_earth_transit_depth_duration_probability(solar_system, row_of):
    earth = row_of(derive(solar_system).to_dict()["planets"], "earth")
    # NASA Kepler mission "Characteristics of transits" table (stored copy): Earth's transit
    # depth 0.0084 % (84 ppm), central duration 13.0 h, geometric probability 0.47 %;
    # Winn 2010 also quotes ~13 h for the Earth
    assert earth["transit_depth_ppm"] == pytest.approx(84.0, abs=0.5)
    assert earth["transit_duration_h"] == pytest.approx(13.0, abs=0.15)
    assert earth["transit_probability"] == pytest.approx(0.0047, abs=0.00005)
    # by hand (Winn 2010 eq. 9): (R_sun + R_earth) / 1 au = 0.0046505 + 0.0000426
    by_hand = float((const.R_sun + const.R_earth) / const.au)
    assert by_hand == pytest.approx(0.0046931, rel=1e-4)
    assert earth["transit_probability"] == pytest.approx(by_hand, rel=1e-5)
    assert earth["impact_parameter"] == pytest.approx(0.0, abs=1e-12)   # i = 90 deg


def test_venus_transit_figures(solar_system, row_of):
    venus = row_of(derive(solar_system).to_dict()["planets"], "venus")
    # NASA Kepler mission table: Venus 0.0076 % depth, 11.0 h duration, 0.65 % probability
    assert venus["transit_depth_ppm"] == pytest.approx(76.0, abs=0.6)
    assert venus["transit_duration_h"] == pytest.approx(11.0, abs=0.2)
    assert venus["transit_probability"] == pytest.approx(0.0065, abs=0.00005)


def test_earth_central_duration_by_hand(solar_system, row_of):
    earth = row_of(derive(solar_system).to_dict()["planets"], "earth")
    # Winn 2010 eq. 14 with b = 0, i = 90 deg: T14 = (P / pi) arcsin[(R*/a)(1 + k)]
    a = ((const.G * (const.M_sun + const.M_earth) * (365.256 * u.day) ** 2 / (4 * np.pi**2)) ** (1 / 3))
    k = float(const.R_earth / const.R_sun)
    t14 = (365.256 * u.day / np.pi * np.arcsin(float(const.R_sun / a) * (1 + k))).to_value(u.hour)
    assert earth["transit_duration_h"] == pytest.approx(t14, rel=1e-9)


def test_impact_parameter_by_hand(make_system, row_of):
    # Winn 2010 eq. 7 for a circular orbit: b = a cos i / R*; Earth at i = 89.9 deg
    system = make_system([dict(name="b", period=365.256, radius=1.0, mass=1.0, inclination=89.9)])
    b = row_of(derive(system).to_dict()["planets"], "b")["impact_parameter"]
    assert b == pytest.approx(EARTH_AU_IN_RSUN * np.cos(np.radians(89.9)), rel=1e-5)
    assert b == pytest.approx(0.3753, abs=1e-3)


def test_non_transiting_geometry_gives_no_duration(make_system, row_of):
    # Earth seen at i = 89 deg: b = 215 cos 89 deg = 3.75 > 1 + k, no transit (Winn 2010)
    system = make_system([dict(name="b", period=365.256, radius=1.0, mass=1.0, inclination=89.0)])
    doc = derive(system).to_dict()
    planet = row_of(doc["planets"], "b")
    assert planet["impact_parameter"] > 3.7
    assert planet["transit_duration_h"] is None
    json.dumps(doc, allow_nan=False)   # strict JSON: no NaN left in the document


def test_grazing_transit_has_a_duration():
    # 1 < b < 1 + k is a grazing transit, still counted (Winn 2010 section 2)
    k = 0.1
    b = 1.05
    t = observability.transit_duration_total(10.0, 20.0, 1.0, k, np.arccos(b / 20.0), b, 0.0, np.pi / 2)
    assert np.isfinite(t) and t > 0
    assert t == pytest.approx(10.0 / np.pi * np.arcsin(np.sqrt((1 + k) ** 2 - b**2) / 20.0 / np.sin(np.arccos(b / 20.0))))


@pytest.mark.parametrize("omega_deg", [90.0, 270.0, 30.0])
def test_eccentric_duration_scales_as_winn_eq_16(make_system, row_of, omega_deg):
    # Winn 2010 eq. 16: T14 multiplied by sqrt(1 - e^2) / (1 + e sin omega); i = 90 deg so b = 0
    e = 0.3
    base = dict(name="b", period=50.0, radius=2.0, mass=5.0)
    circular = row_of(derive(make_system([base])).to_dict()["planets"], "b")
    eccentric = row_of(derive(make_system([dict(base, eccentricity=e, omega=omega_deg)])).to_dict()["planets"], "b")
    factor = np.sqrt(1 - e**2) / (1 + e * np.sin(np.radians(omega_deg)))
    assert eccentric["transit_duration_h"] / circular["transit_duration_h"] == pytest.approx(factor, rel=1e-12)
    # Winn 2010 eq. 9: transit probability multiplied by (1 + e sin omega) / (1 - e^2)
    assert eccentric["transit_probability"] / circular["transit_probability"] == pytest.approx(
        (1 + e * np.sin(np.radians(omega_deg))) / (1 - e**2), rel=1e-12)


def test_eccentric_impact_parameter_by_hand():
    # Winn 2010 eq. 7: b = (a cos i / R*) (1 - e^2) / (1 + e sin omega)
    b = observability.impact_parameter(30.0, np.radians(88.0), 1.0, 0.2, np.radians(60.0))
    assert b == pytest.approx(30.0 * np.cos(np.radians(88.0)) * 0.96 / (1 + 0.2 * np.sin(np.radians(60.0))))


# -- radial velocity ------------------------------------------------------------------

def test_jupiter_and_earth_rv_on_the_sun(solar_system, row_of):
    planets = derive(solar_system).to_dict()["planets"]
    # textbook values (e.g. Lovis & Fischer 2010, Table 1, from memory): Jupiter induces
    # ~12.5 m/s on the Sun, Earth ~0.09 m/s
    assert row_of(planets, "jupiter")["rv_semi_amplitude_ms"] == pytest.approx(12.5, abs=0.1)
    assert row_of(planets, "earth")["rv_semi_amplitude_ms"] == pytest.approx(0.0895, abs=0.0005)


@pytest.mark.parametrize("a_au, expected", [(1.0, 28.4), (5.0, 12.7)])
def test_jupiter_mass_rv_at_1_and_5_au(make_system, row_of, a_au, expected):
    # Lovis & Fischer 2010 Table 1 (from memory): a Jupiter mass at 1 au gives 28.4 m/s, at 5 au 12.7 m/s
    mj = float(const.M_jup / const.M_earth)
    system = make_system([dict(name="b", period=_period_for(a_au, planet_mearth=mj), radius=11.2, mass=mj)])
    assert row_of(derive(system).to_dict()["planets"], "b")["rv_semi_amplitude_ms"] == pytest.approx(expected, abs=0.05)


def test_rv_formula_with_astropy_units():
    # the two-body K with inclination and eccentricity, written with astropy quantities
    period, mp, mstar, i, e = 12.3 * u.day, 7.0 * const.M_earth, 0.45 * const.M_sun, np.radians(60.0), 0.2
    reference = ((2 * np.pi * const.G / period) ** (1 / 3) * mp * np.sin(i) / (mstar + mp) ** (2 / 3)
                 / np.sqrt(1 - e**2)).to_value(u.m / u.s)
    value = observability.rv_semi_amplitude(period.to_value(u.s), mp.to_value(u.kg), mstar.to_value(u.kg), i, e)
    assert value == pytest.approx(reference, rel=1e-12)


# -- TSM and ESM (Kempton et al. 2018) ---------------------------------------------------

#: Kempton et al. 2018 (PASP 130, 114401) Table 1: TSM scale factors by radius bin, Rp < 1.5: 0.190;
#: 1.5 < Rp < 2.75: 1.26; 2.75 < Rp < 4.0: 1.28; 4.0 < Rp < 10 Rearth: 1.15 (checked for this test
#: against several independent published transcriptions of the table, which agree on every digit)
KEMPTON_BINS = ((0.0, 1.5, 0.190), (1.5, 2.75, 1.26), (2.75, 4.0, 1.28), (4.0, 10.0, 1.15))
#: a hair either side of an edge (relative), far below any radius precision, far above rounding
EDGE_STEP = 1e-6


@pytest.mark.parametrize("low, high, factor", KEMPTON_BINS)
def test_tsm_scale_factor_inside_every_bin(low, high, factor):
    # the middle and both ends (a hair inside) of each bin of Kempton et al. 2018 Table 1
    radii = [max(low, 0.3) * (1 + EDGE_STEP), 0.5 * (low + high), high * (1 - EDGE_STEP)]
    np.testing.assert_array_equal(observability.tsm_scale_factor(radii), [factor] * 3)


@pytest.mark.parametrize("edge", [1.5, 2.75, 4.0])
def test_tsm_scale_factor_changes_exactly_at_each_published_edge(edge):
    # both sides of each inner edge of Kempton et al. 2018 Table 1: a moved edge puts one side in the
    # neighbouring bin
    below = next(f for lo, hi, f in KEMPTON_BINS if hi == edge)
    above = next(f for lo, hi, f in KEMPTON_BINS if lo == edge)
    got = observability.tsm_scale_factor([edge * (1 - EDGE_STEP), edge * (1 + EDGE_STEP)])
    np.testing.assert_array_equal(got, [below, above])


def test_tsm_is_defined_below_ten_earth_radii_only():
    # Kempton et al. 2018 define the TSM for Rp < 10 Rearth: the last bin ends there
    factors = observability.tsm_scale_factor([10.0 * (1 - EDGE_STEP), 10.0 * (1 + EDGE_STEP), 25.0])
    assert factors[0] == 1.15 and np.isnan(factors[1]) and np.isnan(factors[2])


@pytest.mark.parametrize("edge", [1.5, 2.75, 4.0, 10.0])
def test_tsm_of_planets_either_side_of_each_edge(make_system, row_of, edge):
    # the whole metric (Kempton et al. 2018 eq. 1) of two planets a hair either side of an edge, by hand:
    # TSM = scale Rp^3 Teq / (Mp R*^2) 10^(-mJ/5), Teq = Teff sqrt(R*/a) (1/4)^(1/4) computed with astropy
    star = dict(name="s", mass=0.3, radius=0.3, teff=3400.0, j_mag=9.0)
    radii = {"below": edge * (1 - EDGE_STEP), "above": edge * (1 + EDGE_STEP)}
    system = make_system([dict(name=k, period=8.0 + i, radius=r, mass=5.0) for i, (k, r) in enumerate(radii.items())],
                         star=star)
    planets = derive(system).to_dict()["planets"]
    for i, (name, radius) in enumerate(radii.items()):
        factor = [f for lo, hi, f in KEMPTON_BINS if lo < radius < hi]
        if not factor:   # beyond 10 Rearth: no TSM
            assert row_of(planets, name)["tsm"] is None
            continue
        a = (const.G * (0.3 * const.M_sun + 5.0 * const.M_earth) * ((8.0 + i) * u.day) ** 2 / (4 * np.pi**2)) ** (1 / 3)
        teq = 3400.0 * np.sqrt(float(0.3 * const.R_sun / a)) * 0.25**0.25
        expected = factor[0] * radius**3 * teq / (5.0 * 0.3**2) * 10 ** (-9.0 / 5)
        assert row_of(planets, name)["tsm"] == pytest.approx(expected, rel=1e-9), name


def test_tsm_undefined_above_ten_earth_radii(make_system, row_of):
    star = dict(name="s", mass=0.8, radius=0.8, teff=5000.0, j_mag=9.0, k_mag=8.5)
    doc = derive(make_system([dict(name="b", period=3.0, radius=12.0, mass=200.0)], star=star)).to_dict()
    assert np.isnan(observability.tsm_scale_factor(12.0))
    assert row_of(doc["planets"], "b")["tsm"] is None
    assert any("TSM" in w for w in doc["warnings"])


def _made_up_planet(make_system, **star_extra):
    star = dict(name="s", mass=0.3, radius=0.3, teff=3400.0, **star_extra)
    return make_system([dict(name="b", period=8.0, radius=2.0, mass=5.0)], star=star)


def _kempton_teq():
    # Kempton et al. 2018: Teq for zero albedo and full redistribution, Teff sqrt(R*/a) (1/4)^(1/4)
    a = (const.G * (0.3 * const.M_sun + 5.0 * const.M_earth) * (8.0 * u.day) ** 2 / (4 * np.pi**2)) ** (1 / 3)
    return 3400.0 * np.sqrt(float(0.3 * const.R_sun / a)) * 0.25**0.25


def test_tsm_by_hand(make_system, row_of):
    doc = derive(_made_up_planet(make_system, j_mag=9.0)).to_dict()
    # Kempton et al. 2018 eq. 1: TSM = scale Rp^3 Teq / (Mp R*^2) 10^(-mJ/5), scale 1.26 for Rp = 2
    by_hand = 1.26 * 2.0**3 * _kempton_teq() / (5.0 * 0.3**2) * 10 ** (-9.0 / 5)
    assert row_of(doc["planets"], "b")["tsm"] == pytest.approx(by_hand, rel=1e-9)


def test_esm_by_hand_with_astropy_blackbody(make_system, row_of):
    doc = derive(_made_up_planet(make_system, k_mag=8.2)).to_dict()
    # Kempton et al. 2018 eq. 4: ESM = 4.29e6 B(7.5 um, 1.10 Teq) / B(7.5 um, Teff) (Rp/R*)^2 10^(-mK/5);
    # the Planck ratio from astropy's BlackBody model (independent of the model's planck())
    wavelength = 7.5 * u.um
    ratio = float(BlackBody(temperature=1.10 * _kempton_teq() * u.K)(wavelength)
                  / BlackBody(temperature=3400.0 * u.K)(wavelength))
    rp_over_rs = float(2.0 * const.R_earth / (0.3 * const.R_sun))
    by_hand = 4.29e6 * ratio * rp_over_rs**2 * 10 ** (-8.2 / 5)
    assert row_of(doc["planets"], "b")["esm"] == pytest.approx(by_hand, rel=1e-9)


def test_planck_matches_astropy_blackbody_in_wavelength_units():
    # B_lambda in W m^-3 sr^-1, astropy BlackBody with scale in those units
    bb = BlackBody(temperature=1500 * u.K, scale=1.0 * u.W / (u.m**3 * u.sr))
    assert observability.planck(2.0e-6, 1500.0) == pytest.approx(float(bb(2.0 * u.um).to_value(u.W / (u.m**3 * u.sr))), rel=1e-10)


def test_metrics_are_null_without_magnitudes(make_system, row_of):
    planet = row_of(derive(_made_up_planet(make_system)).to_dict()["planets"], "b")
    assert planet["tsm"] is None and planet["esm"] is None
