"""The TSM above which Kempton et al. 2018 suggest follow-up, by planet radius."""

import numpy as np
import pytest

from orbitdeck.models.physics.observability import tsm_follow_up_threshold


@pytest.mark.parametrize("radius, expected", [(0.5, 10.0), (1.0, 10.0), (1.499, 10.0), (1.5, 90.0), (2.0, 90.0),
                                              (2.75, 90.0), (4.0, 90.0), (9.99, 90.0)])
def test_thresholds_by_radius_bin(radius, expected):
    # Kempton et al. 2018, PASP 130, 114401: TSM > 10 for Rp < 1.5 Rearth and TSM > 90 for
    # 1.5 < Rp < 10 Rearth are the thresholds they suggest for follow-up (the same bins and values are
    # used by an independent implementation of the paper's target selection, checked with the search tool)
    assert tsm_follow_up_threshold(radius) == expected


def test_no_threshold_where_the_metric_is_undefined():
    # the metric (and so its threshold) is defined below 10 Rearth only (Kempton et al. 2018, Table 1)
    assert np.isnan(tsm_follow_up_threshold(10.0)) and np.isnan(tsm_follow_up_threshold(15.0))
    np.testing.assert_array_equal(tsm_follow_up_threshold(np.array([1.0, 3.0])), [10.0, 90.0])
