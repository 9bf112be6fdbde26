"""Angular momentum deficit (AMD) and AMD stability of adjacent planet pairs.

The AMD, C = sum_k Lambda_k (1 - sqrt(1 - e_k^2) cos i_k), is conserved by
the secular dynamics, so it bounds how eccentric the orbits can become.
Laskar & Petit 2017 (A&A 605, A72; LP17 below) call a system AMD-stable
when for every pair of adjacent planets the whole AMD could not bring their
orbits to a collision: beta = C / C_c < 1, C_c being the smallest AMD on the
collision condition a (1 + e) = a' (1 - e'). Petit, Laskar & Boue 2017
(A&A 607, A35; PLB17) lower the critical AMD of close pairs, whose
first-order mean-motion resonances overlap and make the motion chaotic.

Assumptions stated everywhere these numbers are shown: coplanar orbits
(mutual inclinations zero, as no file gives nodes), planetary masses much
smaller than the star's (Lambda = m sqrt(G M* a)), and eccentricities as
given (the osculating values of the file). AMD stability is a sufficient
condition for long-term stability, not a necessary one.
"""

from __future__ import annotations

import numpy as np

from ..constants import G

#: PLB17's numerical factor r of the overlap criterion (r ~ 0.80 in the paper)
OVERLAP_R = 0.80
#: alpha of the 2:1 commensurability (Kepler's third law, equal masses): the widest first-order resonance
FIRST_ORDER_ALPHA_MIN = 2.0 ** (-2.0 / 3.0)
#: Newton iterations of the collision condition at most (each more than doubles the digits)
_MAX_ITERATIONS = 60
_STEP_TOLERANCE = 1e-9


def circular_angular_momentum(mass, star_mass, a):
    """Angular momentum of a circular orbit, Lambda = m sqrt(G M* a) (LP17, planetary masses m << M*).

    Parameters
    ----------
    mass, star_mass : array_like
        Planet and star mass [kg].
    a : array_like
        Semi-major axis [m].

    Returns
    -------
    ndarray
        Lambda [kg m^2 s^-1].
    """
    return mass * np.sqrt(G * star_mass * a)


def angular_momentum_deficit(circular_momentum, eccentricity, mutual_inclination=0.0):
    """AMD of one orbit, Lambda (1 - sqrt(1 - e^2) cos i) (LP17); sum over planets for a system.

    Parameters
    ----------
    circular_momentum : array_like
        Lambda of :func:`circular_angular_momentum` (the result takes its unit).
    eccentricity : array_like
        e.
    mutual_inclination : array_like
        Inclination to the invariant plane [rad]; zero for coplanar orbits.
    """
    return circular_momentum * (1.0 - np.sqrt(1.0 - eccentricity**2) * np.cos(mutual_inclination))


def collision_condition(e, alpha, gamma):
    """LP17's F(e, alpha, gamma) and its derivative dF/de, for the inner eccentricity e.

    F = alpha e + gamma e / sqrt(alpha (1 - e^2) + gamma^2 e^2) - 1 + alpha   (LP17 eq. 35)
    dF/de = alpha + alpha gamma / (alpha (1 - e^2) + gamma^2 e^2)^(3/2) > 0   (LP17 eq. 36)

    F vanishes at the inner eccentricity of the least-AMD collision
    a (1 + e) = a' (1 - e') of two coplanar orbits with anti-aligned apsides,
    alpha = a / a' and gamma = m / m'; it increases on [0, 1] from
    alpha - 1 < 0 to 2 alpha > 0.

    Returns
    -------
    value, slope : ndarray
    """
    spread = alpha * (1.0 - e * e) + gamma * gamma * e * e
    root = np.sqrt(spread)
    return alpha * e + gamma * e / root - 1.0 + alpha, alpha + alpha * gamma / (spread * root)


def critical_eccentricity(alpha, gamma):
    """The root e_c in (0, 1) of :func:`collision_condition`, for every alpha, gamma at once.

    Newton's method with each iterate clipped to [0, 1], all values
    together. F increases on [0, 1] and d2F/de2 has the sign of
    alpha - gamma^2 throughout, so from e = 0 (or any start) the iterates converge:
    where F is concave they rise monotonically to the root (after at most
    one step from above); where it is convex they fall monotonically (after
    at most one step from below, clipped to 1). It stops once every step
    is below 1e-9, after which Newton's error, of order the step squared,
    is below double precision.

    Parameters
    ----------
    alpha, gamma : array_like
        a / a' in (0, 1) and m / m' > 0, broadcast together.
    """
    alpha, gamma = np.broadcast_arrays(np.asarray(alpha, dtype=float), np.asarray(gamma, dtype=float))
    e = np.zeros(alpha.shape)
    with np.errstate(invalid="ignore"):
        for _ in range(_MAX_ITERATIONS):
            value, slope = collision_condition(e, alpha, gamma)
            stepped = np.clip(e - value / slope, 0.0, 1.0)
            step = np.nanmax(np.abs(stepped - e), initial=0.0)
            e = stepped
            if not step > _STEP_TOLERANCE:
                break
    return e


