"""Dynamical spacing, Hill stability, first-order resonance overlap and tidal evolution."""

from __future__ import annotations

import numpy as np

from ..constants import G

#: spacing below which two planets are Hill unstable on circular orbits (Gladman 1993)
HILL_STABLE_SPACING = 2.0 * np.sqrt(3.0)

#: Deck, Payne & Holman 2013 (ApJ 774, 129): first-order resonances of two planets on nearly
#: circular orbits overlap for (a' - a) / a < 1.46 epsilon^(2/7), epsilon = (m + m') / M*
OVERLAP_COEFFICIENT = 1.46
OVERLAP_EXPONENT = 2.0 / 7.0

# Gladman et al. 1996 (Icarus 122, 166) fiducial values for a rocky body
TIDAL_Q = 100.0
TIDAL_LOVE_K2 = 0.3
MOMENT_OF_INERTIA_FACTOR = 0.4       # uniform sphere, I = 0.4 M R^2
INITIAL_SPIN_PERIOD_S = 12.0 * 3600.0  # assumed primordial spin, 12 h


def hill_radius(a, eccentricity, planet_mass, star_mass):
    """Hill radius at periastron.

    r_H = a (1 - e) (m / (3 M*))^(1/3) (Hamilton & Burns 1992, Icarus 96, 43).

    Parameters
    ----------
    a : array_like
        Semi-major axis (the result takes its unit).
    eccentricity : array_like
        Eccentricity.
    planet_mass, star_mass : array_like
        Masses in one common unit.
    """
    return a * (1.0 - eccentricity) * np.cbrt(planet_mass / (3.0 * star_mass))


def mutual_hill_radius(a_in, a_out, m_in, m_out, star_mass):
    """Mutual Hill radius of two planets.

    R_H,m = ((m_in + m_out) / (3 M*))^(1/3) (a_in + a_out) / 2
    (Chambers, Wetherill & Boss 1996, Icarus 119, 261, eq. 1).

    Parameters
    ----------
    a_in, a_out : array_like
        Semi-major axes (the result takes their unit).
    m_in, m_out, star_mass : array_like
        Masses in one common unit.
    """
    return np.cbrt((m_in + m_out) / (3.0 * star_mass)) * 0.5 * (a_in + a_out)


def mutual_hill_spacing(a_in, a_out, m_in, m_out, star_mass):
    """Orbital separation in mutual Hill radii, (a_out - a_in) / R_H,m.

    Chambers et al. 1996; below 2 sqrt(3) two planets on circular orbits are
    not Hill stable (Gladman 1993, Icarus 106, 247).
    """
    return (a_out - a_in) / mutual_hill_radius(a_in, a_out, m_in, m_out, star_mass)


def gladman_hill_stable(a_in, a_out, e_in, e_out, mu_in, mu_out):
    """Hill stability of two planets on coplanar eccentric orbits (Gladman 1993, Icarus 106, 247).

    Hill stable (no close approach ever) when
    lambda^-3 (mu1 + mu2 / delta^2) (mu1 gamma1 + mu2 gamma2 delta)^2 > 1 + 3^(4/3) mu1 mu2 / lambda^(4/3),
    with mu_i = m_i / M*, lambda = mu1 + mu2, gamma_i = sqrt(1 - e_i^2) and
    delta = sqrt(a2 / a1) (Gladman's criterion for eccentric orbits, to first order in the masses).
    For circular orbits it reduces to a2 - a1 > 2 sqrt(3) mutual Hill radii.

    Parameters
    ----------
    a_in, a_out : array_like
        Semi-major axes in one unit, a_in < a_out.
    e_in, e_out : array_like
        Eccentricities.
    mu_in, mu_out : array_like
        Planet masses over the star's.

    Returns
    -------
    ndarray of bool
    """
    total = mu_in + mu_out
    delta = np.sqrt(a_out / a_in)
    gamma_in, gamma_out = np.sqrt(1.0 - e_in**2), np.sqrt(1.0 - e_out**2)
    left = total**-3 * (mu_in + mu_out / delta**2) * (mu_in * gamma_in + mu_out * gamma_out * delta) ** 2
    return left > 1.0 + 3.0 ** (4.0 / 3.0) * mu_in * mu_out / total ** (4.0 / 3.0)


def overlap_spacing(epsilon):
    """Spacing (a' - a) / a below which first-order resonances overlap: 1.46 epsilon^(2/7).

    Deck, Payne & Holman 2013 (ApJ 774, 129) for two massive planets on
    nearly circular orbits (e up to ~0.1 in their integrations), epsilon =
    (m + m') / M*; inside it the motion is chaotic and the pair is expected
    to be unstable.
    """
    return OVERLAP_COEFFICIENT * np.asarray(epsilon) ** OVERLAP_EXPONENT


def overlap_period_ratio(epsilon, mu_inner, mu_outer):
    """Period ratio P'/P at the edge of the zone of overlapping first-order resonances.

    The edge (a' - a) / a = 1.46 epsilon^(2/7) of :func:`overlap_spacing`
    (Deck, Payne & Holman 2013, ApJ 774, 129) taken through Kepler's third
    law with each planet's own mass, P^2 = 4 pi^2 a^3 / (G (M* + m)), as the
    semi-major axes are derived:
    P'/P = (1 + 1.46 epsilon^(2/7))^(3/2) sqrt((1 + mu) / (1 + mu')).
    A pair whose period ratio lies below it is inside the zone (nearly
    circular orbits).

    Parameters
    ----------
    epsilon : array_like
        (m + m') / M*.
    mu_inner, mu_outer : array_like
        m / M* and m' / M*.
    """
    return (1.0 + overlap_spacing(epsilon)) ** 1.5 * np.sqrt((1.0 + mu_inner) / (1.0 + mu_outer))


def in_overlap_zone(a_in, a_out, epsilon):
    """Whether a pair lies inside the first-order resonance-overlap zone of :func:`overlap_spacing`."""
    return (a_out - a_in) / a_in < overlap_spacing(epsilon)


def tidal_locking_time(a_m, planet_mass_kg, planet_radius_m, star_mass_kg,
                       initial_spin_rad_s=2.0 * np.pi / INITIAL_SPIN_PERIOD_S,
                       q=TIDAL_Q, k2=TIDAL_LOVE_K2, inertia_factor=MOMENT_OF_INERTIA_FACTOR):
    """Time for a planet's spin to be locked by the star's tides.

    t_lock = omega a^6 I Q / (3 G M*^2 k2 R^5), I = alpha m R^2
    (Gladman et al. 1996, Icarus 122, 166, eq. 9; Peale 1977). With the
    fiducial Q = 100, k2 = 0.3, alpha = 0.4 and a 12 h initial spin, the
    result is an order-of-magnitude estimate only.

    Parameters
    ----------
    a_m : array_like
        Semi-major axis [m].
    planet_mass_kg, planet_radius_m, star_mass_kg : array_like
        Planet mass [kg] and radius [m], star mass [kg].

    Returns
    -------
    ndarray
        Locking time [s].
    """
    moment_of_inertia = inertia_factor * planet_mass_kg * planet_radius_m**2
    return (initial_spin_rad_s * a_m**6 * moment_of_inertia * q
            / (3.0 * G * star_mass_kg**2 * k2 * planet_radius_m**5))
