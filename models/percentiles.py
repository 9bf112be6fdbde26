"""Exact percentiles of many sample columns at once, faster than a partition.

:func:`row_percentiles` returns what ``np.percentile(values, q, axis=1)``
returns (the 'linear' definition, Hyndman & Fan 1996 definition 7), found
by an exact selection that suits Monte Carlo columns:

1. each row is scaled onto 0..255 and truncated to 8-bit levels, a map
   that never reverses the order of two values;
2. numpy sorts 8-bit integers by counting, so sorting the levels is cheap;
   the sorted levels give the level of each wanted rank and where that
   level's run of sorted positions starts;
3. the row's values on that level and on the next rank's (a few dozen for
   a smooth row) are put in order, which places the wanted rank and the
   next one exactly. Rows where the run is long (heavy tails, many ties)
   are tried again with levels of their logarithms where they are
   positive, and otherwise go to ``np.percentile``.

Rows that hold NaN or infinities go to ``np.percentile`` / ``np.nanpercentile``
directly (a row with no value but NaN gives NaN).
"""

from __future__ import annotations

import numpy as np

#: the 8-bit levels each row is scaled onto (just under 256, so the largest value stays in level 255)
_LEVELS = 255.99
#: sorted positions left of a wanted rank searched for the first value of its level
_RUN_WINDOW = 96
#: rows shorter than this, and runs (a wanted rank's level and the next rank's) holding more values
#: than this, go to np.percentile
_MIN_SAMPLES = 64
_MAX_RUN = 384


def _ranks(n: int, percentiles) -> tuple[np.ndarray, np.ndarray]:
    """Lower order-statistic index and interpolation weight of each percentile (definition 7)."""
    position = np.asarray(percentiles, dtype=float) / 100.0 * (n - 1)
    lower = np.floor(position).astype(int)
    return np.minimum(lower, n - 1), position - lower


