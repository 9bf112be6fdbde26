"""Transit-timing variations of planet pairs near first-order resonances.

Lithwick, Xie & Wu 2012 (ApJ 761, 122; LXW12 below) give the TTV of each
planet of a pair near the commensurability j:j-1 as a sinusoid of the
longitude of conjunctions lambda^j = j lambda' - (j-1) lambda, whose period
is the super-period and whose complex amplitudes V (inner planet) and V'
(outer planet) are their eqs. (8) and (9). The coefficients f and g are
sums of Laplace coefficients b_{1/2}^(j)(alpha) and their derivatives,
worked out here by quadrature of the defining integral at each pair's
alpha (Murray & Dermott 1999, eq. 6.67), not read from a table.

Range of validity. Eqs. (8)-(9) keep only the terms enhanced by 1/Delta
and hold for pairs near, but not inside, a first-order resonance. Here they
are applied where the pair's nearest commensurability is first order and
``resonance_width(epsilon) < |Delta| < MAX_ABS_DELTA``: below the lower
bound, epsilon^(2/3) with epsilon = (m + m') / M*, the pair may be inside
the resonance (the low-eccentricity width of a first-order resonance
scales so; LXW12 Sect. 2 require the pair not to be in resonance); above
0.1 the neglected terms, smaller by about |Delta|, reach ~10 %. Pairs in
the zone of overlapping first-order resonances (Deck, Payne & Holman 2013)
are left out too: one isolated resonance is what the formulae describe.
Outside that range the amplitudes are NaN ("does not apply"). Free eccentricities
enter through Z_free = f z_free + g z'_free (LXW12 eq. 10), an assumption
of the system file (zero by default). Every amplitude is a model estimate.
"""

from __future__ import annotations

import numpy as np
from numpy.polynomial import chebyshev

#: largest |Delta| where the near-resonant amplitudes are used (neglected terms ~|Delta|)
MAX_ABS_DELTA = 0.1
#: the indirect term of g at the 2:1 commensurability: -2 alpha in the inner planet's disturbing
#: function and -1/(2 alpha^2) in the outer planet's (Murray & Dermott 1999, Table 8.5), both
#: -2^(1/3) at the exact commensurability, where LXW12 take it
INDIRECT_TERM_2_1 = -(2.0 ** (1.0 / 3.0))
#: the quadrature's aliasing error falls as alpha^n: nodes for alpha^n below e^-40 (~4e-18)
_QUADRATURE_DECAY = 40.0
_MIN_NODES, _MAX_NODES = 32, 1 << 16
#: Chebyshev points spanning the alphas of Monte Carlo draws of one pair, at most
_CHEBYSHEV_NODES = 12
#: draws whose alphas spread so widely that 12 Chebyshev points would not reach ~1e-13 are integrated one by one
_MIN_ELLIPSE_RATIO = 6.0


def _nodes_for(alpha_max: float, j_max: int) -> int:
    """Trapezoid nodes over one period for the Laplace integrals of ``alpha`` <= alpha_max."""
    alpha_max = min(max(float(alpha_max), 1e-3), 1.0 - 1e-9)
    nodes = j_max + 2 + int(np.ceil(_QUADRATURE_DECAY / -np.log(alpha_max)))
    return int(min(max(nodes, _MIN_NODES), _MAX_NODES))


