"""Atmospheres against outside references: scale heights, black bodies, the cosmic shoreline of the
Solar System, energy-limited escape and the runaway-greenhouse limits of Kopparapu et al. 2014."""

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from astropy.modeling.physical_models import BlackBody

from orbitdeck.models import derive
from orbitdeck.models.physics import atmospheres, irradiation, solar_system

# -- scale height and transmission signal ------------------------------------------------------------

def test_earth_scale_height():
    # Earth: surface temperature 288 K, dry air mu = 28.97 u, g = 9.81 m/s^2; NASA Earth fact sheet:
    # scale height 8.5 km (handbook, from memory)
    h = atmospheres.scale_height(288.0, 28.97, 9.81)
    assert h / 1000.0 == pytest.approx(8.5, rel=0.02)


def test_scale_height_and_transmission_signal_with_astropy_units():
    # independent computation with astropy constants and units: a 2 Rearth planet, 500 K, mu 2.3,
    # g 12 m/s^2, in front of a 0.3 Rsun star
    h = (const.k_B * 500 * u.K / (2.3 * const.u * 12 * u.m / u.s**2)).to(u.m)
    assert atmospheres.scale_height(500.0, 2.3, 12.0) == pytest.approx(h.value, rel=1e-12)
    signal = (2 * h * 2 * const.R_earth / (0.3 * const.R_sun) ** 2).to(u.dimensionless_unscaled)
    got = atmospheres.transmission_signal(h.value, 2 * const.R_earth.value, 0.3 * const.R_sun.value)
    assert got == pytest.approx(signal.value, rel=1e-12)


def test_transits_needed():
    # by hand: a 10 ppm feature against 30 ppm per transit at 3 sigma needs (3 x 30 / 10)^2 = 81 transits
    assert atmospheres.transits_needed(10.0, 30.0) == 81.0
    assert atmospheres.transits_needed(2 * 10.0, 30.0) == np.ceil((3 * 30 / 20) ** 2)  # two scale heights: 21
    assert atmospheres.transits_needed(100.0, 10.0) == 1.0
    assert atmospheres.transits_needed(10.0, 30.0, significance=5.0) == 225.0


# -- eclipse depth ---------------------------------------------------------------------------------

@pytest.mark.parametrize("wavelength_um, planet_t, star_t", [(15.0, 600.0, 3000.0), (4.5, 1200.0, 5772.0),
                                                             (1.0, 300.0, 2600.0)])
def test_blackbody_ratio_matches_astropy(wavelength_um, planet_t, star_t):
    wavelength = wavelength_um * u.um
    expected = (BlackBody(planet_t * u.K)(wavelength) / BlackBody(star_t * u.K)(wavelength)).decompose().value
    ratio = 0.05
    got = atmospheres.eclipse_depth(ratio, wavelength_um * 1e-6, planet_t, star_t)
    assert got == pytest.approx(ratio**2 * expected, rel=1e-9)


def test_planck_radiance_matches_astropy():
    # astropy's BlackBody gives B_nu per steradian; B_lambda = B_nu c / lambda^2
    for wavelength_um, temperature in [(15.0, 600.0), (0.5, 5772.0)]:
        wavelength = wavelength_um * u.um
        b_nu = BlackBody(temperature * u.K)(wavelength) * u.sr
        expected = (b_nu * const.c / wavelength**2).to(u.W / u.m**2 / u.m).value
        assert atmospheres.planck_radiance(wavelength.to_value(u.m), temperature) == pytest.approx(expected, rel=1e-9)


