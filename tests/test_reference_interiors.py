"""Interiors and tides against outside references: Zeng et al. 2016, Lopez & Fortney 2014, Io's heat,
and the intrinsic scatter of the Chen & Kipping 2017 mass estimates."""

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest

from orbitdeck.models import Planet, Uncertainty, derive, loads_system
from orbitdeck.models.physics import interiors, tides
from orbitdeck.models.files.system_file import SystemFileError

# -- core mass fraction: Zeng, Sasselov & Jacobsen 2016 ---------------------------------------------

def test_earth_core_mass_fraction_is_about_one_third():
    # Zeng et al. 2016 formula R = (1.07 - 0.21 CMF) M^(1/3.7) at R = M = 1 gives CMF = 0.07 / 0.21 = 1/3;
    # Earth's core holds about 32.5 % of its mass (handbook value, from memory)
    assert interiors.core_mass_fraction(1.0, 1.0) == pytest.approx(1.0 / 3.0, abs=0.01)
    assert interiors.core_mass_fraction(1.0, 1.0) == pytest.approx(0.325, abs=0.02)


@pytest.mark.parametrize("mass", [1.0, 2.0, 4.0, 8.0])
@pytest.mark.parametrize("curve, iron", [("iron_20", 0.20), ("iron_25", 0.25), ("iron_30", 0.30)])
def test_formula_recovers_the_iron_fraction_of_the_tabulated_curves(mass, curve, iron):
    # Zeng et al. 2016 Table 2 (machine-readable, radii to 3 digits): planets of 20, 25 and 30 % iron;
    # the formula is their fit to those models over 1-8 Mearth (abstract), so it gives the fraction back
    radius = float(interiors.ZENG2016_RADIUS[curve][list(interiors.ZENG2016_MASS).index(mass)])
    assert interiors.core_mass_fraction(mass, radius) == pytest.approx(iron, abs=0.05)


def test_core_mass_fraction_is_null_and_flagged_outside_the_stated_range(make_system, row_of):
    # Zeng et al. 2016 (abstract): applicable for 1-8 Mearth and CMF 0-0.4
    assert np.isnan(interiors.core_mass_fraction(0.5, 0.8))      # too light
    assert np.isnan(interiors.core_mass_fraction(12.0, 1.9))     # too heavy
    assert np.isnan(interiors.core_mass_fraction(4.0, 1.2))      # CMF ~ 0.9, an iron-rich planet
    doc = derive(make_system([dict(name="b", period=3.0, radius=1.0, mass=1.0),
                              dict(name="c", period=5.0, radius=0.8, mass=0.5)])).to_dict()
    b, c = row_of(doc["planets"], "b"), row_of(doc["planets"], "c")
    assert b["core_mass_fraction_applies"] is True and b["core_mass_fraction"] == pytest.approx(1 / 3, abs=0.01)
    assert c["core_mass_fraction_applies"] is False and c["core_mass_fraction"] is None


def _zeng_radius(mass, cmf):
    # Zeng, Sasselov & Jacobsen 2016 (abstract): R = (1.07 - 0.21 CMF) M^(1/3.7), Earth units
    return (1.07 - 0.21 * cmf) * mass ** (1 / 3.7)


@pytest.mark.parametrize("mass, cmf, applies", [
    (1.0, 0.3, True), (8.0, 0.3, True),      # the stated mass range 1-8 Mearth, edges included
    (0.9, 0.3, False), (10.0, 0.3, False),   # just outside it
    (4.0, 0.0, True), (4.0, 0.4, True),      # the stated CMF range 0-0.4, edges included
    (4.0, 0.45, False), (4.0, -0.05, False),
])
def test_core_mass_fraction_range_is_the_papers(mass, cmf, applies):
    # Zeng et al. 2016 (abstract): the formula applies for 1-8 Mearth and a core mass fraction of 0-0.4;
    # the edge cases sit a hair inside (1e-9 in CMF) so rounding cannot decide them
    inward = 1e-9 * np.sign(0.2 - cmf)
    radius = _zeng_radius(mass, cmf + inward)
    assert bool(interiors.core_mass_fraction_applies(mass, radius)) is applies
    value = interiors.core_mass_fraction(mass, radius)
    if applies:
        assert value == pytest.approx(cmf, abs=1e-8)
    else:
        assert np.isnan(value)


# -- water mass fraction: Zeng et al. 2016 Table 2 water curves -------------------------------------