def laplace_coefficients(alpha, j):
    """Laplace coefficients b_{1/2}^(j)(alpha) and their derivatives d b / d alpha.

    b_s^(j)(alpha) = (1/pi) int_0^{2 pi} cos(j psi) (1 - 2 alpha cos psi + alpha^2)^(-s) dpsi
    (Murray & Dermott 1999, eq. 6.67), s = 1/2, and its derivative under the
    integral, (1/pi) int cos(j psi) (cos psi - alpha) (1 - 2 alpha cos psi + alpha^2)^(-3/2) dpsi.
    The integrands are periodic and analytic, so the trapezoid rule over one
    period converges geometrically, its error falling as alpha^n with n nodes
    (Trefethen & Weideman 2014, SIAM Rev. 56, 385); n is chosen for an error
    below ~1e-17.

    Parameters
    ----------
    alpha : array_like
        Semi-major-axis ratio a_inner / a_outer, 0 <= alpha < 1.
    j : array_like of int
        Index of the coefficient, broadcast against ``alpha``.

    Returns
    -------
    b, db_dalpha : ndarray
        Shaped like the broadcast of ``alpha`` and ``j``.
    """
    alpha, j = np.broadcast_arrays(np.asarray(alpha, dtype=float), np.asarray(j))
    shape = alpha.shape
    b, db = np.full(alpha.size, np.nan), np.full(alpha.size, np.nan)
    known = np.flatnonzero(np.isfinite(alpha.ravel()))   # NaN marks "does not apply": nothing to integrate
    if known.size == 0:
        return b.reshape(shape), db.reshape(shape)
    alpha, j = alpha.ravel()[known, None], j.ravel()[known, None]
    nodes = _nodes_for(np.max(alpha), int(np.max(j)))
    psi = 2.0 * np.pi * np.arange(nodes) / nodes
    cos_psi = np.cos(psi)
    inverse_distance = 1.0 / np.sqrt(1.0 - 2.0 * alpha * cos_psi + alpha * alpha)
    harmonic = np.cos(j * psi)
    weight = 2.0 / nodes   # (1/pi) x the trapezoid's step 2 pi / n
    b[known] = weight * np.sum(harmonic * inverse_distance, axis=1)
    db[known] = weight * np.sum(harmonic * (cos_psi - alpha) * inverse_distance**3, axis=1)
    return b.reshape(shape), db.reshape(shape)


def resonance_coefficient_f(alpha, j):
    """f = -j b_{1/2}^(j) - (alpha / 2) D b_{1/2}^(j) of the commensurability j:j-1 (LXW12, Table 3).

    The coefficient of the inner planet's eccentricity in the resonant
    disturbing function (Murray & Dermott's f_27); about -1.19 for 2:1.

    Parameters
    ----------
    alpha : array_like
        a_inner / a_outer.
    j : array_like of int
        The larger integer of j:j-1 (j >= 2).
    """
    b, db = laplace_coefficients(alpha, j)
    return -j * b - 0.5 * alpha * db


def resonance_coefficient_g(alpha, j):
    """g = (j - 1/2) b_{1/2}^(j-1) + (alpha / 2) D b_{1/2}^(j-1), plus -2^(1/3) for 2:1 (LXW12, Table 3).

    The coefficient of the outer planet's eccentricity (Murray & Dermott's
    f_31); for j = 2 it includes the indirect term (see :data:`INDIRECT_TERM_2_1`).

    Parameters
    ----------
    alpha : array_like
        a_inner / a_outer.
    j : array_like of int
        The larger integer of j:j-1 (j >= 2).
    """
    b, db = laplace_coefficients(alpha, np.asarray(j) - 1)
    return (j - 0.5) * b + 0.5 * alpha * db + np.where(np.asarray(j) == 2, INDIRECT_TERM_2_1, 0.0)


