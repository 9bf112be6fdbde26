"""Orbital geometry: semi-major axes and the closest approach of two orbits."""

from __future__ import annotations

import numpy as np

from .constants import G

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


#: largest eccentricity for which the first-order longitude of closest approach seeds the search
_FIRST_ORDER_E_MAX = 0.1
#: longitudes of the coarse sweep that seeds more eccentric pairs
_SWEEP_SAMPLES = 24


def _refine_extremum(gap, theta, step, iterations: int = 2):
    """Value of ``gap`` at its extremum near ``theta``, found by repeated parabolic fits."""
    for _ in range(iterations):
        g0, g1, g2 = gap(theta - step), gap(theta), gap(theta + step)
        curvature = g0 - 2.0 * g1 + g2
        with np.errstate(divide="ignore", invalid="ignore"):
            shift = np.where(curvature != 0.0, 0.5 * step * (g0 - g2) / curvature, 0.0)
        theta = theta + np.clip(shift, -step, step)
        step = step * 0.25
    return gap(theta)


def closest_orbit_distance(a_in, e_in, omega_in, a_out, e_out, omega_out):
    """Smallest radial gap between two coplanar orbits sharing a focus.

    The gap at a common longitude theta is g = r_out(theta) - r_in(theta),
    r = a (1 - e^2) / (1 + e cos(theta - omega)). To first order in e,
    g = (a_out - a_in) - |C| cos(theta - arg C) with
    C = a_out e_out exp(i omega_out) - a_in e_in exp(i omega_in) (the
    classic minimum orbital separation of nearly circular orbits, e.g.
    Murray & Dermott 1999, section 2.5 expansions); that longitude seeds
    parabolic refinement on the exact radii (a coarse sweep of 24 longitudes,
    192 beyond e = 0.6, seeds pairs with e > 0.1, where the gap may have two
    minima). Zero where the orbits cross.
    Exact, |a_out - a_in|, for circular orbits; for eccentric ones it
    ignores the small mutual inclination of compact transiting systems
    (common practice).

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
    result = np.array(np.abs(a_out - a_in), dtype=float)
    eccentric = (e_in != 0.0) | (e_out != 0.0)
    if not eccentric.any():
        return result
    a_i, e_i, w_i, a_o, e_o, w_o = (x[eccentric] for x in (a_in, e_in, omega_in, a_out, e_out, omega_out))

    semi_latus_i, semi_latus_o = a_i * (1.0 - e_i**2), a_o * (1.0 - e_o**2)

    def gap(theta, pick=slice(None)):
        return (semi_latus_o[pick] / (1.0 + e_o[pick] * np.cos(theta - w_o[pick]))
                - semi_latus_i[pick] / (1.0 + e_i[pick] * np.cos(theta - w_i[pick])))

    seed = np.angle(a_o * e_o * np.exp(1j * w_o) - a_i * e_i * np.exp(1j * w_i))
    step = np.full(seed.shape, 0.3)
    # beyond small e the gap can have two minima: seed those pairs from a coarse sweep
    wide = np.maximum(e_i, e_o) > _FIRST_ORDER_E_MAX
    if wide.any():
        count = _SWEEP_SAMPLES if np.max(np.maximum(e_i, e_o)) <= 0.6 else 8 * _SWEEP_SAMPLES
        sweep = np.linspace(0.0, 2.0 * np.pi, count, endpoint=False)
        sampled = gap(sweep, (wide, None))
        seed[wide] = sweep[np.argmin(sampled, axis=-1)]
        step[wide] = 2.0 * np.pi / count
    low = _refine_extremum(gap, seed, step)
    distance = np.maximum(low, 0.0)
    # where the smallest gap is not positive, the orbits cross unless the whole
    # "outer" orbit lies inside the inner one: look at the largest gap as well
    inside = low <= 0.0
    if inside.any():
        pick = np.flatnonzero(inside)
        sweep = np.linspace(0.0, 2.0 * np.pi, 8 * _SWEEP_SAMPLES, endpoint=False)
        high_seed = sweep[np.argmax(gap(sweep, (pick, None)), axis=-1)]
        high = -_refine_extremum(lambda t: -gap(t, pick), high_seed, np.full(pick.size, 2.0 * np.pi / sweep.size))
        distance[pick] = np.where(high < 0.0, -high, 0.0)
    result[eccentric] = distance
    return result
