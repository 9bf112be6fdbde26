"""How large the star and the other planets appear in each planet's sky."""

from __future__ import annotations

import numpy as np

from .constants import MOON_ANGULAR_DIAMETER


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
    with np.errstate(divide="ignore"):
        ratio = np.asarray(np.divide(radius, distance))   # d = 0: inf, which the minimum makes 1
    np.minimum(ratio, 1.0, out=ratio)
    np.arcsin(ratio, out=ratio)
    ratio *= 2.0
    return ratio if ratio.ndim else ratio[()]


def moon_ratio(angular_diameter_rad):
    """Angular diameter in units of the Moon's seen from Earth (about 0.518 deg)."""
    return np.asarray(angular_diameter_rad) / MOON_ANGULAR_DIAMETER