@pytest.mark.parametrize("mass, radius, water", [
    (4.0, 1.85, 0.5),    # Table 2: a 4 Mearth planet of 50 % water has R = 1.85
    (1.0, 1.182, 0.25),  # 25 % water at 1 Mearth: R = 1.182
    (16.0, 2.9, 1.0),    # 100 % water at 16 Mearth: R = 2.90
])
def test_water_fraction_on_the_tabulated_curves(mass, radius, water):
    assert interiors.water_mass_fraction(mass, radius) == pytest.approx(water, abs=1e-9)


def test_water_fraction_between_curves_and_where_it_does_not_apply():
    # halfway in radius between the 25 % (1.74) and 50 % (1.85) curves at 4 Mearth (Table 2)
    assert interiors.water_mass_fraction(4.0, (1.74 + 1.85) / 2) == pytest.approx(0.375)
    assert np.isnan(interiors.water_mass_fraction(4.0, 1.5))     # denser than pure rock (R = 1.57)
    assert np.isnan(interiors.water_mass_fraction(4.0, 2.3))     # larger than pure water (R = 2.05): gas
    assert np.isnan(interiors.water_mass_fraction(64.0, 4.0))    # beyond the table's 32 Mearth
    fractions = interiors.water_mass_fraction(4.0, np.linspace(1.58, 2.05, 30))
    assert np.all(np.diff(fractions) > 0)


def test_composition_curves_pass_through_the_table_and_earth():
    curves = interiors.composition_curves()
    mass, radius = curves["pure iron"]
    assert np.interp(np.log10(8.0), np.log10(mass), radius) == pytest.approx(1.38, rel=5e-3)  # Table 2
    mass, radius = curves["Earth-like (30 % iron)"]
    # Earth (1 Mearth, 1 Rearth) lies within 1 % of the 30 %-iron curve
    assert np.interp(0.0, np.log10(mass), radius) == pytest.approx(1.0, abs=0.01)


# -- H/He envelope: Lopez & Fortney 2014 ---------------------------------------------------------------

def _lopez_fortney_radius(core_mass, fraction, insolation, age_gyr=5.0):
    # Lopez & Fortney 2014 (ApJ 792, 1): R = Mcore^0.25 + 2.06 M^-0.21 (f/5%)^0.59 S^0.044 (age/5 Gyr)^-0.11,
    # solar metallicity, written out here independently of the module
    mass = core_mass / (1.0 - fraction)
    return (core_mass ** 0.25
            + 2.06 * mass ** -0.21 * (fraction / 0.05) ** 0.59 * insolation ** 0.044 * (age_gyr / 5.0) ** -0.11)


@pytest.mark.parametrize("core_mass, fraction, insolation", [(5.0, 0.02, 10.0), (3.0, 0.005, 100.0),
                                                             (10.0, 0.15, 1.0)])
def test_envelope_fraction_inverts_the_fit(core_mass, fraction, insolation):
    radius = _lopez_fortney_radius(core_mass, fraction, insolation)
    mass = core_mass / (1.0 - fraction)
    # the solver stops at a misfit of 1e-14 in ln R, so 1e-8 leaves room
    assert interiors.envelope_mass_fraction(mass, radius, insolation) == pytest.approx(fraction, rel=1e-8)


def test_envelope_radius_at_another_age():
    # the fit's age term (age / 5 Gyr)^-0.11: a younger envelope is larger (Lopez & Fortney 2014)
    core = _lopez_fortney_radius(5.0, 0.02, 10.0, age_gyr=1.0) - 5.0**0.25
    assert interiors.envelope_radius(5.0 / 0.98, 0.02, 10.0, age_gyr=1.0) == pytest.approx(core, rel=1e-12)


def test_envelope_fraction_is_null_outside_the_grid():
    # Lopez & Fortney 2014 grid: 1-20 Mearth, envelopes 0.1-20 %, 0.1-1000 S_earth
    assert np.isnan(interiors.envelope_mass_fraction(30.0, 5.0, 10.0))
    assert np.isnan(interiors.envelope_mass_fraction(5.0, 1.4, 10.0))    # rocky: smaller than 0.1 % needs
    assert np.isnan(interiors.envelope_mass_fraction(5.0, 2.5, 5000.0))
    assert np.isnan(interiors.envelope_mass_fraction(5.0, _lopez_fortney_radius(5.0, 0.3, 10.0) + 0.5, 10.0))