def test_bare_rock_dayside_is_the_no_redistribution_equilibrium_temperature():
    # Cowan & Agol 2011 eq. 4 with no recirculation: T_day = (2/3)^(1/4) T0 (1 - A)^(1/4), T0 = Teff sqrt(R*/a);
    # the same as Teq with f = 2/3 (Koll et al. 2019 bare rock)
    day = atmospheres.dayside_temperature_bare_rock(3300.0, 0.3 * const.R_sun.value, 0.02 * const.au.value, 0.1)
    t0 = 3300.0 * np.sqrt(0.3 * const.R_sun.value / (0.02 * const.au.value))
    assert day == pytest.approx((2 / 3) ** 0.25 * t0 * 0.9 ** 0.25, rel=1e-12)
    # the same as Teq with f = 2/3 of the flux L / a^2, L = 4 pi R^2 sigma Teff^4 (astropy constants)
    luminosity = (4 * np.pi * (0.3 * const.R_sun) ** 2 * const.sigma_sb * (3300.0 * u.K) ** 4 / const.L_sun).decompose()
    assert day == pytest.approx(irradiation.equilibrium_temperature(luminosity.value / 0.02**2, 0.1, 2 / 3),
                                rel=1e-12)


def test_eclipse_depth_through_derive_uses_the_assumed_wavelength(make_system):
    system = make_system([dict(name="b", period=1.5, radius=1.2, mass=1.8)],
                         star=dict(name="m", mass=0.2, radius=0.22, teff=3100.0))
    first = derive(system).planets["eclipse_depth_ppm"][0]
    system.assumptions.eclipse_wavelength_um = 5.0
    second = derive(system).planets["eclipse_depth_ppm"][0]
    assert second < first   # a ~700 K rock against a 3100 K star is relatively brighter at longer wavelengths


# -- the cosmic shoreline ---------------------------------------------------------------------------

def test_solar_system_bodies_fall_on_their_sides_of_the_shoreline():
    # Zahnle & Catling 2017 Fig. 1: Venus, Earth, Titan, Triton, Pluto and the giants keep atmospheres,
    # Mercury, the Moon, Io, Europa and Callisto do not; Mars (the anchor) and Ganymede lie on the line
    for body in solar_system.BODIES:
        if body.name in ("Mars", "Ganymede"):
            continue
        ratio = body.insolation_earth / atmospheres.shoreline_insolation(body.escape_speed_kms)
        assert (ratio < 1.0) == body.has_atmosphere, body.name
    mars = solar_system.body("Mars")
    assert atmospheres.shoreline_insolation(mars.escape_speed_kms) == pytest.approx(mars.insolation_earth)
    # NASA Mars fact sheet (from memory): escape speed 5.03 km/s
    assert mars.escape_speed_kms == pytest.approx(5.03, abs=0.01)


def test_earth_reference_point_uses_astropy():
    earth = solar_system.body("Earth")
    assert earth.mass_kg == const.M_earth.value and earth.radius_m == const.R_earth.value
    # NASA Earth fact sheet: escape speed 11.19 km/s
    assert earth.escape_speed_kms == pytest.approx(11.19, abs=0.015)


# -- energy-limited escape --------------------------------------------------------------------------

def test_roche_lobe_factor():
    # Erkaev et al. 2007 eq. 17: K = 1 - 3/(2 xi) + 1/(2 xi^3); K(1) = 0 (the planet fills its Roche lobe),
    # K(2) = 1 - 0.75 + 0.0625 = 0.3125 by hand, K -> 1 far inside the lobe
    assert atmospheres.roche_lobe_factor(1.0) == pytest.approx(0.0, abs=1e-15)
    assert atmospheres.roche_lobe_factor(2.0) == pytest.approx(0.3125)
    assert atmospheres.roche_lobe_factor(1e6) == pytest.approx(1.0, abs=2e-6)


def test_roche_lobe_radius_of_earth_is_its_hill_radius():
    # Earth's Hill sphere reaches about 1.5 million km (handbook value, from memory)
    radius = atmospheres.roche_lobe_radius(const.au.value, const.M_earth.value, const.M_sun.value)
    assert radius / 1e9 == pytest.approx(1.5, rel=0.02)


