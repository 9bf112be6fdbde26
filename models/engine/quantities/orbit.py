"""Each planet's orbit: period, semi-major axis, the SI values the other quantities share."""

import numpy as np

from ...physics import composition, orbits
from ...constants import AU, DAY, M_EARTH, R_EARTH
from ..registry import intermediate, quantity

_ORBITS = "Orbits and irradiation"


@quantity("planets", unit="d", label="P", fmt=".6g", description="orbital period", group=_ORBITS, views=("flux",))
def period_d(c):
    return c.period


@intermediate("planets", unit="s")
def period_s(c):
    return c.period * DAY


@intermediate("planets", description="whether the mass is estimated from the radius")
def mass_is_estimated(c):
    return np.isnan(c.mass)


@intermediate("planets", unit="earthMass",
              description="measured mass, else the mass-radius relation's (its intrinsic scatter in the draws)",
              source="chen_kipping2017", source_when="mass_is_estimated")
def mass_or_estimate_mearth(c):
    return np.where(c.mass_is_estimated, composition.mass_from_radius_with_scatter(c.radius, c.mass_relation_z), c.mass)


@intermediate("planets", unit="kg")
def mass_kg(c):
    return c.mass_or_estimate_mearth * M_EARTH


@intermediate("planets", unit="m")
def radius_m(c):
    return c.radius * R_EARTH


@intermediate("planets", unit="rad")
def omega_rad(c):
    return np.deg2rad(c.omega)


@intermediate("planets", unit="rad")
def inclination_rad(c):
    return np.deg2rad(c.inclination)


@quantity("planets", unit="au", label="a", description="semi-major axis (Kepler's third law with M* + Mp)",
          source="kepler_third_law", group=_ORBITS, views=("flux",))
def semi_major_axis_au(c):
    return c.a_m / AU


@intermediate("planets", unit="m", source="kepler_third_law")
def a_m(c):
    return orbits.semi_major_axis(c.period_s, c.star_mass_kg + c.mass_kg)


@intermediate("planets", unit="au", description="periastron distance a (1 - e)")
def periastron_au(c):
    return c.semi_major_axis_au * (1.0 - c.eccentricity)


@intermediate("planets", unit="au", description="apoastron distance a (1 + e)")
def apoastron_au(c):
    return c.semi_major_axis_au * (1.0 + c.eccentricity)
