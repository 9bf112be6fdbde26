"""Period commensurabilities, their offsets, super-periods and three-body relations."""

from __future__ import annotations

from math import gcd

import numpy as np

#: highest order p - q of a commensurability p:q that is considered
MAX_ORDER = 3
#: largest numerator p considered (common practice: rungs beyond ~12 crowd towards 1)
MAX_NUMERATOR = 12
#: integer range 1 <= p, q <= 3 searched for three-body relations
THREE_BODY_RANGE = (1, 2, 3)


def commensurability_table(max_order: int = MAX_ORDER, max_numerator: int = MAX_NUMERATOR):
    """Every commensurability p:q in lowest terms with p > q and p - q <= max_order.

    Returns
    -------
    p, q, order : ndarray of int
        Sorted by order, then by ratio, so that on a tie the lowest order wins.
    """
    rows = [(p - q, p / q, p, q)
            for p in range(2, max_numerator + 1)
            for q in range(max(1, p - max_order), p)
            if gcd(p, q) == 1]
    rows.sort()
    table = np.array([(p, q, k) for k, _, p, q in rows], dtype=int)
    return table[:, 0], table[:, 1], table[:, 2]


_P, _Q, _ORDER = commensurability_table()
_RATIO = _P / _Q
#: table rows in order of ratio; a row's table index is its precedence on a tie
_BY_RATIO = np.argsort(_RATIO, kind="stable")
_SORTED_RATIO = _RATIO[_BY_RATIO]


def nearest_commensurability(period_ratio):
    """Nearest commensurability of order at most 3 to each period ratio.

    Nearest by absolute difference of ratios, |P2/P1 - p/q|; p:q in lowest
    terms, p > q (common practice; see Fabrycky et al. 2014 for the
    offsets of Kepler pairs from such rungs).

    Parameters
    ----------
    period_ratio : array_like
        Outer-over-inner period ratios, >= 1, any shape.

    Returns
    -------
    p, q, order : ndarray of int
        Same shape as ``period_ratio``.
    """
    ratio = np.asarray(period_ratio, dtype=float)
    # the two rungs either side of each ratio; on an exact tie the lower order wins
    upper = np.clip(np.searchsorted(_SORTED_RATIO, ratio), 1, _SORTED_RATIO.size - 1)
    lower = upper - 1
    gap_low, gap_high = np.abs(ratio - _SORTED_RATIO[lower]), np.abs(_SORTED_RATIO[upper] - ratio)
    take_low = (gap_low < gap_high) | ((gap_low == gap_high) & (_BY_RATIO[lower] < _BY_RATIO[upper]))
    index = _BY_RATIO[np.where(take_low, lower, upper)]
    return _P[index], _Q[index], _ORDER[index]


def nearest_differs(period_ratio, p, q):
    """Whether the nearest commensurability to each ratio is another than p:q.

    The same answer as comparing :func:`nearest_commensurability` with p:q,
    without its search: a ratio keeps the rung p:q while it lies nearer to
    it than to the rungs either side (on a tie the rung of lower order wins,
    as there).

    Parameters
    ----------
    period_ratio : array_like, shape (..., pairs)
        Outer-over-inner period ratios.
    p, q : array_like of int, shape (pairs,)
        A commensurability of :func:`commensurability_table` per pair.

    Returns
    -------
    ndarray of bool, shape of ``period_ratio``
    """
    ratio = np.asarray(period_ratio, dtype=float)
    sorted_p, sorted_q = _P[_BY_RATIO], _Q[_BY_RATIO]
    p, q = np.asarray(p).reshape(-1, 1), np.asarray(q).reshape(-1, 1)
    position = ((sorted_p == p) & (sorted_q == q)).argmax(axis=1)
    padded_ratio = np.concatenate([[-np.inf], _SORTED_RATIO, [np.inf]])
    padded_rank = np.concatenate([[_BY_RATIO.size], _BY_RATIO, [_BY_RATIO.size]])
    below, rung, above = (padded_ratio[position + shift] for shift in (0, 1, 2))
    rank_below, rank, rank_above = (padded_rank[position + shift] for shift in (0, 1, 2))
    with np.errstate(invalid="ignore"):   # inf - inf never decides: the other side's gap is finite
        up_gap, down_gap = ratio - rung, rung - ratio
        keeps_above = (up_gap < above - ratio) | ((up_gap == above - ratio) & (rank < rank_above))
        keeps_below = (down_gap < ratio - below) | ((down_gap == ratio - below) & (rank < rank_below))
    return ~np.where(ratio >= rung, keeps_above, keeps_below)


def resonance_offset(period_ratio, p, q):
    """Fractional distance from a commensurability.

    Delta = (P2/P1) / (p/q) - 1 (Lithwick, Xie & Wu 2012, ApJ 761, 122, eq. 5,
    written for any p:q).
    """
    return np.asarray(period_ratio) * q / p - 1.0


def super_period(period_inner, period_outer, j):
    """TTV super-period of a pair near the first-order resonance j:j-1.

    P_sup = 1 / |j / P_outer - (j - 1) / P_inner| (Lithwick, Xie & Wu 2012, eq. 7).

    Parameters
    ----------
    period_inner, period_outer : array_like
        Periods of the inner and outer planet (the result takes their unit).
    j : array_like of int
        The resonance's larger integer.
    """
    return 1.0 / np.abs(j / period_outer - (j - 1) / period_inner)


def three_body_residual(period_1, period_2, period_3, p, q):
    """Residual of the Laplace-type relation p/P1 - (p+q)/P2 + q/P3.

    Zero for an exact three-body commensurability such as the Galilean
    moons' n_Io - 3 n_Europa + 2 n_Ganymede = 0 (Murray & Dermott 1999,
    section 8.17; p = 1, q = 2).

    Parameters
    ----------
    period_1, period_2, period_3 : array_like
        Periods of three consecutive bodies, inner to outer [d].
    p, q : array_like of int
        The relation's integers.

    Returns
    -------
    ndarray
        Residual [cycles per day]; times 360 for deg per day.
    """
    return p / period_1 - (p + q) / period_2 + q / period_3


def best_three_body_relation(period_1, period_2, period_3):
    """The (p, q) in 1..3 with the smallest |three-body residual|.

    Parameters
    ----------
    period_1, period_2, period_3 : array_like
        Periods [d] of consecutive triples, any common shape.

    Returns
    -------
    p, q : ndarray of int
    residual_deg_per_day : ndarray
        The signed residual of that relation [deg d^-1].
    """
    grid = np.array([(p, q) for p in THREE_BODY_RANGE for q in THREE_BODY_RANGE])
    p1, p2, p3 = (np.asarray(x, dtype=float)[..., None] for x in (period_1, period_2, period_3))
    residual = three_body_residual(p1, p2, p3, grid[:, 0], grid[:, 1])
    best = np.argmin(np.abs(residual), axis=-1)
    chosen = np.take_along_axis(residual, best[..., None], axis=-1)[..., 0]
    return grid[best, 0], grid[best, 1], chosen * 360.0