def _levels(values: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Each row scaled onto 0..255 and truncated to 8 bits (a map that never reverses the
    order of two values); also each row's least value, its span, and which rows could not
    be scaled (constant, overflowing or not finite)."""
    low = values.min(axis=1)
    span = values.max(axis=1) - low
    with np.errstate(divide="ignore", over="ignore", invalid="ignore"):
        scale = (_LEVELS / span).astype(values.dtype)
    bad = ~np.isfinite(scale)
    scale[bad] = 0.0
    with np.errstate(invalid="ignore"):
        scaled = np.subtract(values, low[:, None])
        scaled *= scale[:, None]
        levels = scaled.astype(np.uint8)
    return levels, low, span, bad


def _pair_of_order_statistics(values, levels, ordered, rank: int, bad):
    """The order statistics ``rank`` and ``rank + 1`` of every row, and which rows they are unsure for.

    Sorted by level, the value of ``rank`` lies in the run of sorted
    positions holding its level. The run starts where that level first
    appears (searched in a window left of ``rank``); the row's values on
    that level and on the level of ``rank + 1`` (the same, or the next one
    up, whose least value it then is), put in order, hold both statistics
    side by side. Rows whose run starts left of the window or holds more
    than ``_MAX_RUN`` values (heavy tails, many ties) are left unsure.
    """
    rows, n = values.shape
    following = min(rank + 1, n - 1)
    level, next_level = ordered[:, rank, None], ordered[:, following, None]
    first = max(rank - _RUN_WINDOW, 0)
    in_window = ordered[:, first:rank + 1] == level
    start = first + in_window.argmax(axis=1)
    unsure = bad | ((first > 0) & in_window[:, 0])
    on_run = levels == level
    on_run |= levels == next_level
    flat = np.flatnonzero(on_run)
    row_of = flat // n
    counts = np.bincount(row_of, minlength=rows)
    unsure |= counts > _MAX_RUN
    counts[unsure] = 0
    keep = counts[row_of] > 0
    flat, row_of = flat[keep], row_of[keep]
    width = max(int(counts.max(initial=0)), 2)
    slot = row_of * width + np.arange(flat.size) - (np.cumsum(counts) - counts)[row_of]
    run = np.full((rows, width), np.inf, dtype=values.dtype)
    run.ravel()[slot] = values.ravel()[flat]
    run.sort(axis=1)
    offset = np.where(unsure, 0, rank - start)
    every_row = np.arange(rows)
    return run[every_row, offset], run[every_row, np.minimum(offset + following - rank, width - 1)], unsure


def _selected(values: np.ndarray, keys: np.ndarray, lower, weight, transform) -> tuple[np.ndarray, np.ndarray]:
    """Percentiles of each row of ``transform(values)`` by the 8-bit levels of ``keys`` (``values``
    itself or any map of it that never reverses the order of two values), and which rows are left
    unsure."""
    levels, _, span, bad = _levels(keys)
    ordered = np.sort(levels, axis=1, kind="stable")   # a counting sort, for 8-bit integers
    result = np.empty((len(lower), values.shape[0]))
    redo = np.zeros(values.shape[0], dtype=bool)
    with np.errstate(invalid="ignore"):
        for index, rank in enumerate(lower):
            low_stat, high_stat, unsure = _pair_of_order_statistics(values, levels, ordered, int(rank), bad)
            low_stat, high_stat = transform(low_stat), transform(high_stat)
            result[index] = low_stat + weight[index] * (high_stat.astype(float) - low_stat)
            redo |= unsure
    constant = span == 0.0
    result[:, constant] = transform(values[constant, 0])
    return result, redo & ~constant


def _finite_rows(values: np.ndarray, percentiles, skip: np.ndarray, transform) -> np.ndarray:
    """Percentiles of the rows that hold only finite values, (len(percentiles), rows); rows
    flagged in ``skip`` (the others) are left undefined.

    Rows too heavy-tailed for levels of their values (a metric spread over
    decades, say) are tried again with levels of their logarithms, where
    all their values are positive; what is still unsure goes to np.percentile.
    """
    rows, n = values.shape
    lower, weight = _ranks(n, percentiles)
    if n < _MIN_SAMPLES:
        with np.errstate(invalid="ignore"):
            return np.percentile(transform(values), percentiles, axis=1)
    result, redo = _selected(values, values, lower, weight, transform)
    redo = np.flatnonzero(redo & ~skip)
    if redo.size:
        again = values[redo]
        positive = again.min(axis=1) > 0.0
        if positive.any():
            logs = np.log(again[positive])
            result[:, redo[positive]], unsure = _selected(again[positive], logs, lower, weight, transform)
            positive[positive] = ~unsure
        redo = redo[~positive]
    if redo.size:
        result[:, redo] = np.percentile(transform(values[redo]), percentiles, axis=1)
    return result


def _rows_in_turn(values: np.ndarray, percentiles, transform) -> np.ndarray:
    finite = np.isfinite(values).all(axis=1)
    result = _finite_rows(values, percentiles, ~finite, transform)
    if finite.all():
        return result
    other = np.flatnonzero(~finite)
    rest = transform(values[other])
    nan = np.isnan(rest)
    some_nan, all_nan = nan.any(axis=1), nan.all(axis=1)
    with np.errstate(invalid="ignore"):  # inf - inf between infinite order statistics
        result[:, other[~some_nan]] = np.percentile(rest[~some_nan], percentiles, axis=1)
        result[:, other[all_nan]] = np.nan
        partly = some_nan & ~all_nan
        if partly.any():
            result[:, other[partly]] = np.nanpercentile(rest[partly], percentiles, axis=1)
    return result


def _unchanged(values):
    return values


def row_percentiles(values, percentiles, transform=None) -> np.ndarray:
    """Percentiles of each row of ``values`` (or of ``transform(values)``), NaN draws ignored.

    Parameters
    ----------
    values : array_like, shape (rows, samples)
        One row per quantity; C-contiguous rows are fastest. Single
        precision is worked on as it is (order statistics exact, the
        interpolation between them in double precision), anything else in
        double precision.
    percentiles : sequence of float
        In [0, 100].
    transform : callable, optional
        An elementwise map that never reverses the order of two values
        (non-decreasing). The percentiles are those of ``transform(values)``,
        exactly, but the map is applied to the order statistics only.

    Returns
    -------
    ndarray, shape (len(percentiles), rows)
        As ``np.nanpercentile(values, percentiles, axis=1)`` ('linear'
        interpolation between order statistics); NaN where a row holds no
        value but NaN.
    """
    values = np.asarray(values)
    values = np.ascontiguousarray(values, dtype=values.dtype if values.dtype == np.float32 else float)
    rows, n = values.shape
    if rows == 0 or n == 0:
        return np.full((len(percentiles), rows), np.nan)
    return _rows_in_turn(values, percentiles, transform or _unchanged)
