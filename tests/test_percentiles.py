"""The fast percentile selection against numpy's own np.percentile / np.nanpercentile.

numpy is the reference (general-purpose library, 'linear' method, Hyndman &
Fan 1996 definition 7); ours must agree to rounding on every kind of row a
Monte Carlo produces: smooth, heavy-tailed, tied, constant, NaN, infinite.
"""

import warnings

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra import numpy as hnp

from orbitdeck.models.percentiles import row_percentiles

PERCENTILES = (16.0, 84.0)


def _reference(values, q=PERCENTILES):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return np.nanpercentile(values, q, axis=1)


def _assert_same(got, expected):
    assert np.array_equal(np.isnan(got), np.isnan(expected))
    finite = np.isfinite(expected)
    np.testing.assert_allclose(got[finite], expected[finite], rtol=1e-13, atol=0)
    assert np.array_equal(got[~finite & ~np.isnan(expected)], expected[~finite & ~np.isnan(expected)])


def test_every_kind_of_row_matches_numpy():
    rng = np.random.default_rng(11)
    rows = rng.standard_normal((40, 4000))
    rows[0] = 3.25                                          # constant
    rows[1] = np.exp(6.0 * rng.standard_normal(4000))      # heavy tail: most draws share a few levels
    rows[2] = np.round(rows[2], 1)                           # ties between many draws
    rows[3, :250] = np.nan                                  # some NaN draws
    rows[4] = np.nan                                        # no value at all
    rows[5, 17] = np.inf
    rows[6, :3] = -np.inf
    rows[7] = 1e12 + rng.standard_normal(4000) * 1e-3       # tiny spread on a large value
    rows[8] = rng.integers(0, 3, 4000)                      # three values only
    _assert_same(row_percentiles(rows, PERCENTILES), _reference(rows))


def test_large_calls_give_the_same_numbers():
    rng = np.random.default_rng(12)
    rows = rng.gamma(2.0, size=(300, 4000))
    _assert_same(row_percentiles(rows, PERCENTILES), _reference(rows))


@pytest.mark.parametrize("samples", [1, 2, 3, 9, 64])
def test_short_rows(samples):
    rows = np.random.default_rng(samples).standard_normal((5, samples))
    _assert_same(row_percentiles(rows, (0.0, 16.0, 50.0, 84.0, 100.0)),
                 _reference(rows, (0.0, 16.0, 50.0, 84.0, 100.0)))


@settings(max_examples=60, deadline=None)
@given(hnp.arrays(np.float64, hnp.array_shapes(min_dims=2, max_dims=2, min_side=1, max_side=40),
                  elements=st.one_of(st.floats(-1e6, 1e6), st.sampled_from([0.0, 1.0, np.nan, np.inf]))),
       st.lists(st.floats(0.0, 100.0), min_size=1, max_size=4))
def test_any_array_matches_numpy(values, percentiles):
    _assert_same(row_percentiles(values, percentiles), _reference(values, percentiles))


@settings(max_examples=60, deadline=None)
@given(hnp.arrays(np.float64, st.tuples(st.integers(1, 6), st.integers(64, 600)),
                  elements=st.one_of(st.floats(-1e3, 1e3), st.sampled_from([0.0, 1.0, 2.5, 1e9, np.nan]))),
       st.lists(st.floats(0.0, 100.0), min_size=1, max_size=4), st.booleans())
def test_long_rows_of_any_values_match_numpy(values, percentiles, single):
    # rows long enough for the level selection, with ties, far outliers and NaN, in both precisions
    values = values.astype(np.float32) if single else values
    expected = _reference(values, percentiles)
    got = row_percentiles(values, percentiles)
    if single:   # numpy interpolates in single precision, we in double
        assert np.array_equal(np.isnan(got), np.isnan(expected))
        np.testing.assert_allclose(got[~np.isnan(got)], expected[~np.isnan(expected)], rtol=1e-6, atol=1e-3)
    else:
        _assert_same(got, expected)


@pytest.mark.parametrize("dtype", [np.float32, np.float64])
def test_rows_spread_over_decades_are_selected_by_their_logarithms(dtype, monkeypatch):
    # positive rows spread over many decades (a heavy-tailed metric) crowd into a few 8-bit levels
    # of their values; their logarithms spread evenly, so they must not need numpy's own percentile
    from orbitdeck.models import percentiles

    rng = np.random.default_rng(5)
    rows = np.exp(rng.uniform(-40.0, 0.0, (6, 4000)) * rng.uniform(0.2, 2.0, (6, 1))).astype(dtype)
    expected = _reference(rows.astype(float))
    monkeypatch.setattr(percentiles.np, "percentile", None)
    _assert_same(row_percentiles(rows, PERCENTILES), expected)

