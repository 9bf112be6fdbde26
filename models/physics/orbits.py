"""Orbital geometry: semi-major axes and the closest approach of two orbits."""

from __future__ import annotations

import numpy as np

from ..constants import G


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
    return np.cbrt(G * np.asarray(total_mass_kg) * np.asarray(period_s) ** 2 / (4.0 * np.pi**2))


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


#: longitudes of the sweep that seeds the search for the closest points of two orbits
SWEEP_LONGITUDES = 96
#: Newton steps on the two longitudes of the closest points
NEWTON_STEPS = 8
#: eccentricity beyond which the closest points are seeded from a grid of both longitudes (the
#: smallest radial gap can then lie far from them), its size, and the pairs gridded at once
_GRID_E_MIN = 0.3
_GRID_LONGITUDES = 48
_GRID_BLOCK = 256
#: pairs searched at once by :func:`closest_orbit_distance` (bounds the memory of the search)
_BLOCK = 8_192


def _point_and_derivatives(theta, latus, e, omega):
    """A conic r = p / (1 + e cos(theta - omega)) sharing the focus at the origin: the point at
    longitude ``theta`` and its first and second derivatives in theta, each an (x, y) pair
    (Murray & Dermott 1999, eq. 2.20)."""
    u = theta - omega
    cos_u, sin_u = np.cos(u), np.sin(u)
    d = 1.0 + e * cos_u
    r = latus / d
    dr = latus * e * sin_u / d**2
    d2r = latus * e * (cos_u * d + 2.0 * e * sin_u**2) / d**3
    cos_t, sin_t = np.cos(theta), np.sin(theta)
    point = (r * cos_t, r * sin_t)
    first = (dr * cos_t - r * sin_t, dr * sin_t + r * cos_t)
    second = ((d2r - r) * cos_t - 2.0 * dr * sin_t, (d2r - r) * sin_t + 2.0 * dr * cos_t)
    return point, first, second


def _grid_seed(p_in, e_in, w_in, p_out, e_out, w_out):
    """The pair of longitudes, on a grid of both, of the closest points of each pair of orbits."""
    theta = np.linspace(0.0, 2.0 * np.pi, _GRID_LONGITUDES, endpoint=False)
    column = (slice(None), None)
    (x1, y1), _, _ = _point_and_derivatives(theta, p_in[column], e_in[column], w_in[column])
    (x2, y2), _, _ = _point_and_derivatives(theta, p_out[column], e_out[column], w_out[column])
    squared = (x1[:, :, None] - x2[:, None, :]) ** 2 + (y1[:, :, None] - y2[:, None, :]) ** 2
    i, j = np.unravel_index(np.argmin(squared.reshape(len(p_in), -1), axis=1), squared.shape[1:])
    return theta[i], theta[j]


def _radial_gap(theta, p_in, e_in, w_in, p_out, e_out, w_out):
    """r_out - r_in at the longitudes ``theta`` (Murray & Dermott 1999, eq. 2.20)."""
    return p_out / (1.0 + e_out * np.cos(theta - w_out)) - p_in / (1.0 + e_in * np.cos(theta - w_in))


