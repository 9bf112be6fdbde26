"""Orbital geometry: semi-major axes and the closest approach of two orbits."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .constants import G, M_SUN, YEAR


#: semi-major axis [m] of a one-year orbit about one solar mass
_KEPLER_LENGTH = float(np.cbrt(G * M_SUN * YEAR**2 / (4.0 * np.pi**2)))


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
        Semi-major axis [m]; single precision where both inputs are.
    """
    dtype = np.result_type(period_s, total_mass_kg, np.float32)
    # in units of the Sun's mass and a year, so that single precision cannot overflow
    period = np.asarray(period_s, dtype=dtype) / YEAR
    mass = np.asarray(total_mass_kg, dtype=dtype) / M_SUN
    return _KEPLER_LENGTH * np.cbrt(mass * period * period)


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
#: pairs searched at once by :func:`closest_distance_of_pairs`, and the fewest whose Newton steps run in float32
_BLOCK = 16_384
_SINGLE_PRECISION_MIN = 2_048


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
    function is evaluated per pair. For more than a few thousand pairs the
    steps run in single precision, which places the longitude to ~1e-7 rad;
    the gap there, evaluated in the inputs' precision, is then off the
    extremum by ~a e 1e-14 only (the gap is flat at an extremum). Returns the
    exact gap at the final longitude.
    """
    precision, full_inner, full_outer = c.dtype, inner, outer
    if c.size >= _SINGLE_PRECISION_MIN:  # below this, converting costs more than it saves
        c, s = c.astype(np.float32), s.astype(np.float32)
        inner = tuple(t.astype(np.float32, copy=False) for t in inner)
        outer = tuple(t.astype(np.float32, copy=False) for t in outer)
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
    c, s = c.astype(precision), s.astype(precision)
    length = np.sqrt(c * c + s * s)
    return _gap_at(c / length, s / length, full_inner, full_outer, derivatives=False)


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
        is then poor; :func:`closest_distance_of_draws` searches those again).

    Returns
    -------
    ndarray
        Closest distance, in the unit of the semi-major axes.
    """
    arrays = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (a_in, e_in, omega_in, a_out, e_out, omega_out)))
    shape = arrays[0].shape
    a_in, e_in, omega_in, a_out, e_out, omega_out = (x.ravel() for x in arrays)
    inner, outer = _orbit_terms(a_in, e_in, omega_in), _orbit_terms(a_out, e_out, omega_out)
    return _distance_from_gaps(_smallest_gap(inner, outer, steps), inner, outer).reshape(shape)


def closest_distance_of_pairs(a, e, omega, inner_index, outer_index, steps: int = NEWTON_STEPS):
    """:func:`closest_orbit_distance` for pairs of orbits picked from per-orbit arrays.

    Parameters
    ----------
    a, e, omega : ndarray, shape (..., orbits)
        Semi-major axes, eccentricities and arguments of periastron [rad];
        float32 arrays are worked on in single precision.
    inner_index, outer_index : ndarray of int
        The two orbits of each pair (last axis).
    steps : int
        As for :func:`closest_orbit_distance`.

    Returns
    -------
    ndarray, shape (..., pairs)
    """
    dtype = np.result_type(a, e, omega, np.float32)   # single precision stays single
    a, e, omega = (np.asarray(x, dtype=dtype) for x in (a, e, omega))
    orbit_shape = np.broadcast_shapes(a.shape, e.shape, omega.shape)
    terms = tuple(np.broadcast_to(t, orbit_shape) for t in _orbit_terms(a, e, omega))
    inner = tuple(np.take(t, inner_index, axis=-1).ravel() for t in terms)   # take: contiguous, so ravel copies nothing
    outer = tuple(np.take(t, outer_index, axis=-1).ravel() for t in terms)
    distance = np.empty(inner[0].size, dtype=inner[0].dtype)
    # blocks small enough for the CPU cache: the search makes many passes over its arrays
    for start in range(0, distance.size, _BLOCK):
        block = slice(start, start + _BLOCK)
        part_in, part_out = tuple(t[block] for t in inner), tuple(t[block] for t in outer)
        distance[block] = _distance_from_gaps(_smallest_gap(part_in, part_out, steps), part_in, part_out)
    return distance.reshape(orbit_shape[:-1] + np.shape(inner_index))


#: turns of the Newton step beyond which a draw's pair is searched again in full (the
#: first-order seed was poor: the two orbits' a e vectors nearly cancel)
_LARGE_TURN = 0.2


