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


#: largest eccentricity for which the first-order longitude of closest approach seeds the search
_FIRST_ORDER_E_MAX = 0.1
#: longitudes of the coarse sweep that seeds more eccentric pairs (and the search for the largest gap),
#: and the eccentricity beyond which a pair is swept eight times as finely
_SWEEP_SAMPLES = 24
_COARSE_SWEEP_E_MAX = 0.6
#: Newton steps from the first-order seed (pairs with e <= 0.1; exact to rounding) and from a sweep's best longitude
NEWTON_STEPS = 3
_NEWTON_STEPS_WIDE = 6
#: pairs searched at once by :func:`closest_orbit_distance` (bounds the memory of the search)
_BLOCK = 16_384


def _orbit_terms(a, e, omega):
    """Per-orbit terms of the gap: semi-latus rectum, e cos omega, e sin omega, and e."""
    return a * (1.0 - e**2), e * np.cos(omega), e * np.sin(omega), e


def _side_terms(cx, cy, latus, e_cos, e_sin):
    """One orbit along the unit vector (cx, cy) = (cos theta, sin theta): E and F (e cos and
    e sin of theta - omega), the radius r and its first two derivatives in theta."""
    cos_term = cx * e_cos
    cos_term += cy * e_sin
    sin_term = cy * e_cos
    sin_term -= cx * e_sin
    q = 1.0 / (1.0 + cos_term)
    r = latus * q
    tilt = sin_term * q                                   # r' = r F q
    curvature = tilt * tilt
    curvature *= 2.0
    curvature += q * cos_term
    curvature *= r                                        # r'' = r (q E + 2 (F q)^2)
    tilt *= r
    return cos_term, sin_term, r, tilt, curvature


def _gap_at(c, s, inner, outer, derivatives: bool = True):
    """Radial gap r_out - r_in along the unit vector (c, s) = (cos theta, sin theta).

    With ``derivatives``, also its first and second derivatives in theta.
    ``inner``, ``outer`` are :func:`_orbit_terms`; r = p / (1 + e cos(theta - omega)).
    """
    (p_i, ec_i, es_i, _), (p_o, ec_o, es_o, _) = inner, outer
    if not derivatives:
        return p_o / (1.0 + (c * ec_o + s * es_o)) - p_i / (1.0 + (c * ec_i + s * es_i))
    (*_, r_i, slope_i, curv_i), (*_, r_o, slope_o, curv_o) = (
        _side_terms(c, s, p, ec, es) for p, ec, es in ((p_i, ec_i, es_i), (p_o, ec_o, es_o)))
    return r_o - r_i, slope_o - slope_i, curv_o - curv_i


def _newton(c, s, inner, outer, steps: int, sign: float = 1.0):
    """Newton steps towards an extremum of sign * gap (a minimum for +1, a maximum for -1).

    The longitude is carried as a unit vector turned by each step (cosine and
    sine of the turn from their series to fifth order), so no trigonometric
    function is evaluated per pair. Returns the exact gap at the final
    longitude.
    """
    for _ in range(steps):
        _, slope, curvature = _gap_at(c, s, inner, outer)
        with np.errstate(divide="ignore", invalid="ignore"):
            turn = np.where(sign * curvature > 0.0, np.clip(-slope / curvature, -0.5, 0.5), 0.0)
        # turns below 1e-8 rad change the gap by ~1e-16 a; zeroing them keeps the powers
        # below from reaching subnormal floats, on which the CPU is a hundred times slower
        turn = np.where(np.abs(turn) < 1e-8, 0.0, turn)
        if not turn.any():  # converged everywhere (always so for circular orbits)
            break
        turn2 = turn * turn
        cos_t = 1.0 - turn2 * (0.5 - turn2 / 24.0)
        sin_t = turn * (1.0 - turn2 * (1.0 / 6.0 - turn2 / 120.0))
        c, s = c * cos_t - s * sin_t, s * cos_t + c * sin_t
    length = np.sqrt(c * c + s * s)
    return _gap_at(c / length, s / length, inner, outer, derivatives=False)


def _sweep(inner, outer, count: int, pick):
    """Gap at ``count`` longitudes for the pairs ``pick``: (longitudes, gaps shaped (pairs, count))."""
    theta = np.linspace(0.0, 2.0 * np.pi, count, endpoint=False)
    column = (pick, None)
    gaps = _gap_at(np.cos(theta), np.sin(theta), tuple(t[column] for t in inner),
                   tuple(t[column] for t in outer), derivatives=False)
    return theta, gaps