def _closest_block(a_in, e_in, w_in, a_out, e_out, w_out):
    """:func:`closest_orbit_distance` of one block of flat arrays."""
    distance = np.abs(a_out - a_in)          # two circles: along any ray
    # a circle about the focus and an ellipse: the circle's nearest point to any point lies on that
    # point's ray, so the distance is the least radial gap, at the ellipse's periastron or apoastron
    # (zero where the circle's radius lies between them: the orbits cross)
    one_circle = np.flatnonzero((e_in > 0.0) != (e_out > 0.0))
    if one_circle.size:
        inner_eccentric = e_in[one_circle] > 0.0
        radius = np.where(inner_eccentric, a_out[one_circle], a_in[one_circle])
        a = np.where(inner_eccentric, a_in[one_circle], a_out[one_circle])
        e = np.maximum(e_in[one_circle], e_out[one_circle])
        periastron, apoastron = a * (1.0 - e), a * (1.0 + e)
        distance[one_circle] = np.maximum(np.maximum(periastron - radius, radius - apoastron), 0.0)
    eccentric = np.flatnonzero((e_in > 0.0) & (e_out > 0.0))
    if not eccentric.size:
        return distance
    a_in, e_in, w_in, a_out, e_out, w_out = (x[eccentric] for x in (a_in, e_in, w_in, a_out, e_out, w_out))
    p_in, p_out = a_in * (1.0 - e_in**2), a_out * (1.0 - e_out**2)
    orbits = (p_in, e_in, w_in, p_out, e_out, w_out)
    # to first order in e the radial gap is (a_out - a_in) - |C| cos(theta - arg C), with
    # C = a_out e_out exp(i w_out) - a_in e_in exp(i w_in), least at arg C (the classic minimum
    # separation of nearly circular orbits); pairs where that first-order gap is not clearly
    # positive, or that are eccentric, are swept in longitude instead
    cx = a_out * e_out * np.cos(w_out) - a_in * e_in * np.cos(w_in)
    cy = a_out * e_out * np.sin(w_out) - a_in * e_in * np.sin(w_in)
    # where the "outer" orbit is the smaller one the gap is negative, least in size opposite arg C
    t_in = np.arctan2(cy, cx) + np.where(a_out < a_in, np.pi, 0.0)
    largest_e = np.maximum(e_in, e_out)
    first_order_gap = np.abs(a_out - a_in) - np.sqrt(cx * cx + cy * cy)
    doubtful = np.flatnonzero((largest_e > 0.1) | (first_order_gap < 4.0 * np.maximum(a_in, a_out) * largest_e**2))
    crossing = np.zeros(a_in.size, dtype=bool)
    if doubtful.size:
        theta = np.linspace(0.0, 2.0 * np.pi, SWEEP_LONGITUDES, endpoint=False)
        column = (doubtful, None)
        gap = _radial_gap(theta, *(x[column] for x in orbits))
        # the radial gap changes sign where the orbits cross
        crossing[doubtful] = (gap.min(axis=1) <= 0.0) & (gap.max(axis=1) >= 0.0)
        t_in[doubtful] = theta[np.argmin(np.abs(gap), axis=1)]
    t_out = t_in.copy()
    wide = np.flatnonzero(~crossing & (largest_e > _GRID_E_MIN))
    for start in range(0, wide.size, _GRID_BLOCK):
        pick = wide[start:start + _GRID_BLOCK]
        t_in[pick], t_out[pick] = _grid_seed(*(x[pick] for x in orbits))
    best = np.abs(_radial_gap(t_in, *orbits))
    for _ in range(NEWTON_STEPS):
        (x1, y1), (dx1, dy1), (ddx1, ddy1) = _point_and_derivatives(t_in, p_in, e_in, w_in)
        (x2, y2), (dx2, dy2), (ddx2, ddy2) = _point_and_derivatives(t_out, p_out, e_out, w_out)
        gx, gy = x1 - x2, y1 - y2
        best = np.minimum(best, np.sqrt(gx * gx + gy * gy))
        # Newton on the squared distance |P_in(t_in) - P_out(t_out)|^2 (halved)
        g1, g2 = gx * dx1 + gy * dy1, -(gx * dx2 + gy * dy2)
        h11 = dx1 * dx1 + dy1 * dy1 + gx * ddx1 + gy * ddy1
        h22 = dx2 * dx2 + dy2 * dy2 - gx * ddx2 - gy * ddy2
        h12 = -(dx1 * dx2 + dy1 * dy2)
        det = h11 * h22 - h12 * h12
        usable = (det > 0.0) & (h11 > 0.0)
        safe = np.where(usable, det, 1.0)
        step_in = np.where(usable, -(h22 * g1 - h12 * g2) / safe, 0.0)
        step_out = np.where(usable, -(h11 * g2 - h12 * g1) / safe, 0.0)
        t_in, t_out = t_in + np.clip(step_in, -0.3, 0.3), t_out + np.clip(step_out, -0.3, 0.3)
    (x1, y1), _, _ = _point_and_derivatives(t_in, p_in, e_in, w_in)
    (x2, y2), _, _ = _point_and_derivatives(t_out, p_out, e_out, w_out)
    best = np.minimum(best, np.sqrt((x1 - x2) ** 2 + (y1 - y2) ** 2))
    distance[eccentric] = np.where(crossing, 0.0, best)
    return distance


def closest_orbit_distance(a_in, e_in, omega_in, a_out, e_out, omega_out):
    """Smallest distance between two coplanar orbits sharing a focus (zero where they cross).

    The orbits cross where the radial gap r_out(theta) - r_in(theta) at a
    common longitude changes sign, r = a (1 - e^2) / (1 + e cos(theta - omega))
    (Murray & Dermott 1999, eq. 2.20). Otherwise the closest points need not
    lie at one longitude: the distance |P_in(t_in) - P_out(t_out)| is
    minimised over both longitudes by Newton steps, seeded at the
    first-order longitude of the least gap for nearly circular orbits, by a
    sweep of 96 longitudes (and, beyond e = 0.3, a grid of both) for the
    others. Exact for circular orbits, |a_out - a_in|, and for a circle of
    radius R and an ellipse, max(a (1 - e) - R, R - a (1 + e), 0): the
    circle's nearest point to any point lies on that point's ray. It
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
    arrays = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (a_in, e_in, omega_in, a_out, e_out, omega_out)))
    shape = arrays[0].shape
    flat = [x.ravel() for x in arrays]
    distance = np.empty(flat[0].size)
    for start in range(0, distance.size, _BLOCK):
        block = slice(start, start + _BLOCK)
        distance[block] = _closest_block(*(x[block] for x in flat))
    return distance.reshape(shape)