@pytest.mark.parametrize("mass, fraction, inside", [
    (19.0, 0.05, True), (25.0, 0.05, False),     # the grid's 1-20 Mearth
    (6.0, 0.19, True), (6.0, 0.25, False),       # envelopes up to 20 % of the mass
    (6.0, 0.0012, True), (6.0, 0.0008, False),   # and down to 0.1 %
])
def test_envelope_fraction_is_given_inside_the_grid_only(mass, fraction, inside):
    # Lopez & Fortney 2014 (ApJ 792, 1): their models span 1-20 Mearth and envelopes of 0.1-20 % of the mass
    radius = _lopez_fortney_radius(mass * (1.0 - fraction), fraction, 10.0)
    value = interiors.envelope_mass_fraction(mass, radius, 10.0)
    if inside:
        assert value == pytest.approx(fraction, rel=1e-6)
    else:
        assert np.isnan(value)


# -- tidal heating: Io ------------------------------------------------------------------------------

# Io: radius 1821.6 km, semi-major axis 421,700 km, eccentricity 0.0041 (NASA Jovian satellite fact
# sheet, from memory); Jupiter's mass from astropy
IO_RADIUS = 1821.6e3
IO_A = 421_700e3
IO_E = 0.0041


def test_io_tidal_power_is_about_1e14_watts():
    # Lainey et al. 2009 (Nature 459, 957): k2/Q = 0.015 from Io's astrometry, which corresponds to a
    # dissipation of about 1e14 W; Q' = 3 Q / (2 k2) = 100
    q_prime = tides.q_prime_from_love_number(0.015)
    assert q_prime == pytest.approx(100.0)
    power = tides.tidal_heating_rate(const.M_jup.value, IO_RADIUS, IO_A, IO_E, q_prime)
    assert power == pytest.approx(1e14, rel=0.15)
    # Io's mean surface heat flow about 2.5 W/m^2 (Veeder et al. 1994, from memory)
    assert tides.surface_heat_flux(power, IO_RADIUS) == pytest.approx(tides.IO_HEAT_FLUX, rel=0.2)


def test_earth_heat_flux_for_comparison():
    # Davies & Davies 2010 (Solid Earth 1, 5; from memory): Earth loses 47 TW through its surface; over
    # 4 pi R^2 with the mean radius 6371 km that is 0.092 W/m^2
    flux = (47e12 * u.W / (4 * np.pi * (6371.0 * u.km) ** 2)).to_value(u.W / u.m**2)
    assert tides.EARTH_HEAT_FLUX == pytest.approx(flux, rel=0.01)


def test_tidal_power_matches_the_k2_over_q_form_computed_with_astropy():
    # Segatz et al. 1988 / Peale & Cassen 1978 form: dE/dt = (21/2) (k2/Q) G M^2 R^5 n e^2 / a^6
    mass, radius, a = const.M_jup, IO_RADIUS * u.m, IO_A * u.m
    n = np.sqrt(const.G * mass / a**3)
    expected = (21 / 2 * 0.015 * const.G * mass**2 * radius**5 * n * IO_E**2 / a**6).to(u.W).value
    assert tides.tidal_heating_rate(mass.value, radius.value, a.value, IO_E, 100.0) == pytest.approx(expected, rel=1e-10)


def test_tidal_q_of_a_planet_overrides_the_assumption(make_system, row_of):
    system = make_system([dict(name="b", period=2.0, radius=1.2, mass=1.5, eccentricity=0.05),
                          dict(name="c", period=4.0, radius=1.2, mass=1.5, eccentricity=0.05, tidal_q=1000.0)])
    doc = derive(system).to_dict()
    b, c = row_of(doc["planets"], "b"), row_of(doc["planets"], "c")
    assert system.assumptions.tidal_q == 100.0
    expected_c = tides.tidal_heating_rate(const.M_sun.value, 1.2 * const.R_earth.value,
                                          derive(system).planets["semi_major_axis_au"][1] * const.au.value,
                                          0.05, 1000.0)
    assert c["tidal_heating_w"] == pytest.approx(expected_c, rel=1e-9)
    assert b["tidal_heating_w"] > c["tidal_heating_w"]
    circular = derive(make_system([dict(name="b", period=2.0, radius=1.2, mass=1.5)])).to_dict()
    assert circular["planets"][0]["tidal_heating_w"] == 0.0


# -- the mass-radius relation's scatter (Chen & Kipping 2017) ----------------------------------------

