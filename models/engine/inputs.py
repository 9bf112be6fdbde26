"""Inputs of a derivation as plain arrays shaped (samples, planets).

The derivation runs on :class:`Inputs`: one row for the nominal values, or
one row per Monte Carlo draw. Star and assumption values are shaped
(samples, 1) so that they broadcast against the planets.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..files.system import System

#: planet fields carried as (samples, planets) arrays, with their Planet attribute
PLANET_FIELDS = ("period", "radius", "mass", "eccentricity", "inclination", "omega", "tidal_q")
#: star fields carried as (samples, 1) arrays
STAR_FIELDS = ("mass", "radius", "teff", "luminosity")
#: assumptions carried as (samples, 1) arrays: the Inputs field and its Assumptions attribute
ASSUMPTION_FIELDS = {"assumed_tidal_q": "tidal_q", "mean_molecular_weight": "mean_molecular_weight",
                     "eclipse_wavelength_um": "eclipse_wavelength_um", "xuv_flux": "xuv_flux",
                     "escape_efficiency": "escape_efficiency",
                     "free_eccentricity_amplitude": "free_eccentricity_amplitude",
                     "free_eccentricity_angle": "free_eccentricity_angle"}


@dataclass(frozen=True)
class Inputs:
    """Arrays that one derivation reads; NaN marks an absent optional value.

    Units: periods [d], planet radius [Rearth], planet mass [Mearth],
    angles [deg], star mass [Msun], star radius [Rsun], Teff [K],
    luminosity [Lsun], magnitudes [mag], free-eccentricity angle [deg]
    (star values and the assumptions are (samples, 1)). ``tidal_q`` is each planet's own Q' (NaN: the
    assumption ``assumed_tidal_q``); the eclipse wavelength is in um.
    ``mass_relation_z`` holds unit normal deviates of the mass-radius
    relation's intrinsic scatter, zero for the nominal values.
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
    tidal_q: np.ndarray
    assumed_tidal_q: np.ndarray
    mean_molecular_weight: np.ndarray
    eclipse_wavelength_um: np.ndarray
    xuv_flux: np.ndarray
    escape_efficiency: np.ndarray
    mass_relation_z: np.ndarray
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
    assumed = {field: np.array([[float(getattr(system.assumptions, name))]]) for field, name in ASSUMPTION_FIELDS.items()}
    return Inputs(**columns, **stars, **assumed,
                  bond_albedo=np.array([[system.assumptions.bond_albedo]]),
                  redistribution=system.assumptions.redistribution_factor,
                  j_mag=np.array([[_value(star.j_mag)]]), k_mag=np.array([[_value(star.k_mag)]]),
                  mass_relation_z=np.zeros((1, len(planets))))
