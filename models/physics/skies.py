"""How large the star and the other planets appear in each planet's sky."""

from __future__ import annotations

import numpy as np

from ..constants import MOON_ANGULAR_DIAMETER


def angular_diameter(radius, distance):
    """Apparent angular diameter of a sphere, 2 arcsin(R / d) (exact for a sphere).

    Parameters
    ----------
    radius, distance : array_like
        One common length unit; where d <= R the sphere fills half the sky (pi).

    Returns
    -------
    ndarray
        Angular diameter [rad].
    """
    ratio = size_ratio(radius, distance)
    angular_diameter_of_ratio(ratio, out=ratio)   # in place: the nominal sky table has N(N-1) rows
    return ratio if ratio.ndim else ratio[()]


def size_ratio(radius, distance, out=None):
    """R / d, at most 1 (where d <= R), from which :func:`angular_diameter_of_ratio` gives the
    angular diameter; it grows with the diameter, so it has the same order statistics."""
    with np.errstate(divide="ignore"):
        ratio = np.asarray(np.divide(radius, distance, out=out))   # d = 0: inf, which the minimum makes 1
    np.minimum(ratio, 1.0, out=ratio)
    return ratio


def angular_diameter_of_ratio(ratio, out=None):
    """Angular diameter [rad], 2 arcsin(R / d), of a sphere whose :func:`size_ratio` is ``ratio``
    (into ``out`` if given)."""
    diameter = np.arcsin(ratio, out=out)
    diameter *= 2.0
    return diameter


def moon_ratio(angular_diameter_rad):
    """Angular diameter in units of the Moon's seen from Earth (about 0.518 deg)."""
    return np.asarray(angular_diameter_rad) / MOON_ANGULAR_DIAMETER
