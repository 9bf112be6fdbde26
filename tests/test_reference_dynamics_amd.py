"""AMD stability (Laskar & Petit 2017, A&A 605, A72) with the resonance-overlap correction of
Petit, Laskar & Boue 2017 (A&A 607, A35).

Checked against: a brute-force minimisation with scipy of the AMD along the
collision line a (1 + e) = a' (1 - e'), scipy's brentq on the collision
condition, the circular limit of the overlap criterion (Deck, Payne & Holman
2013: 1.46 epsilon^(2/7)), limits that follow from the definitions (zero AMD
for circular coplanar orbits, growth with eccentricity), and the Solar
System's classification (from memory: AMD-unstable as a whole, its four
giant planets alone AMD-stable; Laskar 2000, Laskar & Petit 2017).
"""

from __future__ import annotations

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from scipy.optimize import brentq, minimize_scalar

from orbitdeck.models import Uncertainty, derive
from orbitdeck.models.physics import amd


def brute_force_critical_amd(alpha, gamma):
    """min over the collision line of (C / Lambda') = gamma sqrt(alpha) (1 - sqrt(1 - e^2)) + 1 - sqrt(1 - e'^2),
    e' = 1 - alpha (1 + e), for coplanar orbits (the definition of Laskar & Petit 2017's critical AMD)."""
    def relative_amd(e):
        e_outer = 1.0 - alpha * (1.0 + e)
        return gamma * np.sqrt(alpha) * (1 - np.sqrt(1 - e * e)) + 1 - np.sqrt(1 - e_outer * e_outer)

    upper = min(1.0, 1.0 / alpha - 1.0)   # both eccentricities in [0, 1]
    grid = np.linspace(0.0, upper, 20001)
    start = grid[np.argmin(relative_amd(grid))]
    found = minimize_scalar(relative_amd, bounds=(max(0.0, start - upper / 1e4), min(upper, start + upper / 1e4)),
                            method="bounded", options={"xatol": 1e-14})
    return found.fun


@pytest.mark.parametrize("alpha, gamma", [(0.7, 1.0), (0.5, 3.0), (0.9, 0.2), (0.3, 0.05)])
def test_critical_amd_is_the_least_amd_on_the_collision_line(alpha, gamma):
    assert amd.critical_amd_collision(alpha, gamma) == pytest.approx(brute_force_critical_amd(alpha, gamma),
                                                                     rel=1e-9, abs=1e-14)


def test_amd_of_an_inclined_eccentric_orbit_is_lambda_less_the_normal_angular_momentum():
    # C = Lambda - G cos i, G = |r x v| the orbit's angular momentum (Laskar & Petit 2017), here from the state at
    # periastron: r = a (1 - e), v^2 = G M (2/r - 1/a) by the vis-viva equation, v perpendicular to r; astropy units
    m, star, a, e, i = 3.0 * const.M_earth, 0.3 * const.M_sun, 0.05 * u.au, 0.2, 0.3
    r = a * (1 - e)
    v = np.sqrt(const.G * star * (2 / r - 1 / a))
    circular = (m * np.sqrt(const.G * star * a)).to(u.kg * u.m**2 / u.s).value
    expected = circular - (m * r * v).to(u.kg * u.m**2 / u.s).value * np.cos(i)
    lam = amd.circular_angular_momentum(m.value, star.value, a.to(u.m).value)
    assert lam == pytest.approx(circular, rel=1e-12)
    assert amd.angular_momentum_deficit(lam, e, i) == pytest.approx(expected, rel=1e-12)


def test_critical_eccentricity_is_the_root_of_the_collision_condition():
    # Laskar & Petit 2017 eq. 35; brentq as the independent root finder, over alpha and gamma of many decades
    rng = np.random.default_rng(2)
    alpha, gamma = rng.uniform(0.01, 0.999, 300), 10 ** rng.uniform(-4, 4, 300)
    found = amd.critical_eccentricity(alpha, gamma)
    for a, g, e in zip(alpha, gamma, found):
        root = brentq(lambda x: amd.collision_condition(x, a, g)[0], 0.0, 1.0, xtol=1e-16)
        assert e == pytest.approx(root, abs=2e-15)


