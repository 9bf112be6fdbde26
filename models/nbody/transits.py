"""Mid-transit times from an integration: sky-plane crossings found each step, refined by Kepler steps.

Observer on +Z (the orbitdeck frame). A planet crosses in front of the star
when its heliocentric x changes sign from + to - with z > 0; mid-transit is
the time of least projected separation, where the sky-plane part of r . v
vanishes, g = x vx + y vy = 0. Between the end of the step that saw the
crossing and the root, the planet is moved on its heliocentric two-body
orbit about G (m_0 + m_j) (a Kepler step, :func:`kepler_drift`) and Newton's
method solves g = 0 with g' = vx^2 + vy^2 + x ax + y ay, a = -G M r / r^3
(the usual definition of mid-transit, e.g. Winn 2010, arXiv:1001.2010,
section 2; its use with a Kepler step between integrator steps is common
practice). The perturbations left out over this fraction of a step move
the time by about (m / M*) (n h)^2 / n, below a second for the systems here.
"""

from __future__ import annotations

import numpy as np

from .kepler_drift import DriftWork, kepler_drift

#: Newton iterations from the interpolated guess (each elementwise, the same number for all)
NEWTON_STEPS = 6


def crossings(previous_x, x, z) -> np.ndarray:
    """Where a planet passed from x > 0 to x <= 0 in front of the star (z > 0): the step held a transit.

    Parameters
    ----------
    previous_x, x, z : ndarray
        Heliocentric x before the step, x and z after it (any matching shapes).

    Returns
    -------
    ndarray of bool
    """
    return (previous_x > 0.0) & (x <= 0.0) & (z > 0.0)


def refine_transit_times(position, velocity, gm, previous_x, step) -> np.ndarray:
    """Offsets tau (<= 0) from the end of the step to mid-transit, one per crossing.

    Parameters
    ----------
    position, velocity : ndarray, shape (3, events)
        Heliocentric position [au] and velocity [au/d] at the end of the step.
    gm : ndarray, shape (events,)
        G (m_0 + m_j) [au^3 d^-2].
    previous_x : ndarray, shape (events,)
        Heliocentric x at the start of the step [au].
    step : ndarray, shape (events,)
        Step length [d].

    Returns
    -------
    ndarray, shape (events,)
        tau [d]: mid-transit is at the end of the step plus tau.
    """
    x_end = position[0]
    # linear interpolation of x between the two ends of the step, the starting guess
    tau = step * x_end / (previous_x - x_end)
    work = DriftWork(x_end.shape)
    x, v = np.empty_like(position), np.empty_like(velocity)
    for _ in range(NEWTON_STEPS):
        x[...], v[...] = position, velocity
        kepler_drift(x, v, gm, tau, work)
        r2 = x[0] * x[0] + x[1] * x[1] + x[2] * x[2]
        pull = gm / (r2 * np.sqrt(r2))
        g = x[0] * v[0] + x[1] * v[1]
        slope = v[0] * v[0] + v[1] * v[1] - pull * (x[0] * x[0] + x[1] * x[1])
        tau = tau - g / slope
    return tau
