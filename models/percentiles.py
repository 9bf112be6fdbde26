"""Exact percentiles of many sample columns at once, faster than a partition.

:func:`row_percentiles` returns what ``np.percentile(values, q, axis=1)``
returns (the 'linear' definition, Hyndman & Fan 1996 definition 7), found
by an exact selection that suits Monte Carlo columns:

1. each row is scaled onto 0..255 and truncated to 8-bit levels, a map
   that never reverses the order of two values;
2. numpy sorts 8-bit integers by counting, so sorting the levels is cheap;
   the sorted levels give the level of each wanted rank and where that
   level's run of sorted positions starts;
3. the row's values on those levels and on the next ranks' (a few dozen
   per rank for a smooth row) are put in order, which places each wanted
   rank and the next one exactly. Rows where a run is long (heavy tails,
   many ties) are tried again with levels of their logarithms where they
   are positive, and otherwise go to ``np.percentile``.

Rows that hold NaN or infinities go to ``np.percentile`` / ``np.nanpercentile``
directly (a row with no value but NaN gives NaN).
"""

from __future__ import annotations

import functools

import numpy as np

#: the 8-bit levels each row is scaled onto (just under 256, so the largest value stays in level 255)
_LEVELS = 255.99
#: sorted positions left of a wanted rank searched for the first value of its level
_RUN_WINDOW = 96
#: rows shorter than this, and runs (each wanted rank's level and the next rank's) holding more
#: values than this per wanted rank, go to np.percentile
_MIN_SAMPLES = 64
_MAX_RUN = 384


@functools.lru_cache(maxsize=64)
def _ranks(n: int, percentiles: tuple) -> tuple[np.ndarray, np.ndarray]:
    """Lower order-statistic index and interpolation weight of each percentile (definition 7);
    read-only arrays, kept for the next call."""
    position = np.asarray(percentiles, dtype=float) / 100.0 * (n - 1)
    lower = np.floor(position).astype(int)
    lower, weight = np.minimum(lower, n - 1), position - lower
    lower.flags.writeable = weight.flags.writeable = False
    return lower, weight


