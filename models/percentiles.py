"""Exact percentiles of many sample columns at once, faster than a partition.

:func:`row_percentiles` returns what ``np.percentile(values, q, axis=1)``
returns (the 'linear' definition, Hyndman & Fan 1996 definition 7), found
by an exact selection that suits Monte Carlo columns:

1. each row is scaled onto 0..65534 and truncated to 16-bit integers, a
   map that never reverses the order of two values;
2. a stable radix argsort of those integers (numpy sorts 16-bit integers
   by radix) orders every row up to ties within one level;
3. a few sorted positions on each side of each wanted rank are put in
   exact order by their values; where ties within a level reach beyond
   that window (heavy tails), the row is selected with ``np.partition``.

Rows that hold NaN or infinities go to ``np.percentile`` / ``np.nanpercentile``
directly. Large calls are split between threads (numpy releases the GIL
in these loops; :mod:`orbitdeck.models.parallel`).
"""

from __future__ import annotations

import warnings

import numpy as np

from .parallel import WORKERS, thread_map

_LEVELS = 65534.0
#: sorted positions on each side of a wanted rank whose values are put in exact order
_HALF_WINDOW = 4
#: below this many values per call the threads cost more than they save
_PARALLEL_MIN_VALUES = 200_000


def _ranks(n: int, percentiles) -> tuple[np.ndarray, np.ndarray]:
    """Lower order-statistic index and interpolation weight of each percentile (definition 7)."""
    position = np.asarray(percentiles, dtype=float) / 100.0 * (n - 1)
    lower = np.floor(position).astype(int)
    return np.minimum(lower, n - 1), position - lower


def _finite_rows(values: np.ndarray, percentiles) -> np.ndarray:
    """Percentiles of rows that hold only finite values; returns (len(percentiles), rows)."""
    rows, n = values.shape
    lower, weight = _ranks(n, percentiles)
    wanted = np.unique(np.concatenate([lower, np.minimum(lower + 1, n - 1)]))
    low = values.min(axis=1)
    span = values.max(axis=1) - low
    with np.errstate(divide="ignore"):
        scale = np.where(span > 0.0, _LEVELS / span, 0.0)
    scaled = np.subtract(values, low[:, None])
    np.multiply(scaled, scale[:, None], out=scaled)
    levels = scaled.astype(np.uint16)
    del scaled
    order = np.argsort(levels, axis=1, kind="stable")
    # Sorted by level, values are in order except within a level. Around each
    # wanted rank take a window of sorted positions: when it holds the whole
    # level of that rank, sorting the window's values puts the rank right.
    start = np.clip(wanted - _HALF_WINDOW, 0, max(n - 2 * _HALF_WINDOW, 0))
    window = start[:, None] + np.arange(min(2 * _HALF_WINDOW, n))          # (wanted, width)
    row = np.arange(rows)[:, None, None]
    window_values = np.sort(values[row, order[:, window]], axis=2)        # (rows, wanted, width)
    first, last = window[:, 0], window[:, -1]

    def level_of(position):  # level at each sorted position, shaped (rows, wanted)
        return levels[row[:, :, 0], order[:, position]]

    level_wanted = level_of(wanted)
    closed_left = (first == 0) | (level_of(np.maximum(first - 1, 0)) != level_wanted)
    closed_right = (last == n - 1) | (level_of(np.minimum(last + 1, n - 1)) != level_wanted)
    statistic = window_values[:, np.arange(wanted.size), wanted - start]
    unsure = np.flatnonzero(~(closed_left & closed_right).all(axis=1) & (span > 0.0))
    if unsure.size:
        statistic[unsure] = np.partition(values[unsure], wanted, axis=1)[:, wanted]
    lower_stat = statistic[:, np.searchsorted(wanted, lower)]
    upper_stat = statistic[:, np.searchsorted(wanted, np.minimum(lower + 1, n - 1))]
    return (lower_stat + weight * (upper_stat - lower_stat)).T


def _rows_in_turn(values: np.ndarray, percentiles) -> np.ndarray:
    finite = np.isfinite(values).all(axis=1)
    with np.errstate(invalid="ignore"):  # rows with NaN or infinities are redone below
        result = _finite_rows(values, percentiles)
    if finite.all():
        return result
    other = np.flatnonzero(~finite)
    rest = values[other]
    has_nan = np.isnan(rest).any(axis=1)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # rows where every draw is NaN stay NaN
        if (~has_nan).any():
            result[:, other[~has_nan]] = np.percentile(rest[~has_nan], percentiles, axis=1)
        if has_nan.any():
            result[:, other[has_nan]] = np.nanpercentile(rest[has_nan], percentiles, axis=1)
    return result


def row_percentiles(values, percentiles) -> np.ndarray:
    """Percentiles of each row of ``values``, NaN draws ignored.

    Parameters
    ----------
    values : array_like, shape (rows, samples)
        One row per quantity; C-contiguous rows are fastest.
    percentiles : sequence of float
        In [0, 100].

    Returns
    -------
    ndarray, shape (len(percentiles), rows)
        As ``np.nanpercentile(values, percentiles, axis=1)`` ('linear'
        interpolation between order statistics); NaN where a row holds no
        value but NaN.
    """
    values = np.ascontiguousarray(values, dtype=float)
    rows, n = values.shape
    if rows == 0 or n == 0:
        return np.full((len(percentiles), rows), np.nan)
    if values.size < _PARALLEL_MIN_VALUES or rows < 2:
        return _rows_in_turn(values, percentiles)
    cuts = np.linspace(0, rows, WORKERS + 1).astype(int)
    parts = thread_map(lambda bounds: _rows_in_turn(values[bounds[0]:bounds[1]], percentiles),
                       zip(cuts[:-1], cuts[1:]))
    return np.concatenate(parts, axis=1)