def resonance_coefficients(alpha, j):
    """f and g (LXW12, Table 3) at every alpha of ``alpha`` shaped (draws, pairs), j shaped (pairs,).

    With one draw they are integrated directly. With many, each pair's
    coefficients are integrated at Chebyshev points spanning its draws'
    alphas and interpolated: they are analytic in alpha except at alpha = 1,
    so the interpolant's error falls as rho^-n with n points, rho = r +
    sqrt(r^2 - 1) and r the distance to 1 over the half-span (the Bernstein
    ellipse; Trefethen 2013, Approximation Theory and Approximation
    Practice, ch. 8). The points are as many as make rho^-n ~1e-16 (five for
    draws spread by 1e-5), at most 12; pairs whose draws spread so widely
    (r < 6) that 12 would not reach ~1e-13 are integrated draw by draw.

    Returns
    -------
    f, g : ndarray shaped like ``alpha`` (NaN where alpha is)
    """
    alpha = np.asarray(alpha, dtype=float)
    j = np.broadcast_to(np.asarray(j), alpha.shape[-1:])
    if alpha.ndim < 2 or alpha.shape[0] == 1:
        return resonance_coefficient_f(alpha, j), resonance_coefficient_g(alpha, j)
    # each pair's draws side by side (reduced down the columns of a few pairs, numpy would loop per draw);
    # fmin and fmax pass over NaN, which is left only where every draw is NaN
    columns = np.ascontiguousarray(alpha.T)
    low, high = np.fmin.reduce(columns, axis=1), np.fmax.reduce(columns, axis=1)
    some = ~np.isnan(low)
    with np.errstate(divide="ignore", invalid="ignore"):   # columns with no known alpha are left out below
        middle, half = 0.5 * (low + high), 0.5 * (high - low)
        ratio = (1.0 - middle) / half                      # infinite where every draw is equal
        interpolated = some & (ratio >= _MIN_ELLIPSE_RATIO)
        rho = ratio[interpolated] + np.sqrt(ratio[interpolated] ** 2 - 1.0)
        needed = np.ceil(np.log(1e16) / np.log(rho)) + 1
    count = int(np.clip(np.max(needed, initial=2.0), 2, _CHEBYSHEV_NODES))
    f, g = np.full(alpha.shape, np.nan), np.full(alpha.shape, np.nan)
    if interpolated.any():   # the pairs interpolated, and only they, are integrated at the points
        centre, radius = middle[interpolated], half[interpolated]
        x = np.cos(np.pi * (np.arange(count) + 0.5) / count)        # Chebyshev points of the first kind
        points = centre + radius * x[:, None]                       # (points, pairs)
        scaled = (alpha[:, interpolated] - centre) / np.where(radius > 0.0, radius, 1.0)
        f[:, interpolated], g[:, interpolated] = (
            chebyshev.chebval(scaled, chebyshev.chebfit(x, values, count - 1), tensor=False)
            for values in (resonance_coefficient_f(points, j[interpolated]),
                           resonance_coefficient_g(points, j[interpolated])))
    direct = some & ~interpolated
    if direct.any():
        f[:, direct] = resonance_coefficient_f(alpha[:, direct], j[direct])
        g[:, direct] = resonance_coefficient_g(alpha[:, direct], j[direct])
    return f, g


def resonance_width(epsilon):
    """|Delta| below which a pair may be inside its first-order resonance: epsilon^(2/3).

    The low-eccentricity width of a first-order resonance scales as
    (m/M*)^(2/3) (Murray & Dermott 1999, Sect. 8.8; LXW12 Sect. 2 apply
    their formulae to pairs outside it); epsilon = (m + m') / M*.
    """
    return np.asarray(epsilon) ** (2.0 / 3.0)


def free_eccentricity(amplitude, angle_deg):
    """Z_free = |Z_free| exp(i angle), the combination f z_free + g z'_free of LXW12 eq. (10)."""
    return np.asarray(amplitude) * np.exp(1j * np.deg2rad(angle_deg))


def ttv_amplitude_inner(period_inner, mu_outer, j, delta, f, z_free):
    """Complex TTV amplitude V of the inner planet (LXW12 eq. 8).

    V = P mu' / (pi j^(2/3) (j-1)^(1/3) Delta) (-f - (3/2) Z*_free / Delta)

    Parameters
    ----------
    period_inner : array_like
        Period P of the inner planet (the result takes its unit).
    mu_outer : array_like
        Mass of the outer planet over the star's, mu' = m' / M*.
    j : array_like of int
        The commensurability j:j-1.
    delta : array_like
        Offset Delta = (P'/P) (j-1)/j - 1.
    f : array_like
        :func:`resonance_coefficient_f` at the pair's alpha.
    z_free : complex array_like
        :func:`free_eccentricity`.
    """
    return (period_inner * mu_outer / (np.pi * j ** (2.0 / 3.0) * (j - 1) ** (1.0 / 3.0) * delta)
            * (-f - 1.5 * np.conj(z_free) / delta))


