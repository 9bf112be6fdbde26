"""Skies: how large the star and every other planet can appear from each planet.

Rows: for each observer in period order, the star first, then every other
planet in period order (N^2 rows for N planets). A planet's largest
apparent size is at the closest approach of the two orbits (coplanar
orbits sharing a focus, the common practice for compact transiting
systems); the star's at the observer's periastron, a (1 - e).
"""

from functools import lru_cache

import numpy as np

from ...physics import orbits, skies
from ...constants import AU, RAD_TO_ARCSEC
from ..registry import intermediate, quantity

_SKIES = "Skies: largest apparent size of each body"


@lru_cache(maxsize=16)
def all_sky_rows(n_planets: int) -> tuple[np.ndarray, np.ndarray]:
    """Observer and body indices of every sky row; body -1 is the star. Read-only, shared."""
    observer = np.repeat(np.arange(n_planets), n_planets)
    body = np.tile(np.arange(-1, n_planets - 1), n_planets)
    body = np.where(body >= observer, body + 1, body)
    observer.flags.writeable = body.flags.writeable = False
    return observer, body


@intermediate("skies", description="(observer, body) planet indices of the rows computed; body -1 is the star")
def sky_rows(c):
    return all_sky_rows(c.planet_count)


@quantity("skies", unit="au", label="closest", fmt=".4g",
          description="closest distance between observer and body (the star: at periastron; planets: closest "
                      "approach of coplanar orbits)",
          source="murray_dermott1999", group=_SKIES, views=("skies",))
def closest_distance_au(c):
    observer, body = c.sky_rows
    a, e, omega = c.semi_major_axis_au, c.eccentricity, c.omega_rad
    draws = max(x.shape[0] for x in (a, e, omega))   # any of them may be one row (no uncertainty) or every draw
    distance = np.array(np.broadcast_to(c.periastron_au[:, observer], (draws, observer.size)))
    planet = np.flatnonzero(body >= 0)
    # each pair of orbits once, whichever planet observes the other (a pair's key: low * N + high)
    count = c.planet_count
    keys, row_pair = np.unique(np.minimum(observer[planet], body[planet]) * count
                               + np.maximum(observer[planet], body[planet]), return_inverse=True)
    low, high = np.divmod(keys, count)
    closest = orbits.closest_orbit_distance(a[:, low], e[:, low], omega[:, low], a[:, high], e[:, high], omega[:, high])
    distance[:, planet] = closest[:, row_pair.ravel()]
    return distance


@intermediate("skies", unit="rad", description="largest angular diameter of the body seen from the observer")
def sky_diameter_rad(c):
    observer, body = c.sky_rows
    planet_radius_au = c.radius_m / AU
    star_radius_au = np.broadcast_to(c.star_radius_m / AU, (c.star_radius_m.shape[0], body.size))
    body_radius_au = np.where(body < 0, star_radius_au, planet_radius_au[:, np.maximum(body, 0)])
    return skies.angular_diameter(body_radius_au, c.closest_distance_au)


@quantity("skies", unit="arcsec", label="max diameter", fmt=".4g",
          description="largest apparent angular diameter, 2 arcsin(R/d)", group=_SKIES, views=("skies",))
def max_angular_diameter_arcsec(c):
    return c.sky_diameter_rad * RAD_TO_ARCSEC


@quantity("skies", label="x Moon from Earth", fmt=".3g",
          description="largest apparent diameter in units of the Moon's seen from Earth", group=_SKIES,
          views=("skies",))
def moon_ratio(c):
    return skies.moon_ratio(c.sky_diameter_rad)
