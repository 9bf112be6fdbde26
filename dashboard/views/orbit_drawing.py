"""Orbits and circles as drawable data: ellipses about a focus, points around them, and the columns of
HoloViews ``Segments`` layers (one colour and width per curve), solid or dashed.

Layout draws every orbit, Hill sphere and reference circle through these,
for the current state and the pinned reference alike.
"""

from __future__ import annotations

import numpy as np

from orbitdeck.models.motion import ephemeris

#: points along each drawn orbit and circle
ORBIT_POINTS, CIRCLE_POINTS = 180, 72


def orbit_ellipses(a, e, omega_rad) -> dict:
    """Keplerian orbits about a focus at the origin: centre, axes [unit of a], angle [rad].

    The ellipse of semi-major axis a and eccentricity e has the semi-minor
    axis b = a sqrt(1 - e^2) and its centre a e from the focus, opposite
    periastron (Murray & Dermott 1999, sec. 2.4); periastron lies at the
    angle omega from the line of nodes, which is also the angle of the major
    axis. Returns the columns ``x``, ``y`` (centre), ``width`` (2a),
    ``height`` (2b) and ``angle`` (omega).
    """
    a, e, omega = (np.asarray(v, dtype=float) for v in (a, e, omega_rad))
    cos_w, sin_w = np.cos(omega), np.sin(omega)
    return {"x": -a * e * cos_w, "y": -a * e * sin_w, "width": 2.0 * a,
            "height": 2.0 * a * np.sqrt(1.0 - e * e), "angle": omega}


def ellipse_points(ellipses: dict, count: int = ORBIT_POINTS):
    """Points around each ellipse of :func:`orbit_ellipses`, shaped (ellipses, count + 1), closed."""
    t = np.linspace(0.0, 2.0 * np.pi, count + 1)
    cx, cy, w, h, angle = (np.asarray(ellipses[k], dtype=float)[:, None]
                           for k in ("x", "y", "width", "height", "angle"))
    u, v = 0.5 * w * np.cos(t), 0.5 * h * np.sin(t)
    return cx + u * np.cos(angle) - v * np.sin(angle), cy + u * np.sin(angle) + v * np.cos(angle)


def circle_points(x, y, radius, count: int = CIRCLE_POINTS):
    """Points around circles of ``radius`` about (x, y), shaped (circles, count + 1), closed."""
    t = np.linspace(0.0, 2.0 * np.pi, count + 1)
    x, y, radius = (np.atleast_1d(np.asarray(v, dtype=float))[:, None] for v in (x, y, radius))
    return x + radius * np.cos(t), y + radius * np.sin(t)


def in_plane_positions(elements, time: float):
    """Planet positions in the orbital plane at ``time`` [BJD_TDB]: x, y, r [au] and f [rad].

    Solves Kepler's equation through :func:`orbitdeck.models.motion.ephemeris.positions`
    and turns the distance and the true anomaly into in-plane coordinates.
    """
    pos = ephemeris.positions(elements, time)
    r = np.sqrt(pos.x_au**2 + pos.y_au**2 + pos.z_au**2)
    angle = elements.omega_rad + pos.true_anomaly_rad
    return r * np.cos(angle), r * np.sin(angle), r, pos.true_anomaly_rad


def curve_segments(xs, ys, colours, widths, x_range, y_range) -> dict:
    """Closed curves (rows of points) as the columns of a Segments layer, one colour and width per curve."""
    xs, ys = np.asarray(xs, dtype=float), np.asarray(ys, dtype=float)
    per = max(xs.shape[1] - 1, 0) if xs.ndim == 2 else 0
    return {"x0": xs[:, :-1].ravel() if per else np.zeros(0), "y0": ys[:, :-1].ravel() if per else np.zeros(0),
            "x1": xs[:, 1:].ravel() if per else np.zeros(0), "y1": ys[:, 1:].ravel() if per else np.zeros(0),
            "colour": [c for c in colours for _ in range(per)], "width": np.repeat(np.asarray(widths, float), per),
            "x_range": x_range, "y_range": y_range}


def dashed(segments: dict, per: int, on: int = 3, off: int = 2) -> dict:
    """Every closed curve of :func:`curve_segments` (``per`` segments each) cut into dashes of ``on`` segments with
    gaps of ``off``: a dash pattern set in the data, which the curve's many short segments would otherwise
    restart at every segment and hide (in both backends)."""
    keep = (np.arange(len(segments["x0"])) % per) % (on + off) < on if per else np.zeros(0, dtype=bool)
    out = {k: np.asarray(v)[keep] for k, v in segments.items() if k in ("x0", "y0", "x1", "y1", "width")}
    return {**segments, **out, "colour": [c for c, k in zip(segments["colour"], keep) if k]}