def test_collision_condition_slope_is_its_derivative():
    # eq. 36 against a central difference of eq. 35
    e, alpha, gamma, h = 0.23, 0.71, 1.7, 1e-6
    value, slope = amd.collision_condition(e, alpha, gamma)
    numeric = (amd.collision_condition(e + h, alpha, gamma)[0] - amd.collision_condition(e - h, alpha, gamma)[0]) / (2 * h)
    assert slope == pytest.approx(numeric, rel=1e-8)


def test_overlap_correction_reduces_to_the_circular_overlap_limit():
    # C_MMR vanishes where g = 0: 1 - alpha = (2^14 / 3^6)^(1/7) (r epsilon)^(2/7) = 1.4639 epsilon^(2/7) for
    # r = 0.80, the overlap limit of circular orbits 1.46 epsilon^(2/7) (Deck, Payne & Holman 2013, given to
    # three figures: the edge found by bisection must agree to 0.4 %)
    for epsilon in (1e-6, 3e-5, 1e-3):
        low, high = 0.0, 1.0 - 1e-12     # C_MMR > 0 at low, = 0 at high
        for _ in range(200):
            middle = 0.5 * (low + high)
            low, high = (middle, high) if amd.critical_amd_overlap(middle, 1.0, epsilon) > 0 else (low, middle)
        assert (1.0 - high) / epsilon ** (2 / 7) == pytest.approx(1.46, rel=4e-3)


def test_overlap_critical_amd_is_the_least_amd_at_the_overlap_eccentricity():
    # C_MMR / Lambda' = (g^2/2) gamma sqrt(alpha) / (1 + gamma sqrt(alpha)) is the least AMD, to second order in
    # the eccentricities (Lambda (1 - sqrt(1 - e^2)) ~ Lambda e^2 / 2), of two orbits whose eccentricities differ
    # by g, the resonance-overlap value (Petit, Laskar & Boue 2017): scipy's minimiser along e' - e = g
    alpha, gamma, epsilon = 0.85, 2.5, 1e-5
    g = 3**4 * (1 - alpha) ** 5 / (2**9 * 0.80 * epsilon) - 32 * 0.80 * epsilon / (9 * (1 - alpha) ** 2)
    assert g > 0
    least = minimize_scalar(lambda e: (gamma * np.sqrt(alpha) * e**2 + (e + g) ** 2) / 2, bounds=(-g, 0.0),
                            method="bounded", options={"xatol": 1e-14}).fun
    assert amd.critical_amd_overlap(alpha, gamma, epsilon) == pytest.approx(least, rel=1e-9)


def test_overlap_correction_crosses_the_collision_value_once_inside_the_two_to_one():
    # the claim behind taking the smaller critical AMD for alpha > 2^(-2/3) (first-order resonances):
    # C_MMR - C_c changes sign at most once there, from + (wider) to - (closer)
    alpha = np.linspace(2 ** (-2 / 3), 0.99999, 4000)
    for gamma in np.geomspace(1e-3, 1e3, 13):
        collision = amd.critical_amd_collision(alpha, gamma)
        for epsilon in np.geomspace(1e-9, 3e-2, 13):
            sign = np.sign(amd.critical_amd_overlap(alpha, gamma, epsilon) - collision)
            sign = sign[sign != 0]
            changes = np.flatnonzero(np.diff(sign))
            assert changes.size <= 1 and (changes.size == 0 or sign[0] > 0), (gamma, epsilon)


def test_close_pairs_take_the_overlap_value_and_wide_pairs_the_collision_value():
    epsilon, gamma = 1e-4, 1.0
    wide, close = 0.7, 1 - 2.0 * epsilon ** (2 / 7)
    assert amd.critical_amd(wide, gamma, epsilon) == amd.critical_amd_collision(wide, gamma)
    assert amd.critical_amd(close, gamma, epsilon) == amd.critical_amd_overlap(close, gamma, epsilon)
    assert amd.critical_amd(close, gamma, epsilon) < amd.critical_amd_collision(close, gamma)
    # beyond the 2:1 commensurability there are no first-order resonances: the collision value stands even
    # where the overlap formula, outside its domain, would be smaller (massive planets, alpha = 0.5)
    assert amd.critical_amd_overlap(0.5, 0.01, 0.01) < amd.critical_amd_collision(0.5, 0.01)
    assert amd.critical_amd(0.5, 0.01, 0.01) == amd.critical_amd_collision(0.5, 0.01)
    # inside the 2:1 (alpha > 2^(-2/3) = 0.630 by Kepler's third law) the correction applies: two planets of
    # epsilon = 0.01 at alpha = 0.7 lie inside the overlap zone of circular orbits (1 - alpha = 0.3 < 1.46 x
    # 0.01^(2/7) = 0.39, Deck, Payne & Holman 2013), so no AMD is stable there
    assert amd.critical_amd_collision(0.7, 1.0) > 0.01
    assert amd.critical_amd(0.7, 1.0, 0.01) == 0.0