def test_energy_limited_rate_with_astropy_units():
    # Watson et al. 1981 / Erkaev et al. 2007: dM/dt = eps pi R^3 F / (G M K), computed independently with units
    eps, flux, radius, mass, k = 0.1, 5.0 * u.W / u.m**2, 2.0 * const.R_earth, 5.0 * const.M_earth, 0.8
    expected = (eps * np.pi * radius**3 * flux / (const.G * mass * k)).to(u.kg / u.s).value
    got = atmospheres.energy_limited_escape_rate(eps, flux.value, radius.value, mass.value, k)
    assert got == pytest.approx(expected, rel=1e-12)
    assert np.isnan(atmospheres.energy_limited_escape_rate(eps, 5.0, radius.value, mass.value, -0.1))


def test_escape_rate_follows_the_stated_xuv_assumption(make_system):
    system = make_system([dict(name="b", period=2.0, radius=1.5, mass=3.0)])
    base = derive(system).planets["escape_rate_kg_s"][0]
    system.assumptions.xuv_flux *= 10.0
    assert derive(system).planets["escape_rate_kg_s"][0] == pytest.approx(10 * base, rel=1e-12)
    system.assumptions.escape_efficiency *= 0.5
    assert derive(system).planets["escape_rate_kg_s"][0] == pytest.approx(5 * base, rel=1e-12)


def test_xuv_flux_is_a_fraction_of_the_bolometric_insolation():
    # Earth's bolometric insolation from astropy: L_sun / (4 pi au^2) ~ 1361 W/m^2 (IAU 2015 nominal)
    solar = (const.L_sun / (4 * np.pi * const.au**2)).to(u.W / u.m**2).value
    assert atmospheres.xuv_flux_at_planet(1.0, 1e-4) == pytest.approx(1e-4 * solar)
    assert solar == pytest.approx(1361.0, abs=1.0)


# -- runaway greenhouse by planet mass: Kopparapu et al. 2014 -----------------------------------------

# Kopparapu et al. 2014 (ApJL 787, L29) Table 1, runaway greenhouse: S_eff,sun, a, b, c, d for 0.1, 1, 5 Mearth
KOPPARAPU2014_RUNAWAY = {
    0.1: (0.99, 1.209e-4, 1.404e-8, -7.418e-12, -1.713e-15),
    1.0: (1.107, 1.332e-4, 1.58e-8, -8.308e-12, -1.931e-15),
    5.0: (1.188, 1.433e-4, 1.707e-8, -8.968e-12, -2.084e-15),
}


@pytest.mark.parametrize("mass", [0.1, 1.0, 5.0])
@pytest.mark.parametrize("teff", [5780.0, 3300.0, 4500.0, 7000.0])
def test_runaway_flux_at_the_published_masses(mass, teff):
    s, a, b, c, d = KOPPARAPU2014_RUNAWAY[mass]
    t = teff - 5780.0
    expected = s + a * t + b * t**2 + c * t**3 + d * t**4
    assert irradiation.runaway_greenhouse_flux(teff, mass) == pytest.approx(expected, rel=1e-12)


def test_runaway_flux_for_a_sun_like_star():
    # Kopparapu et al. 2014: runaway greenhouse at S_eff = 0.99, 1.107, 1.188 for 0.1, 1, 5 Mearth (Sun)
    assert irradiation.runaway_greenhouse_flux(5780.0, [0.1, 1.0, 5.0]) == pytest.approx([0.99, 1.107, 1.188])