def _smallest_gap(inner, outer, steps: int):
    """Smallest radial gap r_out - r_in of each pair (negative where the orbits cross).

    Pairs with both e <= 0.1, whose gap has a single minimum, start at the
    first-order longitude arg C; the others at the least of a sweep of
    longitudes (where the gap may have two minima). The value is the exact
    gap at the longitude reached, so never below the true minimum.
    """
    (p_i, ec_i, es_i, e_i), (p_o, ec_o, es_o, e_o) = inner, outer
    cx = p_o / (1.0 - e_o**2) * ec_o - p_i / (1.0 - e_i**2) * ec_i     # C = a_out e_out e^(i w_out) - a_in ...
    cy = p_o / (1.0 - e_o**2) * es_o - p_i / (1.0 - e_i**2) * es_i
    norm = np.sqrt(cx * cx + cy * cy)   # not np.hypot, which is many times slower (no SIMD loop)
    flat = norm == 0.0
    norm = np.where(flat, 1.0, norm)
    c, s = np.where(flat, 1.0, cx / norm), cy / norm
    largest_e = np.maximum(e_i, e_o)
    wide = np.flatnonzero(largest_e > _FIRST_ORDER_E_MAX)
    if not wide.size:
        return _newton(c, s, inner, outer, steps)
    swept = np.empty(wide.size, dtype=c.dtype)
    # each pair is swept as finely as its own eccentricity needs (a few very eccentric
    # draws must not make every eccentric pair take the fine sweep)
    very = largest_e[wide] > _COARSE_SWEEP_E_MAX
    for part, count in ((~very, _SWEEP_SAMPLES), (very, 8 * _SWEEP_SAMPLES)):
        if part.any():
            theta, gaps = _sweep(inner, outer, count, wide[part])
            best = theta[np.argmin(gaps, axis=1)]
            c[wide[part]], s[wide[part]] = np.cos(best), np.sin(best)
            swept[part] = gaps.min(axis=1)
    low = _newton(c, s, inner, outer, max(steps, _NEWTON_STEPS_WIDE))
    low[wide] = np.minimum(low[wide], swept)   # a step gone astray never beats the sweep
    return low


def _distance_from_gaps(low, inner, outer):
    """Closest distance from the smallest gap: itself where positive; where not, zero
    for crossing orbits, or minus the largest gap when the whole "outer" orbit
    lies inside the inner one."""
    distance = np.maximum(low, 0.0)
    # the mean of r over longitude is a sqrt(1 - e^2): where the "outer" orbit's
    # mean is not below the inner one's, the largest gap is not negative either
    p_i, e_i, p_o, e_o = inner[0], inner[3], outer[0], outer[3]
    inside = np.flatnonzero((low <= 0.0) & (p_o / np.sqrt(1.0 - e_o**2) < p_i / np.sqrt(1.0 - e_i**2)))
    if inside.size:
        theta, gaps = _sweep(inner, outer, 8 * _SWEEP_SAMPLES, inside)
        best = theta[np.argmax(gaps, axis=1)]
        pick_in, pick_out = tuple(t[inside] for t in inner), tuple(t[inside] for t in outer)
        high = np.maximum(_newton(np.cos(best), np.sin(best), pick_in, pick_out, _NEWTON_STEPS_WIDE, sign=-1.0),
                          gaps.max(axis=1))
        distance[inside] = np.where(high < 0.0, -high, 0.0)
    return distance


def closest_orbit_distance(a_in, e_in, omega_in, a_out, e_out, omega_out, steps: int = NEWTON_STEPS):
    """Smallest distance between two coplanar orbits sharing a focus.

    The radial gap at a common longitude theta is g = r_out(theta) - r_in(theta),
    r = a (1 - e^2) / (1 + e cos(theta - omega)). To first order in e,
    g = (a_out - a_in) - |C| cos(theta - arg C) with
    C = a_out e_out exp(i omega_out) - a_in e_in exp(i omega_in) (the
    classic minimum orbital separation of nearly circular orbits, e.g.
    Murray & Dermott 1999, section 2.5 expansions); that longitude seeds
    Newton steps on dg/dtheta = 0 with the exact radii (a coarse sweep of 24
    longitudes, 192 beyond e = 0.6, seeds pairs with e > 0.1, where the gap
    may have two minima). Zero where the orbits cross.
    Exact, |a_out - a_in|, for circular orbits; for eccentric ones it
    ignores the small mutual inclination of compact transiting systems
    (common practice).

    Parameters
    ----------
    a_in, e_in, omega_in, a_out, e_out, omega_out : array_like
        Semi-major axes (any common length unit), eccentricities and
        arguments of periastron [rad] of the two orbits; broadcast together.
    steps : int
        Newton steps from the first-order seed: 3 reach rounding error for
        e <= 0.1; 1 leaves an error mostly below 1e-6 a there, but up to
        ~1e-4 a where the two orbits' a e vectors nearly cancel (the seed
        is then poor).

    Returns
    -------
    ndarray
        Closest distance, in the unit of the semi-major axes.
    """
    arrays = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (a_in, e_in, omega_in, a_out, e_out, omega_out)))
    shape = arrays[0].shape
    inner = _orbit_terms(*(x.ravel() for x in arrays[:3]))
    outer = _orbit_terms(*(x.ravel() for x in arrays[3:]))
    distance = np.empty(inner[0].size)
    # in blocks: the search makes many passes over its arrays, whose size this bounds
    for start in range(0, distance.size, _BLOCK):
        block = slice(start, start + _BLOCK)
        part_in, part_out = tuple(t[block] for t in inner), tuple(t[block] for t in outer)
        distance[block] = _distance_from_gaps(_smallest_gap(part_in, part_out, steps), part_in, part_out)
    return distance.reshape(shape)
