"""Solar System bodies as reference points for mass-radius and shoreline diagrams.

Earth's and Jupiter's masses and radii come from astropy.constants (IAU 2015
nominal values; radii equatorial). The others are NASA planetary and
satellite fact-sheet values (masses, volumetric mean radii, the semi-major
axis of the orbit about the Sun of the body or of its planet), typed from
memory; each row says where its numbers come from. Whether a body keeps an
atmosphere is as Zahnle & Catling 2017 (ApJ 843, 122) sort them.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..constants import G, M_EARTH, M_JUP, R_EARTH, R_JUP

_FACT_SHEET = "NASA fact sheet (from memory)"


@dataclass(frozen=True)
class Body:
    """One Solar System body: mass [kg], radius [m], distance from the Sun [au]."""

    name: str
    mass_kg: float
    radius_m: float
    distance_au: float
    has_atmosphere: bool
    planet: bool
    source: str

    @property
    def mass_mearth(self) -> float:
        return self.mass_kg / M_EARTH

    @property
    def radius_rearth(self) -> float:
        return self.radius_m / R_EARTH

    @property
    def escape_speed_kms(self) -> float:
        """sqrt(2 G M / R) [km s^-1]."""
        return float(np.sqrt(2.0 * G * self.mass_kg / self.radius_m)) / 1000.0

    @property
    def insolation_earth(self) -> float:
        """Insolation relative to Earth's, 1 / d^2 (circular orbit at the mean distance)."""
        return 1.0 / self.distance_au**2


BODIES = (
    Body("Mercury", 0.33011e24, 2439.7e3, 0.38710, False, True, _FACT_SHEET),
    Body("Venus", 4.8675e24, 6051.8e3, 0.72333, True, True, _FACT_SHEET),
    Body("Earth", M_EARTH, R_EARTH, 1.0, True, True, "astropy IAU 2015 nominal (equatorial radius)"),
    Body("Moon", 0.07346e24, 1737.4e3, 1.0, False, False, _FACT_SHEET),
    Body("Mars", 0.64171e24, 3389.5e3, 1.52366, True, True, _FACT_SHEET),
    Body("Io", 8.931938e22, 1821.6e3, 5.2044, False, False, _FACT_SHEET),
    Body("Europa", 4.799844e22, 1560.8e3, 5.2044, False, False, _FACT_SHEET),
    Body("Ganymede", 1.4819e23, 2631.2e3, 5.2044, False, False, _FACT_SHEET),
    Body("Callisto", 1.075938e23, 2410.3e3, 5.2044, False, False, _FACT_SHEET),
    Body("Jupiter", M_JUP, R_JUP, 5.2044, True, True, "astropy IAU 2015 nominal (equatorial radius); "
         "distance " + _FACT_SHEET),
    Body("Titan", 1.3452e23, 2574.7e3, 9.5826, True, False, _FACT_SHEET),
    Body("Saturn", 568.34e24, 58232e3, 9.5826, True, True, _FACT_SHEET),
    Body("Uranus", 86.813e24, 25362e3, 19.19126, True, True, _FACT_SHEET),
    Body("Neptune", 102.413e24, 24622e3, 30.07, True, True, _FACT_SHEET),
    Body("Triton", 2.14e22, 1353.4e3, 30.07, True, False, _FACT_SHEET),
    Body("Pluto", 1.303e22, 1188.3e3, 39.48, True, False, _FACT_SHEET),
)


def body(name: str) -> Body:
    """The reference body called ``name``."""
    for found in BODIES:
        if found.name == name:
            return found
    raise KeyError(f"no reference body {name!r}")


def reference_points(planets_only: bool = False) -> dict:
    """Columns of the reference bodies for a diagram.

    Returns
    -------
    dict
        name, mass_mearth, radius_rearth, escape_speed_kms, insolation_earth,
        has_atmosphere (lists, one entry per body).
    """
    rows = [b for b in BODIES if b.planet or not planets_only]
    return {"name": [b.name for b in rows], "mass_mearth": [b.mass_mearth for b in rows],
            "radius_rearth": [b.radius_rearth for b in rows], "escape_speed_kms": [b.escape_speed_kms for b in rows],
            "insolation_earth": [b.insolation_earth for b in rows],
            "has_atmosphere": [b.has_atmosphere for b in rows]}