def test_runaway_flux_between_and_beyond_the_published_masses(make_system, row_of):
    # linear in log10 mass: halfway between 1 and 5 Mearth in log is sqrt(5) Mearth
    half = irradiation.runaway_greenhouse_flux(5780.0, np.sqrt(5.0))
    assert half == pytest.approx((1.107 + 1.188) / 2)
    assert irradiation.runaway_greenhouse_flux(5780.0, 10 ** -0.5) == pytest.approx((0.99 + 1.107) / 2)
    system = make_system([dict(name="b", period=20.0, radius=0.3, mass=0.01),
                          dict(name="c", period=40.0, radius=1.0, mass=1.0)],
                         star=dict(name="s", mass=1.0, radius=1.0, teff=5780.0))
    doc = derive(system).to_dict()
    b, c = row_of(doc["planets"], "b"), row_of(doc["planets"], "c")
    assert b["runaway_greenhouse_seff"] == pytest.approx(0.99) and b["runaway_greenhouse_mass_clamped"] is True
    assert c["runaway_greenhouse_seff"] == pytest.approx(1.107) and c["runaway_greenhouse_mass_clamped"] is False
    # outside 2600-7200 K the polynomial is not valid: null
    hot = make_system([dict(name="b", period=20.0, radius=1.0, mass=1.0)],
                      star=dict(name="s", mass=2.0, radius=2.0, teff=9000.0))
    assert derive(hot).to_dict()["planets"][0]["runaway_greenhouse_seff"] is None


def test_document_carries_the_atmosphere_keys_with_intervals(make_system):
    from orbitdeck.models import Uncertainty

    system = make_system([dict(name="b", period=3.0, radius=1.1, mass=1.4)],
                         star=dict(name="m", mass=0.3, radius=0.3, teff=3300.0))
    system.star.set_uncertainty("teff", Uncertainty.from_sigma(50.0))
    doc = derive(system, samples=300, seed=1).to_dict()
    row = doc["planets"][0]
    for key in ("scale_height_km", "transmission_ppm", "eclipse_depth_ppm", "escape_rate_kg_s",
                "runaway_greenhouse_seff", "shoreline_flux_ratio"):
        assert row[key] is not None and key in row["interval"], key
        low, high = row["interval"][key]
        assert low < high, key


def test_runaway_mass_clamp_flags_masses_outside_the_published_rows_only():
    # Kopparapu et al. 2014 Table 1 gives runaway-greenhouse rows for 0.1, 1 and 5 Mearth only: masses between
    # them are interpolated (not clamped), masses outside take the nearest row and are flagged
    clamped = irradiation.runaway_greenhouse_mass_clamped([0.05, 0.1, 0.5, 1.0, 3.0, 5.0, 6.0])
    assert clamped.tolist() == [True, False, False, False, False, False, True]
    assert irradiation.runaway_greenhouse_flux(5780.0, 6.0) == pytest.approx(1.188)   # the 5 Mearth row


# -- the atmosphere quantities of a derivation, computed independently with astropy ------------------

def test_atmosphere_quantities_of_a_derivation_with_astropy_units(make_system, row_of):
    # an invented temperate sub-Neptune around an M dwarf; every number rebuilt here with astropy quantities:
    # Kepler's third law, L = 4 pi R*^2 sigma Teff^4, Teq = [f (1 - A) L / (4 pi a^2 sigma)]^(1/4) (f = 1/4),
    # g = G M / R^2, H = k T / (mu m_u g), 2 H Rp / R*^2 (Kempton et al. 2018), the bare-rock dayside
    # Teff sqrt(R*/a) [(1 - A) 2/3]^(1/4) (Cowan & Agol 2011) and its eclipse depth with astropy's BlackBody,
    # the energy-limited escape eps pi Rp^3 F_XUV / (G Mp K) with K(xi) of Erkaev et al. 2007 eq. 17
    star = dict(name="m", mass=0.35, radius=0.34, teff=3350.0)
    system = make_system([dict(name="b", period=7.5, radius=2.3, mass=6.1)], star=star)
    assumptions = system.assumptions
    row = row_of(derive(system).to_dict()["planets"], "b")
    mstar, rstar, teff = 0.35 * const.M_sun, 0.34 * const.R_sun, 3350.0 * u.K
    mp, rp = 6.1 * const.M_earth, 2.3 * const.R_earth
    a = ((const.G * (mstar + mp) * (7.5 * u.day) ** 2 / (4 * np.pi**2)) ** (1 / 3)).to(u.m)
    luminosity = 4 * np.pi * rstar**2 * const.sigma_sb * teff**4
    flux = (luminosity / (4 * np.pi * a**2)).to(u.W / u.m**2)
    teq = ((0.25 * (1 - assumptions.bond_albedo) * flux / const.sigma_sb) ** 0.25).to(u.K)
    gravity = const.G * mp / rp**2
    height = (const.k_B * teq / (assumptions.mean_molecular_weight * const.u * gravity)).to(u.km)
    assert row["scale_height_km"] == pytest.approx(height.value, rel=1e-9)
    signal = (2 * height * rp / rstar**2).to(u.dimensionless_unscaled).value * 1e6
    assert row["transmission_ppm"] == pytest.approx(signal, rel=1e-9)
    day = (teff * np.sqrt(float(rstar / a)) * ((1 - assumptions.bond_albedo) * 2 / 3) ** 0.25).to(u.K)
    wavelength = assumptions.eclipse_wavelength_um * u.um
    depth = float((rp / rstar) ** 2 * BlackBody(day)(wavelength) / BlackBody(teff)(wavelength)) * 1e6
    assert row["eclipse_depth_ppm"] == pytest.approx(depth, rel=1e-9)
    xi = float(a * (mp / (3 * mstar)) ** (1 / 3) / rp)
    k = 1 - 3 / (2 * xi) + 1 / (2 * xi**3)
    rate = (assumptions.escape_efficiency * np.pi * rp**3 * assumptions.xuv_flux * flux / (const.G * mp * k))
    assert row["escape_rate_kg_s"] == pytest.approx(rate.to_value(u.kg / u.s), rel=1e-9)


