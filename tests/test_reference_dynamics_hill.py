"""Hill stability with eccentricities (Gladman 1993, Icarus 106, 247) and first-order resonance
overlap (Deck, Payne & Holman 2013, ApJ 774, 129).

Checked against: Gladman's own circular-orbit limit, a separation of
2 sqrt(3) mutual Hill radii (Chambers et al. 1996's mutual Hill radius;
the boundary found with scipy's brentq), the criterion's behaviour with
eccentricity (more eccentric orbits need a wider spacing), and the
overlap zone's 1.46 epsilon^(2/7) in the period-ratio form of Kepler's law.
"""

from __future__ import annotations

import astropy.constants as const
import astropy.units as u
import numpy as np
import pytest
from scipy.optimize import brentq

from orbitdeck.models import derive
from orbitdeck.models.physics import dynamics


@pytest.mark.parametrize("mu_in, mu_out", [(1e-9, 1e-9), (3e-9, 1e-9), (1e-10, 2e-10)])
def test_gladman_reduces_to_two_sqrt_three_mutual_hill_radii_for_circular_orbits(mu_in, mu_out):
    # Gladman 1993: for e = 0 and small masses, Hill stable iff a2 - a1 > 2 sqrt(3) R_H,m,
    # R_H,m = ((m1 + m2) / 3M*)^(1/3) (a1 + a2) / 2 (Chambers, Wetherill & Boss 1996 eq. 1); the boundary of the
    # full criterion found with brentq agrees to order (mu)^(1/3) ~ 1e-3
    def margin(a_out):
        left = (mu_in + mu_out) ** -3 * (mu_in + mu_out / a_out) * (mu_in + mu_out * np.sqrt(a_out)) ** 2
        return left - 1 - 3 ** (4 / 3) * mu_in * mu_out / (mu_in + mu_out) ** (4 / 3)

    boundary = brentq(margin, 1.0 + 1e-6, 1.5, xtol=1e-15)
    spacing = dynamics.mutual_hill_spacing(1.0, boundary, mu_in, mu_out, 1.0)
    assert spacing == pytest.approx(2 * np.sqrt(3), rel=5e-3)
    assert dynamics.gladman_hill_stable(1.0, boundary * (1 + 1e-6), 0.0, 0.0, mu_in, mu_out)
    assert not dynamics.gladman_hill_stable(1.0, boundary * (1 - 1e-6), 0.0, 0.0, mu_in, mu_out)


def test_small_eccentricity_expansion():
    # to second order in e and in the spacing, Gladman's criterion reads
    # (Delta / a)^2 > 12 (R_H / a)^2 + (8/3) (e1^2 + e2^2), R_H = ((m1 + m2) / 3M*)^(1/3) a (Gladman 1993, his
    # expansion for small eccentricities; from memory, and re-derived from the full criterion): the boundary
    # found with brentq agrees to a few per cent
    mu, e1, e2 = 1e-9, 0.01, 0.006

    def margin(a_out):
        return float(dynamics.gladman_hill_stable(1.0, a_out, e1, e2, mu, mu)) - 0.5

    boundary = brentq(margin, 1.0 + 1e-6, 1.5, xtol=1e-12)
    expected = np.sqrt(12 * (2 * mu / 3) ** (2 / 3) + 8 / 3 * (e1**2 + e2**2))
    assert boundary - 1.0 == pytest.approx(expected, rel=0.03)


def test_eccentric_orbits_need_a_wider_spacing():
    # gamma_i = sqrt(1 - e_i^2) < 1 lowers the left side (Gladman 1993): the boundary moves outwards with e
    mu = 3e-6
    boundaries = []
    for e in (0.0, 0.02, 0.05, 0.1):
        a_out = np.linspace(1.0001, 1.6, 60000)
        stable = dynamics.gladman_hill_stable(1.0, a_out, e, e, mu, mu)
        boundaries.append(a_out[np.argmax(stable)])
    assert all(later > earlier for earlier, later in zip(boundaries, boundaries[1:]))


def test_overlap_zone_edge_in_period_ratio():
    # (a' - a) / a < 1.46 epsilon^(2/7) (Deck, Payne & Holman 2013); for epsilon = 6e-6 (two Earths around the
    # Sun) 1.46 x (6e-6)^(2/7) = 0.0470, a period ratio of 1.0470^1.5 = 1.0714 by Kepler's law
    assert dynamics.overlap_spacing(6e-6) == pytest.approx(1.46 * 6e-6 ** (2 / 7), rel=1e-12)
    assert dynamics.overlap_spacing(6e-6) == pytest.approx(0.0470, abs=1e-4)
    assert dynamics.in_overlap_zone(1.0, 1.046, 6e-6) and not dynamics.in_overlap_zone(1.0, 1.048, 6e-6)


def planets(make_system, ratio, e=0.0, mass=3.0):
    return make_system([dict(name="b", period=10.0, radius=1.5, mass=mass, eccentricity=e),
                        dict(name="c", period=10.0 * ratio, radius=1.5, mass=mass)])


def test_derive_flags_overlap_and_hill_stability(make_system):
    close = derive(planets(make_system, 1.05))
    assert close.pairs["in_overlap_zone"][0] and close.pairs["ttv_inner_min"][0] != close.pairs["ttv_inner_min"][0]
    assert any("overlapping first-order resonances" in w for w in close.warnings)
    wide = derive(planets(make_system, 1.5))
    assert not wide.pairs["in_overlap_zone"][0] and wide.pairs["hill_stable"][0]
    assert not any("overlapping" in w for w in wide.warnings)


