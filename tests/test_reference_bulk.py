"""Bulk properties, mass estimates, Hill spacing and tidal locking against outside references."""

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest

from orbitdeck.models import derive
from orbitdeck.models.physics import composition, dynamics

# NASA Jupiter fact sheet (checked in a stored copy): equatorial radius 71,492 km,
# volumetric mean radius 69,911 km, mean density 1,326 kg m^-3, escape speed 59.5 km/s
JUPITER_MEAN_RADIUS_KM = 69911.0


# -- Chen & Kipping 2017 ----------------------------------------------------------

# Chen & Kipping 2017 (ApJ 834, 17), Table 1, mean posterior values of the probabilistic relation
# R = C M^S (Earth units): the Terran normalisation C = 1.008 (log10 C = 0.00346), the power-law
# indices of the Terran, Neptunian, Jovian and stellar classes and the class transitions 2.04 Mearth,
# 0.414 Mjup and 0.0800 Msun; the classes above the Terran one are continuous at the transitions. The
# fractional intrinsic scatter in radius of the Terran and Neptunian classes is 0.0403 and 0.146.
# Checked for this test against independent published transcriptions of Table 1, which agree.
CK_C_TERRAN = 1.008
CK_INDEX = {"terran": 0.279, "neptunian": 0.589, "jovian": -0.044, "stellar": 0.881}
CK_TRANSITIONS_MEARTH = (2.04, float(0.414 * const.M_jup / const.M_earth), float(0.0800 * const.M_sun / const.M_earth))
CK_RADIUS_SCATTER = {"terran": 0.0403, "neptunian": 0.146}


def _chen_kipping_radius(mass_mearth):
    """The published mean relation R(M) built here from Table 1, class by class, continuous at the transitions."""
    classes = list(CK_INDEX)
    c = CK_C_TERRAN
    for k, transition in enumerate(CK_TRANSITIONS_MEARTH):
        if mass_mearth < transition:
            return c * mass_mearth ** CK_INDEX[classes[k]]
        # next class: same radius at the transition
        c = c * transition ** (CK_INDEX[classes[k]] - CK_INDEX[classes[k + 1]])
    return c * mass_mearth ** CK_INDEX["stellar"]


@pytest.mark.parametrize("mass", [0.01, 0.107, 0.5, 1.0, 2.0, 2.1, 5.0, 17.15, 60.0, 130.0])
def test_mass_from_radius_inverts_the_published_relation(mass):
    # the radius the Table 1 relation gives for a mass, and back: the same mass to rounding, on both
    # sides of the Terran-Neptunian transition (2.04 Mearth) and up to the Neptunian-Jovian one
    assert composition.mass_from_radius(_chen_kipping_radius(mass)) == pytest.approx(mass, rel=1e-10)


def test_earth_mass_gives_the_published_terran_normalisation():
    # Table 1: a 1 Mearth Terran world has R = C = 1.008 Rearth
    assert composition.mass_from_radius(CK_C_TERRAN) == pytest.approx(1.0, rel=1e-12)


def test_the_neptunian_branch_ends_at_the_published_jovian_transition():
    # the largest invertible radius is that of a 0.414 Mjup Neptunian world (Table 1); beyond it the nearly
    # flat Jovian class (index -0.044) has no inverse and the transition mass stands in
    r_max = _chen_kipping_radius(CK_TRANSITIONS_MEARTH[1] * (1 - 1e-12))
    assert composition.R_NEPTUNIAN_MAX == pytest.approx(r_max, rel=1e-9)
    assert composition.mass_from_radius([r_max * 1.01, 20.0]) == pytest.approx([CK_TRANSITIONS_MEARTH[1]] * 2, rel=1e-12)