@dataclass(frozen=True)
class DrawOrbits:
    """Per-orbit terms of many Monte Carlo draws for :func:`closest_distance_of_draws`.

    Every array is shaped (orbits, samples), orbit-major so that picking the
    orbits of a pair copies whole rows, in single precision (~1e-7 relative,
    far under the spread of the draws). Build it with :meth:`of`.
    """

    a: np.ndarray
    e: np.ndarray
    omega: np.ndarray
    latus: np.ndarray       # a (1 - e^2)
    e_cos: np.ndarray       # e cos omega
    e_sin: np.ndarray       # e sin omega
    ae_cos: np.ndarray      # a e cos omega
    ae_sin: np.ndarray      # a e sin omega
    wide: np.ndarray        # e > 0.1: the first-order seed may miss a second minimum
    circular: np.ndarray    # per orbit: e = 0 in every draw

    @classmethod
    def of(cls, a, e, omega) -> "DrawOrbits":
        """Terms of orbits with semi-major axes ``a``, eccentricities ``e`` and arguments of
        periastron ``omega`` [rad], each (orbits, samples) or broadcasting to it."""
        a, e, omega = np.broadcast_arrays(*(np.asarray(x, dtype=np.float32) for x in (a, e, omega)))
        e_cos, e_sin = e * np.cos(omega), e * np.sin(omega)
        return cls(a, e, omega, a * (1.0 - e * e), e_cos, e_sin, a * e_cos, a * e_sin, e > _FIRST_ORDER_E_MAX,
                   ~e.any(axis=1))


def closest_distance_of_draws(orbits: DrawOrbits, inner_index, outer_index):
    """:func:`closest_orbit_distance` of many Monte Carlo draws of pairs, one Newton step, single precision.

    The search of :func:`closest_orbit_distance` with one Newton step,
    written with as few array passes as it can be: the seed direction is
    the first-order longitude arg C, one Newton step on dg/dtheta = 0 turns
    it by t, and the gap is evaluated exactly there, using
    e cos(theta + t - omega) = E cos t - F sin t with E, F the cosine and
    sine terms at the seed. Draws where the step turned more than 0.2 rad
    (a poor seed), where either orbit has e > 0.1 or whose gap is not
    positive (crossing or nested orbits) are searched again in full, so the
    error stays below ~5e-6 of the larger semi-major axis (checked against
    the full search); the spread of Monte Carlo draws is far larger. Pairs
    of orbits circular in every draw (no eccentricity given, the common
    case of compact transiting systems) take |a_out - a_in| directly, the
    value the search arrives at for them.

    Parameters
    ----------
    orbits : DrawOrbits
        Every orbit in every draw.
    inner_index, outer_index : ndarray of int, shape (pairs,)
        The two orbits of each pair.

    Returns
    -------
    ndarray, shape (pairs, samples), float32
        Closest distance, in the unit of ``orbits.a``.
    """
    def pick(array, index):
        return np.take(array, index, axis=0)

    circular = orbits.circular[inner_index] & orbits.circular[outer_index]
    if circular.any():
        distance = np.empty((circular.size, orbits.a.shape[1]), dtype=orbits.a.dtype)
        distance[circular] = np.abs(pick(orbits.a, outer_index[circular]) - pick(orbits.a, inner_index[circular]))
        if not circular.all():
            rest = ~circular
            distance[rest] = closest_distance_of_draws(orbits, inner_index[rest], outer_index[rest])
        return distance
    cx = pick(orbits.ae_cos, outer_index) - pick(orbits.ae_cos, inner_index)   # C = a_out e_out e^(i w_out) - ...
    cy = pick(orbits.ae_sin, outer_index) - pick(orbits.ae_sin, inner_index)
    norm = cx * cx
    norm += cy * cy
    norm += np.float32(1e-30)                              # circular pairs: no direction, and none needed
    np.sqrt(norm, out=norm)
    cx /= norm
    cy /= norm
    sides = []
    for index in (inner_index, outer_index):
        latus = pick(orbits.latus, index)
        sides.append((latus, *_side_terms(cx, cy, latus, pick(orbits.e_cos, index), pick(orbits.e_sin, index))))
    (p_i, cos_i, sin_i, _, slope_i, curv_i), (p_o, cos_o, sin_o, _, slope_o, curv_o) = sides
    curvature = curv_o - curv_i
    turn = slope_i - slope_o
    with np.errstate(divide="ignore", invalid="ignore"):
        turn /= curvature + np.float32(1e-30)              # circular: 0 / tiny = 0
    cos_t, sin_t = np.cos(turn), np.sin(turn)
    # 1 + e cos(theta + t - omega) = 1 + E cos t - F sin t, in place of E
    for cos_term, sin_term in ((cos_i, sin_i), (cos_o, sin_o)):
        cos_term *= cos_t
        cos_term -= sin_term * sin_t
        cos_term += 1.0
    gap = p_o / cos_o
    gap -= p_i / cos_i
    redo = (gap <= 0.0) | (curvature < 0.0) | (np.abs(turn) > _LARGE_TURN)
    redo |= pick(orbits.wide, inner_index)
    redo |= pick(orbits.wide, outer_index)
    redo = np.flatnonzero(redo)
    if redo.size:
        rows, samples = np.unravel_index(redo, gap.shape)
        inner, outer = inner_index[rows], outer_index[rows]
        gap.ravel()[redo] = closest_orbit_distance(
            orbits.a[inner, samples], orbits.e[inner, samples], orbits.omega[inner, samples],
            orbits.a[outer, samples], orbits.e[outer, samples], orbits.omega[outer, samples])
    return gap