def critical_amd_collision(alpha, gamma):
    """Critical AMD relative to Lambda', C_c / Lambda' (LP17, the minimum of the AMD on the collision condition).

    C_c / Lambda' = gamma sqrt(alpha) (1 - sqrt(1 - e_c^2)) + 1 - sqrt(1 - e'_c^2),
    e'_c = 1 - alpha - alpha e_c: the AMD of the least-AMD collision (zero for alpha >= 1, orbits
    that cross on circles already).

    Parameters
    ----------
    alpha, gamma : array_like
        a / a' and m / m' of the pair (inner over outer).
    """
    e = critical_eccentricity(alpha, gamma)
    e_outer = 1.0 - alpha - alpha * e
    with np.errstate(invalid="ignore"):
        critical = gamma * np.sqrt(alpha) * (1.0 - np.sqrt(1.0 - e * e)) + 1.0 - np.sqrt(1.0 - e_outer * e_outer)
    return np.where(np.asarray(alpha) < 1.0, critical, 0.0)   # alpha >= 1: the orbits cross already


def critical_amd_overlap(alpha, gamma, epsilon, r=OVERLAP_R):
    """Critical AMD relative to Lambda' for first-order resonance overlap (PLB17).

    C_MMR / Lambda' = (g^2 / 2) gamma sqrt(alpha) / (1 + gamma sqrt(alpha)) where g > 0 (else 0),
    g = 3^4 (1 - alpha)^5 / (2^9 r epsilon) - 32 r epsilon / (9 (1 - alpha)^2),
    epsilon = (m + m') / M*. g vanishes at 1 - alpha = (2^14/3^6)^(1/7) (r epsilon)^(2/7)
    ~ 1.46 epsilon^(2/7), the overlap limit of circular orbits (Deck, Payne & Holman 2013).

    Parameters
    ----------
    alpha, gamma : array_like
        a / a' and m / m' of the pair.
    epsilon : array_like
        (m + m') / M*.
    r : float
        PLB17's width ratio.
    """
    gap = 1.0 - alpha
    with np.errstate(divide="ignore", invalid="ignore"):   # orbits on top of each other: no stable AMD
        g = 3.0**4 * gap**5 / (2.0**9 * r * epsilon) - 32.0 * r * epsilon / (9.0 * gap**2)
    return np.where(g > 0.0, 0.5 * g * g, 0.0) * gamma * np.sqrt(alpha) / (1.0 + gamma * np.sqrt(alpha))


def critical_amd(alpha, gamma, epsilon):
    """Critical AMD relative to Lambda' with PLB17's resonance-overlap correction.

    PLB17 replace the collision value C_c by C_MMR for pairs closer than
    alpha_R, the alpha where the two are equal. First-order resonances lie
    inside the 2:1 commensurability, so the correction is applied where
    alpha > :data:`FIRST_ORDER_ALPHA_MIN` = 2^(-2/3); on that range C_MMR - C_c
    changes sign at most once, from positive (wider) to negative (closer),
    checked over 1e-3 <= gamma <= 1e3, 1e-9 <= epsilon <= 3e-2
    (tests/test_reference_dynamics_amd.py), so the corrected critical AMD
    there is the smaller of the two, and C_c elsewhere.
    """
    collision = critical_amd_collision(alpha, gamma)
    overlap = critical_amd_overlap(alpha, gamma, epsilon)
    return np.where(np.asarray(alpha) > FIRST_ORDER_ALPHA_MIN, np.minimum(collision, overlap), collision)


def amd_beta(total_amd, circular_momentum_outer, critical_relative):
    """beta = C / C_c of a pair: the system's whole AMD over the pair's critical AMD (LP17).

    Parameters
    ----------
    total_amd : array_like
        The system's AMD C (unit of Lambda).
    circular_momentum_outer : array_like
        Lambda' of the pair's outer planet.
    critical_relative : array_like
        C_c / Lambda' (:func:`critical_amd`).

    Returns
    -------
    ndarray
        beta; the pair is AMD-stable when beta < 1 (infinite where the critical AMD is zero).
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        beta = total_amd / (circular_momentum_outer * critical_relative)
    # a zero critical AMD (inside the overlap zone of circular orbits) leaves no AMD stable, not even zero
    return np.where(critical_relative > 0.0, beta, np.inf)


def star_collision_beta(total_amd, circular_momentum_innermost):
    """C / Lambda_1: the innermost planet could reach the star (e = 1) when it is >= 1 (LP17)."""
    return total_amd / circular_momentum_innermost