@pytest.mark.parametrize("name, radius_km, mass_kg, kind", [
    # NASA planetary fact sheets (from memory): mean radius and mass
    ("earth", 6371.0, 5.9722e24, "terran"),
    ("venus", 6051.8, 4.8673e24, "terran"),
    ("neptune", 24622.0, 102.41e24, "neptunian"),
])
def test_solar_system_masses_lie_within_the_published_scatter(name, radius_km, mass_kg, kind):
    # real planets scatter about the mean relation; Table 1 gives the fractional radius scatter of each
    # class, which at fixed radius is a scatter of (sigma_R / S) in ln M: each planet lies within one sigma
    radius = float(radius_km * u.km / const.R_earth)
    mass = mass_kg / const.M_earth.value
    estimate = float(composition.mass_from_radius(radius))
    assert abs(np.log(estimate / mass)) < CK_RADIUS_SCATTER[kind] / CK_INDEX[kind], (estimate, mass)


@pytest.mark.parametrize("mass, kind", [(0.5, "terran"), (1.0, "terran"), (10.0, "neptunian"), (30.0, "neptunian")])
def test_relation_scatter_is_the_published_sigma_of_each_class(mass, kind):
    # Table 1: the intrinsic scatter of log10 R at fixed mass is 0.0403 (Terran) and 0.146 (Neptunian); a draw
    # z standard deviations off the mean relation moves log10 M by -z sigma / S (S the class's index); the
    # masses here stay inside their class for |z| <= 2
    radius = _chen_kipping_radius(mass)
    sigma, slope = CK_RADIUS_SCATTER[kind], CK_INDEX[kind]
    assert composition.radius_scatter_log10(radius) == pytest.approx(sigma, rel=1e-12)
    for z in (-2.0, -1.0, 1.0, 2.0):
        drawn = composition.mass_from_radius_with_scatter(radius, z)
        assert np.log10(drawn / mass) == pytest.approx(-z * sigma / slope, rel=1e-9)
    # giants beyond the Neptunian branch carry a flagged placeholder, no scatter
    assert composition.radius_scatter_log10(20.0) == 0.0


def test_missing_mass_is_estimated_and_flagged(make_system, row_of):
    system = make_system([dict(name="b", period=5.0, radius=1.5), dict(name="c", period=9.0, radius=2.0, mass=4.0)])
    doc = derive(system).to_dict()
    b, c = row_of(doc["planets"], "b"), row_of(doc["planets"], "c")
    assert b["mass_estimated"] is True and c["mass_estimated"] is False
    assert b["mass_mearth"] == pytest.approx(float(composition.mass_from_radius(1.5)))
    assert c["mass_mearth"] == 4.0
    assert any("estimated from radius" in w and "b" in w for w in doc["warnings"])


def test_giant_radius_without_mass_gets_a_flagged_placeholder(make_system, row_of):
    # above ~14 Rearth the Jovian branch (S = -0.044) cannot be inverted (Chen & Kipping 2017)
    doc = derive(make_system([dict(name="b", period=5.0, radius=15.0)])).to_dict()
    b = row_of(doc["planets"], "b")
    assert b["mass_mearth"] == pytest.approx(float(0.414 * const.M_jup / const.M_earth), rel=1e-9)
    assert any("placeholder" in w for w in doc["warnings"])


# -- density, gravity, escape speed -----------------------------------------------

def test_earth_bulk_properties(solar_system, row_of):
    earth = row_of(derive(solar_system).to_dict()["planets"], "earth")
    # NASA Earth fact sheet (from memory): mean density 5.513 g/cc with the 6371 km mean radius;
    # astropy's R_earth is the 6378.1 km equatorial radius, giving (6371/6378.1)^3 x 5.513 = 5.495
    assert earth["density_gcc"] == pytest.approx(5.513 * (6371.0 / 6378.1) ** 3, rel=2e-3)
    # NASA Earth fact sheet: surface gravity 9.80 m/s^2, escape speed 11.19 km/s (equatorial radius)
    assert earth["surface_gravity_ms2"] == pytest.approx(9.80, abs=0.01)
    assert earth["escape_speed_kms"] == pytest.approx(11.19, abs=0.015)


