"""Newton's equations of motion, written out for scipy's ``solve_ivp``: the reference the N-body map is checked against."""

from __future__ import annotations

import numpy as np


def newton(t, y, gm):
    """Newton's equations for bodies with gravitational parameters ``gm`` (positions (3, bodies), then velocities)."""
    bodies = gm.size
    position = y[:3 * bodies].reshape(3, bodies)
    separation = position[:, None, :] - position[:, :, None]
    distance3 = np.linalg.norm(separation, axis=0) ** 3
    np.fill_diagonal(distance3, np.inf)
    return np.concatenate([y[3 * bodies:], (separation * gm / distance3).sum(axis=2).ravel()])
