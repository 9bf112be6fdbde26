"""Luminosity, insolation, equilibrium temperature and habitable zone against outside references."""

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from scipy import optimize

from orbitdeck.models import Planet, derive
from orbitdeck.models.physics import irradiation

# Kopparapu et al. 2014 (ApJL 787, L29), Table 1: S_eff,sun, a, b, c, d of
# S_eff = S_eff,sun + a T + b T^2 + c T^3 + d T^4, T = Teff - 5780 K, for the recent Venus, runaway
# greenhouse (1 Mearth), maximum greenhouse and early Mars limits. Read for this test from the coefficient
# listing the first author released with the paper (his habitable-zone flux code of April 2014, in a
# public copy), and the same numbers in several independent published transcriptions of Table 1;
# not retyped from memory.
KOPPARAPU_2014_TABLE_1 = {
    "recent_venus": (1.776, 2.136e-4, 2.533e-8, -1.332e-11, -3.097e-15),
    "runaway_greenhouse": (1.107, 1.332e-4, 1.580e-8, -8.308e-12, -1.931e-15),
    "maximum_greenhouse": (0.356, 6.171e-5, 1.698e-9, -3.198e-12, -5.575e-16),
    "early_mars": (0.320, 5.547e-5, 1.526e-9, -2.874e-12, -5.011e-16),
}
#: the Teff of the test: both ends of the paper's range of validity (2600-7200 K), the Sun's reference
#: 5780 K and two M/K-dwarf temperatures
HZ_TEFFS = (2600.0, 3000.0, 4000.0, 5780.0, 7200.0)


def _published_seff(limit, teff):
    """S_eff of one limit at one Teff, Kopparapu et al. 2014 eq. 4 with the Table 1 row, term by term."""
    seff_sun, a, b, c, d = KOPPARAPU_2014_TABLE_1[limit]
    t = teff - 5780.0
    return seff_sun + a * t + b * t**2 + c * t**3 + d * t**4


def _period_for(a_au, star_msun=1.0, planet_mearth=1.0):
    # Kepler III inverted with astropy units (independent of the model's code)
    a = a_au * u.au
    mass = star_msun * const.M_sun + planet_mearth * const.M_earth
    return float((2 * np.pi * np.sqrt(a**3 / (const.G * mass))).to_value(u.day))


# -- luminosity -----------------------------------------------------------------

def test_nominal_sun_has_nominal_luminosity(solar_system):
    star = derive(solar_system).to_dict()["star"]
    # IAU 2015 Resolution B3: R = 6.957e8 m and Teff = 5772 K give L = 3.828e26 W (nominal L_sun)
    assert star["luminosity_lsun"] == pytest.approx(1.0, abs=1e-4)
    watts = irradiation.luminosity_from_radius_teff(6.957e8, 5772.0)
    assert watts == pytest.approx(3.828e26, rel=1e-4)


def test_luminosity_matches_astropy_stefan_boltzmann():
    # an M dwarf, 0.2 Rsun at 3100 K, with astropy's sigma_sb and units
    reference = (4 * np.pi * (0.2 * const.R_sun) ** 2 * const.sigma_sb * (3100 * u.K) ** 4).to(u.W)
    assert irradiation.luminosity_from_radius_teff(0.2 * const.R_sun.value, 3100.0) == pytest.approx(
        reference.value, rel=1e-12)


def test_given_luminosity_is_used_instead_of_the_computed_one(make_system, row_of):
    # 4 pi R^2 sigma T^4 applies only when no luminosity is given (design brief)
    system = make_system([dict(name="b", period=365.256, radius=1.0, mass=1.0)],
                         star=dict(name="s", mass=1.0, radius=1.0, teff=5772.0, luminosity=2.0))
    doc = derive(system).to_dict()
    assert doc["star"]["luminosity_lsun"] == 2.0
    # S = L / a^2 (inverse-square law)
    assert row_of(doc["planets"], "b")["insolation_earth"] == pytest.approx(2.0, rel=1e-5)


# -- insolation -----------------------------------------------------------------

def test_earth_receives_one_earth_insolation(solar_system, row_of):
    earth = row_of(derive(solar_system).to_dict()["planets"], "earth")
    # definition of S_earth: L_sun at 1 au
    assert earth["insolation_earth"] == pytest.approx(1.0, abs=1e-4)