def test_jupiter_bulk_properties(solar_system, row_of, make_system):
    jupiter = row_of(derive(solar_system).to_dict()["planets"], "jupiter")
    # astropy's R_jup is the IAU 2015 nominal equatorial radius, 71,492 km
    assert const.R_jup.to_value(u.km) == pytest.approx(71492.0)
    # NASA Jupiter fact sheet: escape speed 59.5 km/s and gravity 24.79 m/s^2 (GM / R_eq^2, the
    # current sheet, from memory) both use the equatorial radius
    assert jupiter["escape_speed_kms"] == pytest.approx(59.5, abs=0.05)
    assert jupiter["surface_gravity_ms2"] == pytest.approx(24.79, abs=0.02)
    # the fact sheet's mean density 1.326 g/cc uses the volumetric mean radius; with the
    # equatorial radius the same mass gives 1.326 (69911/71492)^3 = 1.240
    assert jupiter["density_gcc"] == pytest.approx(1.326 * (JUPITER_MEAN_RADIUS_KM / 71492.0) ** 3, rel=2e-3)
    mean_radius = float(JUPITER_MEAN_RADIUS_KM * u.km / const.R_earth)
    jupiter_mean = dict(name="j", period=4332.589, radius=mean_radius, mass=float(const.M_jup / const.M_earth))
    assert row_of(derive(make_system([jupiter_mean])).to_dict()["planets"], "j")["density_gcc"] == pytest.approx(
        1.326, abs=0.002)


def test_bulk_formulas_against_astropy_units():
    mass, radius = 3.2 * const.M_earth, 1.4 * const.R_earth
    rho = (mass / (4 / 3 * np.pi * radius**3)).to_value(u.kg / u.m**3)
    g = (const.G * mass / radius**2).to_value(u.m / u.s**2)
    v = np.sqrt(2 * const.G * mass / radius).to_value(u.m / u.s)
    m_kg, r_m = mass.to_value(u.kg), radius.to_value(u.m)
    assert composition.bulk_density(m_kg, r_m) == pytest.approx(rho, rel=1e-12)
    assert composition.surface_gravity(m_kg, r_m) == pytest.approx(g, rel=1e-12)
    assert composition.escape_speed(m_kg, r_m) == pytest.approx(v, rel=1e-12)


# -- Hill radius and spacing --------------------------------------------------------

def test_earth_hill_radius(solar_system, row_of):
    earth = row_of(derive(solar_system).to_dict()["planets"], "earth")
    # Hamilton & Burns 1992: r_H = a (m / 3M)^(1/3); Earth's is ~0.0100 au = 1.5e6 km (from memory)
    assert earth["hill_radius_au"] == pytest.approx(0.0100, abs=5e-5)
    assert (earth["hill_radius_au"] * u.au).to_value(u.km) == pytest.approx(1.5e6, rel=0.01)


def test_hill_radius_is_taken_at_periastron():
    # Hamilton & Burns 1992: for an eccentric orbit the Hill sphere shrinks to a (1 - e)(m/3M)^(1/3)
    assert dynamics.hill_radius(2.0, 0.25, 3.0, 1.0e6) == pytest.approx(2.0 * 0.75 * (3.0 / 3.0e6) ** (1 / 3))


def test_mutual_hill_spacing_by_hand(make_system):
    # a made-up pair: 5 and 8 Mearth at 4.0 and 6.5 d around 0.5 Msun; by hand with astropy
    star = dict(name="s", mass=0.5, radius=0.5, teff=3600.0)
    system = make_system([dict(name="b", period=4.0, radius=2.0, mass=5.0),
                          dict(name="c", period=6.5, radius=2.2, mass=8.0)], star=star)
    pair = derive(system).to_dict()["pairs"][0]

    def a(period, mp):
        return (const.G * (0.5 * const.M_sun + mp * const.M_earth) * (period * u.day) ** 2 / (4 * np.pi**2)) ** (1 / 3)

    a1, a2 = a(4.0, 5.0), a(6.5, 8.0)
    # Chambers et al. 1996 eq. 1: R_H,m = ((m1 + m2) / 3M)^(1/3) (a1 + a2) / 2
    rh = (((5.0 + 8.0) * const.M_earth / (3 * 0.5 * const.M_sun)) ** (1 / 3) * (a1 + a2) / 2).decompose()
    assert pair["mutual_hill_spacing"] == pytest.approx(float((a2 - a1) / rh), rel=1e-9)


