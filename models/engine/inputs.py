"""Inputs of a derivation as plain arrays shaped (samples, planets).

The derivation runs on :class:`Inputs`: one row for the nominal values, or
one row per Monte Carlo draw. Star and assumption values are shaped
(samples, 1) so that they broadcast against the planets.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..system import System

#: planet fields carried as (samples, planets) arrays, with their Planet attribute
PLANET_FIELDS = ("period", "radius", "mass", "eccentricity", "inclination", "omega")
#: star fields carried as (samples, 1) arrays
STAR_FIELDS = ("mass", "radius", "teff", "luminosity")


@dataclass(frozen=True)
class Inputs:
    """Arrays that one derivation reads; NaN marks an absent optional value.

    Units: periods [d], planet radius [Rearth], planet mass [Mearth],
    angles [deg], star mass [Msun], star radius [Rsun], Teff [K],
    luminosity [Lsun], magnitudes [mag], free-eccentricity angle [deg]
    (star values and the assumptions are (samples, 1)).
    """

    period: np.ndarray
    radius: np.ndarray
    mass: np.ndarray
    eccentricity: np.ndarray
    inclination: np.ndarray
    omega: np.ndarray
    star_mass: np.ndarray
    star_radius: np.ndarray
    star_teff: np.ndarray
    star_luminosity: np.ndarray
    bond_albedo: np.ndarray
    redistribution: float
    j_mag: np.ndarray
    k_mag: np.ndarray
    free_eccentricity_amplitude: np.ndarray
    free_eccentricity_angle: np.ndarray

    @property
    def samples(self) -> int:
        return self.period.shape[0]


def _value(x) -> float:
    return np.nan if x is None else float(x)


def nominal_inputs(system: System) -> Inputs:
    """The nominal values of ``system`` as a one-sample :class:`Inputs`."""
    planets = system.planets
    star = system.star
    table = np.array([[np.nan if v is None else v for v in p.values_of(PLANET_FIELDS)] for p in planets],
                     dtype=float).reshape(len(planets), len(PLANET_FIELDS))
    columns = {field: table[:, i][None, :].copy() for i, field in enumerate(PLANET_FIELDS)}
    stars = {f"star_{field}": np.array([[_value(getattr(star, field))]]) for field in STAR_FIELDS}
    return Inputs(**columns, **stars,
                  bond_albedo=np.array([[system.assumptions.bond_albedo]]),
                  redistribution=system.assumptions.redistribution_factor,
                  j_mag=np.array([[_value(star.j_mag)]]), k_mag=np.array([[_value(star.k_mag)]]),
                  free_eccentricity_amplitude=np.array([[system.assumptions.free_eccentricity_amplitude]]),
                  free_eccentricity_angle=np.array([[system.assumptions.free_eccentricity_angle]]))