def test_eccentric_insolation_is_the_time_average_of_inverse_square_flux():
    e = 0.5
    # independent numerical time average: mean anomaly uniform in time (midpoint rule, spectrally
    # accurate for a periodic integrand), Kepler's equation solved with scipy's brentq
    mean_anomaly = (np.arange(4000) + 0.5) * 2 * np.pi / 4000
    E = np.array([optimize.brentq(lambda x, m=m: x - e * np.sin(x) - m, m - e, m + e, xtol=1e-14)
                  for m in mean_anomaly])
    r = 1.0 - e * np.cos(E)                      # r / a = 1 - e cos E (Murray & Dermott eq. 2.42)
    numeric = np.mean(1.0 / r**2)
    # analytic: <(a/r)^2> = (1 - e^2)^(-1/2) (Williams & Pollard 2002)
    assert numeric == pytest.approx(1 / np.sqrt(1 - e**2), rel=1e-10)
    assert irradiation.insolation(1.0, 1.0, e) == pytest.approx(numeric, rel=1e-10)
    assert irradiation.insolation(1.0, 1.0, e) / irradiation.insolation(1.0, 1.0, 0.0) == pytest.approx(
        1.1547005, rel=1e-7)   # 1/sqrt(0.75) by hand


# -- equilibrium temperature ------------------------------------------------------

def test_earth_equilibrium_temperature(solar_system, row_of):
    earth = row_of(derive(solar_system).to_dict()["planets"], "earth")
    # textbook value ~255 K for A ~ 0.3 and full redistribution (e.g. NASA Earth fact sheet
    # "black-body temperature 254 K" for A = 0.306, from memory)
    assert earth["teq_k"] == pytest.approx(254.0, abs=1.0)
    # by hand with astropy: T = [L (1 - A) / (16 pi sigma a^2)]^(1/4)
    by_hand = ((const.L_sun * (1 - 0.306) / (16 * np.pi * const.sigma_sb * const.au**2)) ** 0.25).to(u.K)
    assert earth["teq_k"] == pytest.approx(by_hand.value, rel=1e-4)


def test_teq_of_an_eccentric_orbit_follows_its_orbit_averaged_flux(make_system, row_of):
    # one convention for S and Teq (Mendez & Rivera-Valentin 2017, ApJL 837, L1): Teq is that of
    # the time-averaged flux L / (4 pi a^2 sqrt(1 - e^2)), so Teq(e) / Teq(0) = (1 - e^2)^(-1/8)
    planets = [dict(name="b", period=10.0, radius=1.0, mass=1.0)]
    t0 = row_of(derive(make_system(planets)).to_dict()["planets"], "b")["teq_k"]
    t5 = row_of(derive(make_system([dict(planets[0], eccentricity=0.5)])).to_dict()["planets"], "b")["teq_k"]
    assert t5 / t0 == pytest.approx(0.75 ** -0.125, rel=1e-12)


def test_teq_follows_a_given_luminosity(make_system, row_of):
    # a luminosity given in the file sets S and Teq alike: Teq ~ L^(1/4) (by hand)
    planets = [dict(name="b", period=10.0, radius=1.0, mass=1.0)]
    t1 = row_of(derive(make_system(planets, star=dict(name="s", mass=1.0, radius=1.0, teff=5772.0,
                                                      luminosity=1.0))).to_dict()["planets"], "b")["teq_k"]
    t2 = row_of(derive(make_system(planets, star=dict(name="s", mass=1.0, radius=1.0, teff=5772.0,
                                                      luminosity=2.0))).to_dict()["planets"], "b")["teq_k"]
    assert t2 / t1 == pytest.approx(2 ** 0.25, rel=1e-12)


def test_redistribution_factor_ratios(make_system, row_of):
    planets = [dict(name="b", period=10.0, radius=1.0, mass=1.0)]
    teq = {mode: row_of(derive(make_system(planets, heat_redistribution=mode)).to_dict()["planets"], "b")["teq_k"]
           for mode in ("full", "dayside", "none")}
    # Teq proportional to f^(1/4), f = 1/4, 1/2, 2/3 (Cowan & Agol 2011)
    assert teq["dayside"] / teq["full"] == pytest.approx(2 ** 0.25, rel=1e-12)
    assert teq["none"] / teq["full"] == pytest.approx((8 / 3) ** 0.25, rel=1e-12)


