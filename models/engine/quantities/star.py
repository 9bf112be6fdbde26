"""The star: SI values, luminosity and the habitable-zone limits."""

import numpy as np

from ...physics import irradiation
from ...constants import L_SUN, M_SUN, R_SUN
from ..registry import intermediate, quantity


@intermediate("star", unit="kg")
def star_mass_kg(c):
    return c.star_mass * M_SUN


@intermediate("star", unit="m")
def star_radius_m(c):
    return c.star_radius * R_SUN


@intermediate("star", description="whether the luminosity is computed from R* and Teff (none is given)")
def luminosity_is_computed(c):
    return np.isnan(c.star_luminosity)


@quantity("star", unit="solLum", label="L*", description="stellar luminosity (as given, else 4 pi R^2 sigma Teff^4)",
          source="stefan_boltzmann", source_when="luminosity_is_computed")
def luminosity_lsun(c):
    computed = irradiation.luminosity_from_radius_teff(c.star_radius_m, c.star_teff) / L_SUN
    return np.where(c.luminosity_is_computed, computed, c.star_luminosity)


@intermediate("star", description="effective flux [S_earth] of the four habitable-zone limits, shaped (draws, 4)")
def hz_limit_flux(c):
    return irradiation.hz_effective_flux(c.star_teff[:, 0])


def _hz_distance(limit: int):
    def distance(c):
        return irradiation.hz_distance(c.luminosity_lsun[:, 0], c.hz_limit_flux[:, limit])[:, None]
    return distance


for _index, _limit in enumerate(irradiation.HZ_LIMITS):
    quantity("star", f"hz_{_limit}_au", key=f"hz_au.{_limit}", unit="au", label=_limit.replace("_", " "),
             description=f"{_limit.replace('_', ' ')} limit of the habitable zone", source="kopparapu2014",
             estimate=True)(_hz_distance(_index))


@quantity("star", kind="bool", label="HZ extrapolated",
          description="whether Teff lies below the 2600-7200 K calibrated range of the habitable-zone fit",
          source="kopparapu2014")
def hz_extrapolated(c):
    # a flag of the limits: it reads them, so that it is withheld with them
    return (c.star_teff < irradiation.HZ_TEFF_RANGE[0]) & np.isfinite(c.hz_limit_flux[:, :1])