# -- through derive() ------------------------------------------------------------------------------

def three_planets(make_system, e=(0.0, 0.0, 0.0)):
    planets = [dict(name=n, period=p, radius=1.5, mass=m, eccentricity=x)
               for n, p, m, x in zip("bcd", (5.0, 8.3, 13.9), (4.0, 6.0, 5.0), e)]
    return make_system(planets, star=dict(name="s", mass=0.4, radius=0.4, teff=3500.0))


def test_beta_is_zero_for_circular_coplanar_orbits(make_system):
    derived = derive(three_planets(make_system))
    assert derived.system["amd_kg_m2_s"] == 0.0
    assert np.all(derived.pairs["amd_beta"] == 0.0)
    assert derived.system["amd_stable"]


def test_beta_grows_with_eccentricity_until_the_system_is_amd_unstable(make_system):
    betas = [derive(three_planets(make_system, e=(e, 0.0, e / 2))).pairs["amd_beta"] for e in (0.01, 0.05, 0.1, 0.3)]
    assert all(np.all(later > earlier) for earlier, later in zip(betas, betas[1:]))
    assert derive(three_planets(make_system, e=(0.01, 0.0, 0.005))).system["amd_stable"]
    assert not derive(three_planets(make_system, e=(0.3, 0.0, 0.15))).system["amd_stable"]


def test_beta_is_the_system_amd_over_each_pairs_critical_amd(make_system):
    # Lambda = m sqrt(G M* a) and C = sum Lambda (1 - sqrt(1 - e^2)) with astropy; beta = C / (Lambda' C_c)
    system = three_planets(make_system, e=(0.04, 0.02, 0.03))
    derived = derive(system)
    a = derived.planets["semi_major_axis_au"] * u.au
    m = np.array([4.0, 6.0, 5.0]) * const.M_earth
    lam = (m * np.sqrt(const.G * 0.4 * const.M_sun * a)).to(u.kg * u.m**2 / u.s).value
    total = np.sum(lam * (1 - np.sqrt(1 - np.array([0.04, 0.02, 0.03]) ** 2)))
    assert derived.system["amd_kg_m2_s"] == pytest.approx(total, rel=1e-12)
    alpha = (a[:-1] / a[1:]).value
    critical = [brute_force_critical_amd(x, g) for x, g in zip(alpha, m[:-1] / m[1:])]
    assert derived.pairs["amd_beta"] == pytest.approx(total / (lam[1:] * np.array(critical)), rel=1e-8)


def test_one_amd_unstable_pair_makes_the_system_amd_unstable(make_system):
    # Laskar & Petit 2017: AMD-stable when every adjacent pair is. The eccentric outer planet's AMD is far below the
    # wide pair's critical AMD but above the close pair's (their betas checked against scipy above)
    planets = [dict(name=n, period=p, radius=1.5, mass=5.0, eccentricity=x)
               for n, p, x in zip("bcd", (5.0, 6.0, 30.0), (0.0, 0.0, 0.08))]
    derived = derive(make_system(planets))
    close, wide = derived.pairs["amd_beta"]
    assert close > 1.2 and wide < 0.05
    assert not derived.system["amd_stable"]


def test_circular_pair_inside_the_overlap_zone_has_no_stable_amd(make_system):
    # a pair 1.05 apart in period around a 0.4 Msun star: epsilon = 10 Mearth / 0.4 Msun = 7.5e-5, inside the overlap
    # zone of circular orbits ((a'/a - 1) = 0.033 < 1.46 epsilon^(2/7) = 0.097, Deck, Payne & Holman 2013), where
    # the critical AMD is zero (Petit, Laskar & Boue 2017): not even the zero AMD of circular orbits is stable
    planets = [dict(name=n, period=p, radius=1.5, mass=5.0) for n, p in zip("bc", (5.0, 5.25))]
    derived = derive(make_system(planets, star=dict(name="s", mass=0.4, radius=0.4, teff=3500.0)))
    assert derived.system["amd_kg_m2_s"] == 0.0 and derived.pairs["amd_critical"][0] == 0.0
    assert derived.pairs["amd_beta"][0] == np.inf
    assert not derived.system["amd_stable"]