def test_albedo_enters_as_one_minus_a_to_the_quarter(make_system, row_of):
    planets = [dict(name="b", period=10.0, radius=1.0, mass=1.0)]
    t0 = row_of(derive(make_system(planets, bond_albedo=0.0)).to_dict()["planets"], "b")["teq_k"]
    t5 = row_of(derive(make_system(planets, bond_albedo=0.5)).to_dict()["planets"], "b")["teq_k"]
    assert t5 / t0 == pytest.approx(0.5 ** 0.25, rel=1e-12)   # (1 - A)^(1/4) by hand


# -- habitable zone ----------------------------------------------------------------

def test_hz_limit_names_are_the_papers_rows_in_order():
    # Kopparapu et al. 2014: four limits, from the hottest (recent Venus) to the coldest (early Mars)
    assert tuple(irradiation.HZ_LIMITS) == tuple(KOPPARAPU_2014_TABLE_1)


@pytest.mark.parametrize("teff", HZ_TEFFS)
def test_hz_fluxes_of_all_four_limits_follow_the_published_table(teff):
    # every row of Kopparapu et al. 2014 Table 1 through eq. 4 at this Teff; the polynomial is evaluated
    # in double precision, so agreement to 1e-12 leaves no room for a changed digit or sign
    expected = [_published_seff(limit, teff) for limit in KOPPARAPU_2014_TABLE_1]
    np.testing.assert_allclose(irradiation.hz_effective_flux(teff), expected, rtol=1e-12, atol=0)


def test_hz_fluxes_for_many_stars_at_once_keep_their_shape():
    # the same published values for an array of Teff, limits along the last axis
    teff = np.array([[2600.0, 3000.0], [4000.0, 7200.0]])
    flux = irradiation.hz_effective_flux(teff)
    assert flux.shape == (2, 2, 4)
    for index in np.ndindex(teff.shape):
        np.testing.assert_allclose(flux[index], [_published_seff(k, teff[index]) for k in KOPPARAPU_2014_TABLE_1],
                                   rtol=1e-12, atol=0)


def test_hz_fluxes_keep_the_papers_ordering_and_trend():
    # Kopparapu et al. 2014 Fig. 1: at every Teff recent Venus > runaway > maximum greenhouse > early Mars,
    # and every limit lies at lower flux for cooler stars (the curves fall from 7200 K to 2600 K)
    teff = np.linspace(2600.0, 7200.0, 47)
    flux = irradiation.hz_effective_flux(teff)
    assert np.all(np.diff(flux, axis=1) < 0)
    assert np.all(np.diff(flux, axis=0) > 0)


@pytest.mark.parametrize("teff", [2600.0, 3000.0, 4000.0, 7200.0])
def test_derived_hz_distances_follow_the_published_table(make_system, teff):
    # d = sqrt(L / S_eff) au (Kopparapu et al. 2013 eq. 3) with S_eff from the published table,
    # for a star whose luminosity is given (so L is exactly the file's value)
    luminosity = 0.0123
    system = make_system([dict(name="b", period=20.0, radius=1.0, mass=1.0)],
                         star=dict(name="s", mass=0.4, radius=0.4, teff=teff, luminosity=luminosity))
    doc = derive(system).to_dict()
    assert not any("2600" in w for w in doc["warnings"])
    hz = doc["star"]["hz_au"]
    for limit in KOPPARAPU_2014_TABLE_1:
        assert hz[limit] == pytest.approx(np.sqrt(luminosity / _published_seff(limit, teff)), rel=1e-12), limit