def test_tight_pair_triggers_the_hill_stability_warning(make_system):
    # Gladman 1993: two planets on circular orbits are Hill stable only if separated by more than
    # 2 sqrt(3) = 3.46 mutual Hill radii
    assert dynamics.HILL_STABLE_SPACING == pytest.approx(3.4641016, rel=1e-7)
    tight = make_system([dict(name="b", period=10.0, radius=3.0, mass=10.0),
                         dict(name="c", period=10.5, radius=3.0, mass=10.0)])
    doc = derive(tight).to_dict()
    assert doc["pairs"][0]["mutual_hill_spacing"] < 2 * np.sqrt(3)
    assert any("2 sqrt(3)" in w for w in doc["warnings"])
    wide = make_system([dict(name="b", period=10.0, radius=3.0, mass=10.0),
                        dict(name="c", period=14.0, radius=3.0, mass=10.0)])
    doc = derive(wide).to_dict()
    assert doc["pairs"][0]["mutual_hill_spacing"] > 2 * np.sqrt(3)
    assert not any("2 sqrt(3)" in w for w in doc["warnings"])


# -- tidal locking ----------------------------------------------------------------

def test_tidal_locking_time_by_hand_with_astropy_units(make_system, row_of):
    # Gladman et al. 1996 eq. 9 (pp. 169-170, after Peale 1977), as printed and quoted in a stored copy of the
    # encyclopaedia article on tidal locking: t = omega a^6 I Q / (3 G M*^2 k2 R^5), I = alpha m R^2 (alpha
    # = 0.4 for a uniform sphere); with the fiducial Q = 100, k2 = 0.3 and a 12 h initial spin of the
    # model's docstring (assumptions, not measurements), written here with astropy quantities
    star = dict(name="s", mass=0.3, radius=0.3, teff=3300.0)
    doc = derive(make_system([dict(name="b", period=30.0, radius=1.1, mass=1.3)], star=star)).to_dict()
    m, r, mstar = 1.3 * const.M_earth, 1.1 * const.R_earth, 0.3 * const.M_sun
    a = (const.G * (mstar + m) * (30.0 * u.day) ** 2 / (4 * np.pi**2)) ** (1 / 3)
    omega = 2 * np.pi * u.rad / (12 * u.hour)
    inertia = 0.4 * m * r**2
    t = (omega * a**6 * inertia * 100 / (3 * const.G * mstar**2 * 0.3 * r**5)).to(u.Gyr, u.dimensionless_angles())
    assert row_of(doc["planets"], "b")["tidal_lock_gyr"] == pytest.approx(t.value, rel=1e-9)
    # a temperate planet around an M dwarf locks quickly (common practice): well under 1 Gyr
    assert t.value < 1.0


@pytest.mark.parametrize("argument, factor, exponent", [
    ("a_m", 2.0, 6), ("star_mass_kg", 2.0, -2), ("planet_mass_kg", 2.0, 1), ("planet_radius_m", 2.0, -3),
    ("initial_spin_rad_s", 3.0, 1), ("q", 10.0, 1), ("k2", 2.0, -1), ("inertia_factor", 0.5, 1)])
def test_tidal_locking_time_scales_as_gladman_eq_9(argument, factor, exponent):
    # Gladman et al. 1996 (Icarus 122, 166) eq. 9, t = omega a^6 I Q / (3 G M*^2 k2 R^5) with I = alpha m R^2
    # (the equation as printed on pp. 169-170, quoted in a stored copy of the encyclopaedia article on tidal
    # locking): each input enters with its own power
    base = dict(a_m=1.0e10, planet_mass_kg=6e24, planet_radius_m=6.4e6, star_mass_kg=2e30,
                initial_spin_rad_s=1.4e-4, q=100.0, k2=0.3, inertia_factor=0.4)
    changed = dict(base, **{argument: base[argument] * factor})
    ratio = dynamics.tidal_locking_time(**changed) / dynamics.tidal_locking_time(**base)
    assert ratio == pytest.approx(factor**exponent, rel=1e-12)