def test_shoreline_ratio_of_the_earth(solar_system, row_of):
    # the shoreline I ~ v_esc^4 drawn through Mars: NASA Mars fact sheet (from memory) escape speed 5.03 km/s at
    # 1.52366 au, so v0 = 5.03 km/s / (1 / 1.52366^2)^(1/4); Earth (S = 1, v_esc = 11.19 km/s, the fact sheet's)
    # lies below it by (v0 / 11.19)^4 = 0.095
    v0 = 5.03 * 1.52366**0.5
    earth = row_of(derive(solar_system).to_dict()["planets"], "earth")
    assert earth["shoreline_flux_ratio"] == pytest.approx((v0 / 11.19) ** 4, rel=0.01)


def test_reference_bodies_insolation_and_the_planets_only_columns():
    # NASA Mars fact sheet (from memory): solar irradiance 586.2 W/m^2 against Earth's 1361 W/m^2, i.e. 0.431
    assert solar_system.body("Mars").insolation_earth == pytest.approx(586.2 / 1361.0, rel=2e-3)
    # Jupiter's system at 5.2044 au receives 1/27 of Earth's light (fact sheet: 50.26 W/m^2, from memory)
    assert solar_system.body("Io").insolation_earth == pytest.approx(50.26 / 1361.0, rel=2e-3)
    # in Earth units for the mass-radius diagram: Jupiter from astropy's IAU 2015 nominal values (317.8 Mearth,
    # 11.21 equatorial Rearth), Mars from its fact sheet's ratios to Earth (from memory: 0.107 in mass, 0.532 in
    # mean radius)
    jupiter, mars = solar_system.body("Jupiter"), solar_system.body("Mars")
    assert jupiter.mass_mearth == pytest.approx(float(const.M_jup / const.M_earth), rel=1e-12)
    assert jupiter.radius_rearth == pytest.approx(float(const.R_jup / const.R_earth), rel=1e-12)
    assert mars.mass_mearth == pytest.approx(0.107, rel=0.01) and mars.radius_rearth == pytest.approx(0.532, rel=0.01)
    # the eight planets (IAU 2006 definition) alone, or every reference body
    planets = solar_system.reference_points(planets_only=True)["name"]
    assert planets == ["Mercury", "Venus", "Earth", "Mars", "Jupiter", "Saturn", "Uranus", "Neptune"]
    assert len(solar_system.reference_points()["name"]) == len(solar_system.BODIES)
