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
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(distance > radius, radius / np.maximum(distance, 1e-300), 1.0)
    return 2.0 * np.arcsin(ratio)


def moon_ratio(angular_diameter_rad):
    """Angular diameter in units of the Moon's seen from Earth (about 0.518 deg)."""
    return np.asarray(angular_diameter_rad) / MOON_ANGULAR_DIAMETER