@pytest.mark.parametrize("radius, scatter_log_mass", [
    (1.0, 0.0403 / 0.279),   # Terran: sigma_R 0.0403, slope S 0.279 (Chen & Kipping 2017 Table 1)
    (3.0, 0.146 / 0.589),    # Neptunian: sigma_R 0.146, slope S 0.589
])
def test_estimated_mass_interval_is_as_wide_as_the_relation_scatter(make_system, radius, scatter_log_mass):
    system = make_system([dict(name="b", period=5.0, radius=radius)])
    system.planets[0].set_uncertainty("radius", Uncertainty.from_sigma(1e-6 * radius))
    derived = derive(system, samples=4000, seed=7)
    low, high = (bound[0] for bound in derived.intervals["planets"]["mass_mearth"])
    # 16th-84th percentiles of a log-normal: +-1 sigma in log10 M
    assert np.log10(high / low) / 2 == pytest.approx(scatter_log_mass, rel=0.08)
    nominal = derive(system).planets["mass_mearth"][0]
    assert low < nominal < high
    assert np.log10(nominal) == pytest.approx((np.log10(low) + np.log10(high)) / 2, abs=0.02)


def test_measured_masses_draw_no_relation_scatter(make_system):
    system = make_system([dict(name="b", period=5.0, radius=1.0, mass=1.0)])
    system.planets[0].set_uncertainty("radius", Uncertainty.from_sigma(1e-6))
    derived = derive(system, samples=500, seed=7)
    low, high = (bound[0] for bound in derived.intervals["planets"]["mass_mearth"])
    assert low == high == 1.0


def test_scatter_reaches_density_gravity_and_the_rv_amplitude(make_system):
    system = make_system([dict(name="b", period=5.0, radius=1.3)])
    system.planets[0].set_uncertainty("radius", Uncertainty.from_sigma(1e-6))
    intervals = derive(system, samples=2000, seed=3).intervals["planets"]
    for key in ("density_gcc", "surface_gravity_ms2", "rv_semi_amplitude_ms", "hill_radius_au", "tidal_lock_gyr"):
        low, high = intervals[key]
        assert high[0] / low[0] > 1.3, key   # a tiny radius error alone would give ~1e-6


# -- the JSON document and the file format ---------------------------------------------------------

def test_document_carries_the_interior_keys_with_intervals(make_system):
    system = make_system([dict(name="b", period=3.0, radius=1.1, mass=1.4, eccentricity=0.02),
                          dict(name="c", period=9.0, radius=2.4, mass=6.0)])
    system.planets[0].set_uncertainty("mass", Uncertainty.from_sigma(0.1))
    doc = derive(system, samples=300, seed=1).to_dict()
    for row in doc["planets"]:
        for key in ("core_mass_fraction", "water_mass_fraction", "envelope_mass_fraction", "tidal_heating_w",
                    "tidal_heat_flux_w_m2"):
            assert key in row and key in row["interval"]
    assert doc["planets"][0]["interval"]["core_mass_fraction"][0] < doc["planets"][0]["core_mass_fraction"]
    assert doc["planets"][1]["envelope_mass_fraction"] is not None


def test_assumptions_and_planet_q_in_the_system_file():
    text = """
format = "orbitdeck-system/1"
[system]
name = "t"
[assumptions]
tidal_q = 30
mean_molecular_weight = 18
eclipse_wavelength_um = { value = 12.8 }
xuv_flux = 1e-3
escape_efficiency = 0.2
[star]
name = "s"
mass = 0.3
radius = 0.3
teff = 3300
[[planets]]
name = "b"
period = 3.0
radius = 1.1
tidal_q = { value = 500, sigma = 100 }
"""
    system = loads_system(text, "t.toml")
    a = system.assumptions
    assert (a.tidal_q, a.mean_molecular_weight, a.eclipse_wavelength_um, a.xuv_flux, a.escape_efficiency) == \
        (30.0, 18.0, 12.8, 1e-3, 0.2)
    assert system.planets[0].tidal_q == 500.0 and system.planets[0].uncertainty("tidal_q").plus == 100.0
    old = loads_system(text.split("[assumptions]")[0] + text.split("escape_efficiency = 0.2")[1]
                       .replace("tidal_q = { value = 500, sigma = 100 }\n", ""), "old.toml")
    assert old.assumptions.tidal_q == 100.0 and old.planets[0].tidal_q is None
    with pytest.raises(SystemFileError) as error:
        loads_system(text.replace("tidal_q = 30", "tidal_q = 0"), "bad.toml")
    assert "bad.toml: assumptions.tidal_q: must be > 0" in str(error.value)
    with pytest.raises(SystemFileError) as error:
        loads_system(text.replace("xuv_flux = 1e-3", "xuv_flux = 2"), "bad.toml")
    assert "assumptions.xuv_flux: must be <= 1" in str(error.value)
    assert Planet.param["tidal_q"].default is None
