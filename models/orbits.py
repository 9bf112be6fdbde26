"""Orbital geometry: semi-major axes and the closest approach of two orbits."""

from __future__ import annotations

import numpy as np

from .constants import G

#: longitudes at which two orbits are compared for their closest approach
_LONGITUDE_SAMPLES = 181


def semi_major_axis(period_s, total_mass_kg):
    """Semi-major axis from Kepler's third law.

    a = (G (M* + Mp) P^2 / (4 pi^2))^(1/3)  (Kepler's third law, Newton's form).

    Parameters
    ----------
    period_s : array_like
        Orbital period [s].
    total_mass_kg : array_like
        Sum of the stellar and planetary masses [kg].

    Returns
    -------
    ndarray
        Semi-major axis [m].
    """
    period_s = np.asarray(period_s, dtype=float)
    return np.cbrt(G * np.asarray(total_mass_kg, dtype=float) * period_s**2 / (4.0 * np.pi**2))


def orbital_radius(a, e, true_anomaly):
    """Distance from the focus on a Keplerian ellipse.

    r = a (1 - e^2) / (1 + e cos f)  (Murray & Dermott 1999, eq. 2.20).

    Parameters
    ----------
    a : array_like
        Semi-major axis (any length unit; the result has the same unit).
    e : array_like
        Eccentricity, 0 <= e < 1.
    true_anomaly : array_like
        True anomaly f [rad].
    """
    return a * (1.0 - e**2) / (1.0 + e * np.cos(true_anomaly))


def closest_orbit_distance(a_in, e_in, omega_in, a_out, e_out, omega_out):
    """Smallest distance between two coplanar orbits at the same longitude.

    Both ellipses are sampled at common longitudes theta (measured from the
    line of nodes), with each planet's true anomaly f = theta - omega, and
    the smallest |r_out - r_in| is returned; zero where the orbits cross.
    For circular orbits this is exactly |a_out - a_in|; for eccentric ones
    it is an upper bound of the true minimum that is close for the small
    mutual inclinations of compact transiting systems (common practice).

    Parameters
    ----------
    a_in, e_in, omega_in, a_out, e_out, omega_out : array_like
        Semi-major axes (any common length unit), eccentricities and
        arguments of periastron [rad] of the two orbits; broadcast together.

    Returns
    -------
    ndarray
        Closest distance, in the unit of the semi-major axes.
    """
    a_in, e_in, omega_in, a_out, e_out, omega_out = np.broadcast_arrays(
        *(np.asarray(x, dtype=float) for x in (a_in, e_in, omega_in, a_out, e_out, omega_out)))
    circular = (e_in == 0.0) & (e_out == 0.0)
    result = np.abs(a_out - a_in)
    if circular.all():
        return result
    theta = np.linspace(0.0, 2.0 * np.pi, _LONGITUDE_SAMPLES)
    r_in = orbital_radius(a_in[..., None], e_in[..., None], theta - omega_in[..., None])
    r_out = orbital_radius(a_out[..., None], e_out[..., None], theta - omega_out[..., None])
    gap = r_out - r_in
    crossing = (gap.min(axis=-1) <= 0.0) & (gap.max(axis=-1) >= 0.0)
    sampled = np.where(crossing, 0.0, np.abs(gap).min(axis=-1))
    return np.where(circular, result, sampled)