@pytest.mark.parametrize("limit", list(KOPPARAPU_2014_TABLE_1))
@pytest.mark.parametrize("teff", [2600.0, 3000.0])
def test_regions_change_at_the_published_limits_of_a_cool_star(make_system, row_of, limit, teff):
    # two planets 0.1 % inside and outside each limit's distance, sqrt(L / S_eff) with the published
    # S_eff at this Teff: the region changes exactly there (Kopparapu et al. 2013, 2014 definitions)
    luminosity = 0.002
    star = dict(name="s", mass=0.15, radius=0.18, teff=teff, luminosity=luminosity)
    d_au = np.sqrt(luminosity / _published_seff(limit, teff))
    regions = list(irradiation.HZ_REGIONS)
    hotter = regions[list(KOPPARAPU_2014_TABLE_1).index(limit)]
    colder = regions[list(KOPPARAPU_2014_TABLE_1).index(limit) + 1]
    planets = [dict(name="in", period=_period_for(d_au * 0.999, 0.15), radius=1.0, mass=1.0),
               dict(name="out", period=_period_for(d_au * 1.001, 0.15), radius=1.0, mass=1.0)]
    doc = derive(make_system(planets, star=star)).to_dict()
    assert row_of(doc["planets"], "in")["hz_region"] == hotter
    assert row_of(doc["planets"], "out")["hz_region"] == colder


def test_sun_hz_distances(make_system):
    # Sun with exactly 1 Lsun and Teff 5780 K: d = sqrt(1 / S_eff) au, ~0.75, 0.95, 1.68, 1.77 au
    # as quoted by Kopparapu et al. 2013/2014 for the Solar System
    system = make_system([dict(name="b", period=365.256, radius=1.0, mass=1.0)],
                         star=dict(name="sun", mass=1.0, radius=1.0, teff=5780.0, luminosity=1.0))
    hz = derive(system).to_dict()["star"]["hz_au"]
    assert hz["recent_venus"] == pytest.approx(0.75, abs=0.005)
    assert hz["runaway_greenhouse"] == pytest.approx(0.95, abs=0.005)
    assert hz["maximum_greenhouse"] == pytest.approx(1.68, abs=0.005)
    assert hz["early_mars"] == pytest.approx(1.77, abs=0.005)


def test_solar_system_regions(make_system, row_of, solar_system):
    # Mars: a = 1.5237 au, e = 0.0934 (NASA Mars fact sheet, from memory); S = 0.433 lies between
    # the maximum greenhouse (0.356) and runaway greenhouse (1.107) fluxes: conservative HZ
    mars = dict(name="mars", period=686.980, radius=0.532, mass=0.107, eccentricity=0.0934)
    solar_system.add_planet(Planet(**mars))
    planets = derive(solar_system).to_dict()["planets"]
    assert row_of(planets, "earth")["hz_region"] == "conservative"   # S = 1.0, inside 0.356-1.107
    assert row_of(planets, "earth")["in_conservative_hz"] is True and row_of(planets, "earth")["in_optimistic_hz"] is True
    assert row_of(planets, "venus")["in_conservative_hz"] is False and row_of(planets, "venus")["in_optimistic_hz"] is False
    assert row_of(planets, "venus")["insolation_earth"] == pytest.approx(1.91, abs=0.01)  # 1/0.7233^2
    assert row_of(planets, "venus")["hz_region"] == "too hot"        # S = 1.91 > 1.776 (recent Venus)
    assert row_of(planets, "mars")["insolation_earth"] == pytest.approx(0.4326, abs=0.001)
    assert row_of(planets, "mars")["hz_region"] == "conservative"
    assert row_of(planets, "jupiter")["hz_region"] == "too cold"     # S = 0.037 < 0.320 (early Mars)


@pytest.mark.parametrize("flux, region", [
    (1.5, "optimistic inner"),    # between runaway (1.107) and recent Venus (1.776)
    (0.34, "optimistic outer"),   # between early Mars (0.320) and maximum greenhouse (0.356)
    (0.2, "too cold"),            # below early Mars
    (2.5, "too hot"),             # above recent Venus
])
def test_region_thresholds_are_the_papers(make_system, row_of, flux, region):
    # flux thresholds: Kopparapu et al. 2014 Table 1 at Teff = 5780 K; a = 1/sqrt(S) for L = 1 Lsun
    a_au = 1.0 / np.sqrt(flux)
    system = make_system([dict(name="b", period=_period_for(a_au), radius=1.0, mass=1.0)],
                         star=dict(name="sun", mass=1.0, radius=1.0, teff=5780.0, luminosity=1.0))
    planet = row_of(derive(system).to_dict()["planets"], "b")
    assert planet["insolation_earth"] == pytest.approx(flux, rel=1e-9)
    assert planet["hz_region"] == region
    # the optimistic zone runs from recent Venus to early Mars, the conservative one from the runaway to the
    # maximum greenhouse (Kopparapu et al. 2013, 2014)
    assert planet["in_optimistic_hz"] is (region in ("optimistic inner", "optimistic outer"))
    assert planet["in_conservative_hz"] is False


