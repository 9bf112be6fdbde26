"""What the planets are made of and how much tides heat them: core, water and envelope fractions."""

import numpy as np

from ...physics import interiors, tides
from ..registry import intermediate, quantity

_INTERIORS = "Interiors (model estimates)"


@quantity("planets", label="CMF", fmt=".3f",
          description="core mass fraction of a two-layer rocky planet (null outside 1-8 Mearth and CMF 0-0.4)",
          source="zeng2016", estimate=True, group=_INTERIORS, views=("bulk",))
def core_mass_fraction(c):
    return interiors.core_mass_fraction(c.mass_mearth, c.radius)


@quantity("planets", kind="bool", label="CMF formula applies",
          description="True where mass and radius are inside the range of the core-mass-fraction formula",
          source="zeng2016", estimate=True)
def core_mass_fraction_applies(c):
    return interiors.core_mass_fraction_applies(c.mass_mearth, c.radius)


@quantity("planets", label="water", fmt=".3f",
          description="water mass fraction of a planet larger than pure rock (rock-water curves; null elsewhere)",
          source="zeng2016", estimate=True, group=_INTERIORS, views=("bulk",))
def water_mass_fraction(c):
    return interiors.water_mass_fraction(c.mass_mearth, c.radius)


@quantity("planets", label="H/He", fmt=".3g",
          description=f"H/He envelope mass fraction of a sub-Neptune at an assumed age of "
                      f"{interiors.ENVELOPE_AGE_GYR:g} Gyr (null outside the fit's grid)",
          source="lopez_fortney2014", estimate=True, group=_INTERIORS, views=("bulk",))
def envelope_mass_fraction(c):
    return interiors.envelope_mass_fraction(c.mass_mearth, c.radius, c.insolation_earth)


@intermediate("planets", description="Q' of each planet: its own, else the assumption's")
def tidal_q_used(c):
    return np.where(np.isnan(c.tidal_q), c.assumed_tidal_q, c.tidal_q)


@quantity("planets", unit="W", label="tidal heating", fmt=".3g",
          description="tidal power dissipated by the orbit's eccentricity, for the stated Q'",
          source="jackson2008", estimate=True, group=_INTERIORS, views=("bulk",))
def tidal_heating_w(c):
    return tides.tidal_heating_rate(c.star_mass_kg, c.radius_m, c.a_m, c.eccentricity, c.tidal_q_used)


@quantity("planets", unit="W / m2", unit_label="W/m2", label="tidal flux", fmt=".3g",
          description="mean surface heat flux of the tidal heating, for the stated Q'",
          source="jackson2008", estimate=True, group=_INTERIORS, views=("bulk",))
def tidal_heat_flux_w_m2(c):
    return tides.surface_heat_flux(c.tidal_heating_w, c.radius_m)
