"""Intervals of the sky table over Monte Carlo draws, a few planet pairs at a time.

The sky table has N(N-1) planet rows besides its N star rows, so for a
crowded system it holds most of a Monte Carlo derivation's numbers. They are
worked out pair by pair in groups small enough for the CPU cache: for each
group the closest distances of its pairs in every draw
(:func:`orbits.closest_distance_of_draws`), the diameter of each planet of a
pair seen from the other, and at once the percentiles of those rows, so no
draw of the sky table is ever kept in memory. The groups are tasks that two
threads can share (:mod:`orbitdeck.models.parallel`).

The diameters' percentiles come from those of R / d: the diameter grows with
R / d, so both have the same order statistics, and only the interpolation
between two neighbouring ones is taken linear in R / d instead of in the
angle. For R / d well below 1 that is a relative difference of at most
delta^2 / 8 for neighbours delta apart in R / d, far below single precision.

Everything here is single precision (~1e-7 relative, far under the spread
of the draws) with one Newton step for the closest approaches, unless the
caller asks for double precision (draws that spread less than single
precision resolves well), which takes the full search of the nominal sky
table (:mod:`orbitdeck.models.compute`).
"""

from __future__ import annotations

import numpy as np

from .compute import Orbit, sky_rows
from .constants import AU, RAD_TO_ARCSEC
from .orbits import DrawOrbits, closest_distance_of_draws, closest_distance_of_pairs
from .percentiles import row_percentiles
from .skies import angular_diameter_of_ratio, moon_ratio, size_ratio

#: values per array of one group of pairs (measured best, 30 planets x 4000 draws: about 10 %
#: faster than half as many; long enough numpy calls for two threads to overlap, few enough for
#: the CPU cache)
_GROUP_VALUES = 131_072


def _orbit_major(array, samples: int, dtype) -> np.ndarray:
    """(samples or 1, planets) -> (planets, samples), contiguous."""
    return np.ascontiguousarray(np.broadcast_to(array, (samples, array.shape[1])).T, dtype=dtype)


class SkyIntervals:
    """The sky table's percentiles over the draws of an :class:`Orbit`.

    :meth:`tasks` lists independent pieces of work (run them on any thread,
    in any order); afterwards :meth:`result` gives the intervals.
    """

    def __init__(self, orbit: Orbit, samples: int, percentiles, single: bool = True):
        self.percentiles = tuple(percentiles)
        self.planets = orbit.a_au.shape[1]
        dtype = np.float32 if single else np.float64
        self.a, self.e, self.omega = (_orbit_major(x, samples, dtype)
                                      for x in (orbit.a_au, orbit.eccentricity, orbit.omega_rad))
        self.draw_orbits = DrawOrbits.of(self.a, self.e, self.omega) if single else None
        self.radius_au = _orbit_major(orbit.radius_m / AU, samples, dtype)
        self.star_radius_au = np.asarray(orbit.star_radius_m / AU, dtype=dtype).reshape(1, -1)
        self.inner, self.outer = np.triu_indices(self.planets, 1)
        per_group = max(1, _GROUP_VALUES // max(samples, 1))
        self.groups = [slice(start, start + per_group) for start in range(0, self.inner.size, per_group)]
        count = len(self.percentiles)
        # rows: the closest distance of each pair, then the outer planet seen from the inner one and
        # the inner seen from the outer one; and the star seen from each planet
        self._pairs = np.empty((count, 3, self.inner.size))
        self._star = np.empty((count, self.planets))

    def tasks(self) -> list:
        """Zero-argument callables that together fill the intervals; the largest first."""
        return [lambda group=group: self._pair_group(group) for group in self.groups] + [self._star_rows]

    def _pair_group(self, group: slice) -> None:
        inner, outer = self.inner[group], self.outer[group]
        if self.draw_orbits is not None:
            distance = closest_distance_of_draws(self.draw_orbits, inner, outer)
        else:   # double precision: the full search of the nominal sky table
            distance = closest_distance_of_pairs(self.a.T, self.e.T, self.omega.T, inner, outer).T
        # rows: the closest distances, then R / d of the outer planet seen from the inner one and
        # of the inner seen from the outer one, whose percentiles give the diameters'
        count = inner.size
        rows = np.empty((3 * count, distance.shape[1]), dtype=distance.dtype)
        rows[:count] = distance
        size_ratio(np.take(self.radius_au, outer, axis=0), distance, out=rows[count:2 * count])
        size_ratio(np.take(self.radius_au, inner, axis=0), distance, out=rows[2 * count:])
        bounds = row_percentiles(rows, self.percentiles).reshape(len(self.percentiles), 3, count)
        bounds[:, 1:] = angular_diameter_of_ratio(bounds[:, 1:])
        self._pairs[:, :, group] = bounds

    def _star_rows(self) -> None:
        self._star[:] = angular_diameter_of_ratio(row_percentiles(size_ratio(self.star_radius_au, self.a),
                                                                   self.percentiles))

    def result(self, semi_major_axis_bounds) -> dict[str, tuple]:
        """(low, high) per row of the sky table of ``"skies.closest_distance_au"``,
        ``"skies.max_angular_diameter_arcsec"`` and ``"skies.moon_ratio"``; the star is as far
        as the observer's semi-major axis, whose (low, high) per planet is ``semi_major_axis_bounds``."""
        observer, body, pair = sky_rows(self.planets)
        star_row, pair = body < 0, np.maximum(pair, 0)
        # an outer body seen from an inner observer is the pair's second diameter row, else its third
        seen = np.where(body > observer, 1, 2)
        distances, diameters = [], []
        for a, star, pairs in zip(semi_major_axis_bounds, self._star, self._pairs):
            planet_distance, planet = (pairs[0, pair], pairs[seen, pair]) if pairs.size else (0.0, 0.0)
            distances.append(np.where(star_row, np.asarray(a)[observer], planet_distance))
            # at most half the sky (pi in single precision rounds up, past it)
            diameters.append(np.minimum(np.where(star_row, star[observer], planet), np.pi))
        return {"skies.closest_distance_au": tuple(distances),
                "skies.max_angular_diameter_arcsec": tuple(RAD_TO_ARCSEC * d for d in diameters),
                "skies.moon_ratio": tuple(moon_ratio(d) for d in diameters)}