@pytest.mark.parametrize("teff", [900.0, 7300.0])
def test_hz_outside_validity_range_is_withheld_with_a_warning(make_system, teff):
    # Kopparapu et al. 2014 state their fit for 2600 K <= Teff <= 7200 K
    system = make_system([dict(name="b", period=20.0, radius=1.0, mass=1.0)],
                         star=dict(name="s", mass=0.5, radius=0.5, teff=teff))
    derived = derive(system)
    doc = derived.to_dict()
    assert doc["star"]["hz_au"] is None
    assert all(p["hz_region"] is None for p in doc["planets"])
    assert any("2600" in w and "7200" in w for w in doc["warnings"])
    assert derived.hz_valid is False


@pytest.mark.parametrize("teff", [1200.0, 2200.0, 2599.0])
def test_hz_of_ultracool_dwarfs_is_extrapolated_and_flagged(make_system, teff):
    # below the fit's calibrated 2600 K (Kopparapu et al. 2014) the limits are the same polynomial,
    # extrapolated: flagged in the document and in the warnings, and ordered as at 2600 K
    system = make_system([dict(name="b", period=5.0, radius=1.0, mass=1.0)],
                         star=dict(name="s", mass=0.08, radius=0.1, teff=teff))
    doc = derive(system).to_dict()
    hz = doc["star"]["hz_au"]
    assert doc["star"]["hz_extrapolated"] is True
    assert hz["recent_venus"] < hz["runaway_greenhouse"] < hz["maximum_greenhouse"] < hz["early_mars"]
    assert doc["planets"][0]["hz_region"] is not None
    assert any("extrapolated" in w and "2600" in w for w in doc["warnings"])


def test_fraction_of_draws_in_the_habitable_zone(make_system):
    # a planet at the conservative zone's inner edge (runaway greenhouse, S = 1.107 for a Sun-like star
    # of L = 1 Lsun at Teff = 5780 K, Kopparapu et al. 2014 Table 1) with a wide luminosity error:
    # about half the draws fall inside the conservative zone, nearly all inside the optimistic one
    from orbitdeck.models import Uncertainty

    a_au = 1.0 / np.sqrt(1.107)
    system = make_system([dict(name="b", period=_period_for(a_au), radius=1.0, mass=1.0)],
                         star=dict(name="sun", mass=1.0, radius=1.0, teff=5780.0, luminosity=1.0))
    system.star.set_uncertainty("luminosity", Uncertainty.from_sigma(0.05))
    fractions = derive(system, samples=4000, seed=2).to_dict()["planets"][0]["fraction"]
    assert 0.4 < fractions["in_conservative_hz"] < 0.6
    assert fractions["in_optimistic_hz"] > 0.99


@pytest.mark.parametrize("teff", [2600.0, 7200.0])
def test_hz_at_the_edges_of_the_validity_range_is_given(make_system, teff):
    # Kopparapu et al. 2014 state their fit for 2600 K <= Teff <= 7200 K, edges included: the limits are
    # given there, at the distances of the published table (d = sqrt(L / S_eff), L = 4 pi R^2 sigma T^4
    # computed here with astropy)
    system = make_system([dict(name="b", period=20.0, radius=1.0, mass=1.0)],
                         star=dict(name="s", mass=0.5, radius=0.5, teff=teff))
    doc = derive(system).to_dict()
    luminosity = float(4 * np.pi * (0.5 * const.R_sun) ** 2 * const.sigma_sb * (teff * u.K) ** 4 / const.L_sun)
    assert doc["star"]["luminosity_lsun"] == pytest.approx(luminosity, rel=1e-12)
    for limit in KOPPARAPU_2014_TABLE_1:
        expected = np.sqrt(luminosity / _published_seff(limit, teff))
        assert doc["star"]["hz_au"][limit] == pytest.approx(expected, rel=1e-12), limit
    assert doc["planets"][0]["hz_region"] in irradiation.HZ_REGIONS
    assert not any("2600" in w for w in doc["warnings"])
    assert doc["star"]["hz_extrapolated"] is False