def ttv_amplitude_outer(period_outer, mu_inner, j, delta, g, z_free):
    """Complex TTV amplitude V' of the outer planet (LXW12 eq. 9).

    V' = P' mu / (pi j Delta) (-g + (3/2) Z*_free / Delta)

    Parameters as :func:`ttv_amplitude_inner`, with the outer planet's
    period P', the inner planet's mass ratio mu = m / M* and
    :func:`resonance_coefficient_g`.
    """
    return period_outer * mu_inner / (np.pi * j * delta) * (-g + 1.5 * np.conj(z_free) / delta)


def longitude_of_conjunctions(time, period_inner, period_outer, transit_inner, transit_outer, j):
    """lambda^j = j lambda' - (j-1) lambda [rad] at ``time``, longitudes measured from the line of sight.

    Each mean longitude is 2 pi (t - T) / P from a transit time T (zero at
    transit for the circular orbits the amplitudes assume; LXW12 Sect. 2).
    Times and periods in one unit.
    """
    return 2.0 * np.pi * (j * (time - transit_outer) / period_outer
                          - (j - 1) * (time - transit_inner) / period_inner)


def ttv_signal(amplitude, longitude):
    """The TTV at a longitude of conjunctions: delta t = Im[V exp(i lambda^j)] = |V| sin(lambda^j + arg V).

    With the mean longitudes measured from the line of sight
    (:func:`longitude_of_conjunctions`), a transit happens at true longitude
    0, and theta = lambda + 2 e sin(lambda - varpi) makes it
    (P / 2 pi)(2 Im z - delta lambda) late: the forced eccentricity z and the
    drift of the mean longitude behind LXW12's eqs. (8)-(9) both enter as
    the imaginary part of V exp(i lambda^j), its real part being a quarter
    super-period off (worked out from Lagrange's equations and checked
    against N-body transit times in the tests).

    ``amplitude`` is V or V' (complex), ``longitude`` lambda^j [rad]; the
    result takes the amplitude's unit.
    """
    return np.imag(amplitude * np.exp(1j * np.asarray(longitude)))


def ttv_curves(time, amplitude_inner, amplitude_outer, period_inner, period_outer, transit_inner, transit_outer, j):
    """The TTVs of both planets of a pair over time (LXW12 Sect. 2, eqs. 8-9).

    delta t = Im[V exp(i lambda^j)] and delta t' = Im[V' exp(i lambda^j)] (see :func:`ttv_signal`), with
    lambda^j = j lambda' - (j-1) lambda from :func:`longitude_of_conjunctions`:
    two sinusoids of the super-period 1 / |j/P' - (j-1)/P| (LXW12 Sect. 2),
    in antiphase when Z_free = 0 (V and V' of opposite signs).

    Parameters
    ----------
    time : array_like
        Times (BJD_TDB, or any time in the unit of the periods).
    amplitude_inner, amplitude_outer : complex
        V and V' (:func:`ttv_amplitude_inner`, :func:`ttv_amplitude_outer`); the curves take their unit.
    period_inner, period_outer : float
        P and P'.
    transit_inner, transit_outer : float
        A mid-transit time of each planet (same unit and origin as ``time``).
    j : int
        The commensurability j:j-1.

    Returns
    -------
    (ndarray, ndarray)
        delta t of the inner planet and delta t' of the outer planet at ``time``.
    """
    longitude = longitude_of_conjunctions(time, period_inner, period_outer, transit_inner, transit_outer, j)
    return ttv_signal(amplitude_inner, longitude), ttv_signal(amplitude_outer, longitude)