def _levels(values: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Each row scaled onto 0..255 and truncated to 8 bits (a map that never reverses the
    order of two values); also each row's span, and which rows could not
    be scaled (constant, overflowing or not finite)."""
    low = values.min(axis=1)
    span = values.max(axis=1) - low
    scale = (_LEVELS / span).astype(values.dtype)
    bad = ~np.isfinite(scale)
    scale[bad] = 0.0
    levels = np.empty(values.shape, dtype=np.uint8)
    np.multiply(np.subtract(values, low[:, None]), scale[:, None], out=levels, casting="unsafe")   # truncates
    return levels, span, bad


def _order_statistics(values, levels, ordered, lower, bad):
    """The order statistics ``lower`` and ``lower + 1`` of every row, each (rows, len(lower)),
    and which rows they are unsure for.

    Sorted by level, the value of rank k lies in the run of sorted positions
    holding its level. The run starts where that level first appears
    (searched in a window left of k); the row's values on that level and on
    the level of k + 1 (the same, or the next one up, whose least value it
    then is) hold both statistics side by side. The values on the runs of
    every wanted rank are put in order together, one row each; rank k then
    sits as far into its run as it is into its level, past the values of
    the runs on lower levels. Rows whose run starts left of the window or
    holds more than ``_MAX_RUN`` values per rank (heavy tails, many ties) are
    left unsure.
    """
    rows, n = values.shape
    following = np.minimum(lower + 1, n - 1)
    level, next_level = ordered[:, lower], ordered[:, following]          # (rows, ranks)
    window = np.maximum(lower[:, None] + np.arange(-_RUN_WINDOW, 1), 0)   # (ranks, positions)
    in_window = ordered[:, window] == level[:, :, None]
    start = window[np.arange(len(lower)), in_window.argmax(axis=2)]
    unsure = bad | ((window[:, 0] > 0) & in_window[:, :, 0]).any(axis=1)
    # a rank's run: levels from its own to the next rank's (none between holds a value), by uint8 wrap-around
    on_run = np.zeros(levels.shape, dtype=bool)
    for first_level, gap in zip(level.T, (next_level - level).T):
        on_run |= (levels - first_level[:, None]) <= gap[:, None]
    flat = np.flatnonzero(on_run)
    row_of = flat // n
    counts = np.bincount(row_of, minlength=rows)
    unsure |= counts > _MAX_RUN * len(lower)
    counts[unsure] = 0
    keep = counts[row_of] > 0
    flat, row_of = flat[keep], row_of[keep]
    width = max(int(counts.max(initial=0)), 2)
    slot = row_of * width + np.arange(flat.size) - (np.cumsum(counts) - counts)[row_of]
    run = np.full((rows, width), np.inf, dtype=values.dtype)
    run.ravel()[slot] = values.ravel()[flat]
    run.sort(axis=1)
    run_levels = np.full((rows, width), 255, dtype=np.uint8)   # padding is never below a level
    run_levels.ravel()[slot] = levels.ravel()[flat]
    below = (run_levels[:, None, :] < level[:, :, None]).sum(axis=2)
    position = np.where(unsure[:, None], 0, below + lower - start)
    every_row = np.arange(rows)[:, None]
    return (run[every_row, position], run[every_row, np.minimum(position + (following - lower), width - 1)],
            unsure)


def _selected(values: np.ndarray, keys: np.ndarray, lower, weight) -> tuple[np.ndarray, ...]:
    """Percentiles of each row of ``values`` by the 8-bit levels of ``keys`` (``values`` itself or
    any map of it that never reverses the order of two values), which rows are left unsure, and
    each row's span of ``keys`` (not finite where a row holds NaN or infinities)."""
    levels, span, bad = _levels(keys)
    ordered = np.sort(levels, axis=1, kind="stable")   # a counting sort, for 8-bit integers
    low_stat, high_stat, redo = _order_statistics(values, levels, ordered, lower, bad)
    result = (low_stat + weight * (high_stat.astype(float) - low_stat)).T
    constant = span == 0.0
    result[:, constant] = values[constant, 0]
    return result, redo & ~constant, span


def _finite_rows(values: np.ndarray, percentiles) -> tuple[np.ndarray, np.ndarray]:
    """Percentiles of the rows whose values span a finite range, (len(percentiles), rows),
    and which rows those are (the others, holding NaN or infinities, are left undefined).

    Rows too heavy-tailed for levels of their values (a metric spread over
    decades, say) are tried again with levels of their logarithms, where
    all their values are positive; what is still unsure goes to np.percentile.
    """
    rows, n = values.shape
    lower, weight = _ranks(n, tuple(float(q) for q in percentiles))
    if n < _MIN_SAMPLES:
        return np.percentile(values, percentiles, axis=1), np.isfinite(values).all(axis=1)
    result, redo, span = _selected(values, values, lower, weight)
    finite = np.isfinite(span)   # a NaN or an infinity makes the span NaN or infinite
    redo = np.flatnonzero(redo & finite)
    if redo.size:
        again = values[redo]
        positive = again.min(axis=1) > 0.0
        if positive.any():
            logs = np.log(again[positive])
            result[:, redo[positive]], unsure, _ = _selected(again[positive], logs, lower, weight)
            positive[positive] = ~unsure
        redo = redo[~positive]
    if redo.size:
        result[:, redo] = np.percentile(values[redo], percentiles, axis=1)
    return result, finite


def _rows_in_turn(values: np.ndarray, percentiles) -> np.ndarray:
    result, finite = _finite_rows(values, percentiles)
    if finite.all():
        return result
    other = np.flatnonzero(~finite)
    rest = values[other]
    nan = np.isnan(rest)
    some_nan, all_nan = nan.any(axis=1), nan.all(axis=1)
    if not some_nan.all():   # infinite values (np.percentile costs ~0.3 ms even for no row)
        result[:, other[~some_nan]] = np.percentile(rest[~some_nan], percentiles, axis=1)
    result[:, other[all_nan]] = np.nan
    partly = some_nan & ~all_nan
    if partly.any():
        result[:, other[partly]] = np.nanpercentile(rest[partly], percentiles, axis=1)
    return result


def row_percentiles(values, percentiles) -> np.ndarray:
    """Percentiles of each row of ``values``, NaN draws ignored.

    Parameters
    ----------
    values : array_like, shape (rows, samples)
        One row per quantity; C-contiguous rows are fastest. Single
        precision is worked on as it is (order statistics exact, the
        interpolation between them in double precision), anything else in
        double precision.
    percentiles : sequence of float
        In [0, 100].

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
    # a constant row's span divides by zero; inf - inf between infinite order statistics
    with np.errstate(divide="ignore", over="ignore", invalid="ignore"):
        return _rows_in_turn(values, percentiles)