def test_amd_enough_to_bring_the_innermost_planet_to_the_star_is_not_stable(make_system):
    # Laskar & Petit 2017: the innermost planet can reach the star (e = 1) once C >= Lambda_1. A light inner planet
    # and a giant far out: the pair's beta stays far below 1 while the giant's small eccentricity already carries
    # C = 2 Lambda_1 (or 0.5 Lambda_1); Lambda = m sqrt(G M* a) with astropy, a by Kepler's third law
    masses, periods = (0.01, 300.0), (10.0, 300.0)
    a = [(const.G * (const.M_sun + m * const.M_earth) * (p * u.day) ** 2 / (4 * np.pi**2)) ** (1 / 3)
         for m, p in zip(masses, periods)]
    lam = [float(m * const.M_earth * np.sqrt(const.G * const.M_sun * x) / (u.kg * u.m**2 / u.s))
           for m, x in zip(masses, a)]
    for share, stable in ((2.0, False), (0.5, True)):
        e = np.sqrt(1 - (1 - share * lam[0] / lam[1]) ** 2)     # Lambda' (1 - sqrt(1 - e^2)) = share x Lambda_1
        planets = [dict(name="b", period=10.0, radius=0.3, mass=0.01),
                   dict(name="c", period=300.0, radius=11.0, mass=300.0, eccentricity=float(e))]
        derived = derive(make_system(planets))
        assert derived.system["amd_kg_m2_s"] == pytest.approx(share * lam[0], rel=1e-6)
        assert derived.pairs["amd_beta"][0] < 0.01
        assert bool(derived.system["amd_stable"]) == stable, share


def test_monte_carlo_gives_the_fraction_of_amd_stable_draws(make_system):
    # beta ~ 1 nominally: the eccentricity's spread makes some draws stable and others not
    system = three_planets(make_system, e=(0.0, 0.0, 0.0))
    for e in np.linspace(0.01, 0.4, 60):
        system.planets[0].eccentricity = float(e)
        if derive(system).pairs["amd_beta"].max() > 1.0:
            break
    system.planets[0].uncertainties = {"eccentricity": Uncertainty.from_sigma(0.05)}
    doc = derive(system, samples=2000, seed=7).to_dict()
    share = doc["system"]["fraction"]["amd_stable"]
    assert 0.05 < share < 0.95
    assert all(len(row["interval"]["amd_beta"]) == 2 for row in doc["pairs"])


# -- the Solar System (from memory: Laskar 2000 and Laskar & Petit 2017 find the Solar System AMD-unstable,
#    its inner planets able to collide given the giant planets' AMD, and the four giant planets alone AMD-stable).
#    Planet values from the NASA planetary fact sheet (from memory): a [au], e, mass [Mearth]; inclinations left out.
SOLAR = {"mercury": (0.387, 0.2056, 0.0553), "venus": (0.723, 0.0068, 0.815), "earth": (1.000, 0.0167, 1.0),
         "mars": (1.524, 0.0934, 0.107), "jupiter": (5.203, 0.0484, 317.8), "saturn": (9.537, 0.0539, 95.2),
         "uranus": (19.19, 0.0473, 14.5), "neptune": (30.07, 0.0086, 17.1)}


def solar(make_system, names):
    planets = [dict(name=n, period=float(365.25 * SOLAR[n][0] ** 1.5), radius=1.0, mass=SOLAR[n][2],
                    eccentricity=SOLAR[n][1]) for n in names]
    return make_system(planets, star=dict(name="sun", mass=1.0, radius=1.0, teff=5772.0))


def test_solar_system_is_amd_unstable_but_its_giant_planets_are_amd_stable(make_system):
    whole = derive(solar(make_system, list(SOLAR)))
    assert not whole.system["amd_stable"]
    assert whole.pairs["amd_beta"][:3].min() > 1.0       # Mercury-Venus, Venus-Earth, Earth-Mars
    giants = derive(solar(make_system, ["jupiter", "saturn", "uranus", "neptune"]))
    assert giants.system["amd_stable"]
    assert giants.pairs["amd_beta"].max() < 1.0