def test_eccentric_pair_gets_the_eccentric_warning_instead_of_the_circular_one(make_system):
    # spaced beyond 2 sqrt(3) mutual Hill radii, but with e = 0.3 not Hill stable by Gladman's criterion
    derived = derive(planets(make_system, 1.5, e=0.3))
    assert derived.pairs["mutual_hill_spacing"][0] > 2 * np.sqrt(3)
    assert not derived.pairs["hill_stable"][0]
    assert any("not Hill stable for their eccentricities" in w for w in derived.warnings)
    assert not any("2 sqrt(3)" in w for w in derived.warnings)
    # circular and tight: the circular-orbit warning as before
    tight = derive(planets(make_system, 1.02, mass=10.0))
    assert any("2 sqrt(3)" in w for w in tight.warnings) and not tight.pairs["hill_stable"][0]


def period_for_spacing(spacing, m_in, m_out, period_in=10.0):
    """Outer period [d] putting the outer planet at a_out = (1 + spacing) a_in around the Sun (Kepler's third law
    with M* + m, astropy)."""
    total = [const.M_sun + m * const.M_earth for m in (m_in, m_out)]
    return float(period_in * (1 + spacing) ** 1.5 * np.sqrt(total[0] / total[1]))


def test_derive_places_the_overlap_edge_with_the_pairs_summed_mass(make_system):
    # epsilon = (m + m') / M* with unequal masses (1 and 8 Mearth around the Sun, astropy): the edge
    # (a' - a) / a = 1.46 epsilon^(2/7) of Deck, Payne & Holman 2013, a part in 1000 either side
    epsilon = float(9.0 * const.M_earth / const.M_sun)
    edge = 1.46 * epsilon ** (2 / 7)
    for factor, inside in ((0.999, True), (1.001, False)):
        planets = [dict(name="b", period=10.0, radius=1.0, mass=1.0),
                   dict(name="c", period=period_for_spacing(factor * edge, 1.0, 8.0), radius=2.0, mass=8.0)]
        assert bool(derive(make_system(planets)).pairs["in_overlap_zone"][0]) == inside, factor


def test_derive_follows_gladmans_criterion_for_unequal_masses_and_an_eccentric_orbit(make_system):
    # Gladman 1993's criterion written out here (masses over the star's with astropy, a with M* + m), its boundary
    # in period ratio found with brentq for an inner planet of 1 Mearth on e = 0.05 and an outer one of 10 Mearth
    # on a circle; derive() must call the pair stable just outside and unstable just inside (a part in 1e5)
    m_in, m_out, e_in = 1.0, 10.0, 0.05
    mu_in, mu_out = (float(m * const.M_earth / const.M_sun) for m in (m_in, m_out))

    def a(period, m):
        return (const.G * (const.M_sun + m * const.M_earth) * (period * u.day) ** 2 / (4 * np.pi**2)) ** (1 / 3)

    def margin(ratio):
        total, delta = mu_in + mu_out, float(np.sqrt(a(10.0 * ratio, m_out) / a(10.0, m_in)))
        left = total**-3 * (mu_in + mu_out / delta**2) * (mu_in * np.sqrt(1 - e_in**2) + mu_out * delta) ** 2
        return left - 1 - 3 ** (4 / 3) * mu_in * mu_out / total ** (4 / 3)

    boundary = brentq(margin, 1.001, 2.0, xtol=1e-14)
    for factor, stable in ((1 - 1e-5, False), (1 + 1e-5, True)):
        planets = [dict(name="b", period=10.0, radius=1.0, mass=m_in, eccentricity=e_in),
                   dict(name="c", period=10.0 * boundary * factor, radius=2.0, mass=m_out)]
        assert bool(derive(make_system(planets)).pairs["hill_stable"][0]) == stable, factor
def test_overlap_edge_as_a_period_ratio_matches_keplers_law_with_astropy():
    # the edge a' = a (1 + 1.46 epsilon^(2/7)) (Deck, Payne & Holman 2013), each period from Kepler's third law
    # P = 2 pi sqrt(a^3 / (G (M* + m))) with astropy's constants and units: an independent computation
    import astropy.constants as const
    import astropy.units as u

    star, m_in, m_out = 0.3 * const.M_sun, 4.0 * const.M_earth, 9.0 * const.M_earth
    mu_in, mu_out = float(m_in / star), float(m_out / star)
    epsilon = mu_in + mu_out
    a_in = 0.05 * u.au
    a_out = a_in * (1.0 + 1.46 * epsilon ** (2.0 / 7.0))

    def period(a, m):
        return (2.0 * np.pi * np.sqrt(a**3 / (const.G * (star + m)))).to(u.day)

    expected = float(period(a_out, m_out) / period(a_in, m_in))
    assert dynamics.overlap_period_ratio(epsilon, mu_in, mu_out) == pytest.approx(expected, rel=1e-13)


@pytest.mark.parametrize("masses", [(4.0, 9.0), (9.0, 4.0)])
def test_derive_puts_a_pair_in_the_overlap_zone_exactly_below_the_edge(make_system, masses):
    # the period-ratio edge and the flag from the semi-major axes agree to 1e-9: the mass term
    # sqrt((1 + mu) / (1 + mu')) of Kepler's law (about 1e-5 here) is resolved
    star = dict(name="s", mass=0.3, radius=0.3, teff=3300.0)

    def pair(ratio):
        return derive(make_system([dict(name="b", period=5.0, radius=1.5, mass=masses[0]),
                                   dict(name="c", period=5.0 * ratio, radius=2.0, mass=masses[1])], star=star))

    edge = pair(1.2).pairs["overlap_period_ratio"][0]
    assert pair(edge * (1.0 - 1e-9)).pairs["in_overlap_zone"][0]
    assert not pair(edge * (1.0 + 1e-9)).pairs["in_overlap_zone"][0]
