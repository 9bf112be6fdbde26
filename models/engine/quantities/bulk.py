"""What the planets are like in bulk: size, mass, density, gravity, escape speed, Hill radius, spin."""

from ...physics import composition, dynamics
from ...constants import GYR, M_EARTH
from ..registry import quantity

_BULK = "Bulk properties"


@quantity("planets", unit="earthRad", unit_label="R_earth", label="R", description="planet radius",
          group=_BULK, views=("flux",))
def radius_rearth(c):
    return c.radius


@quantity("planets", unit="earthMass", unit_label="M_earth", label="M",
          description="planet mass (measured, or estimated from the radius)", source="chen_kipping2017",
          source_when="mass_is_estimated", group=_BULK, views=("flux",))
def mass_mearth(c):
    return c.mass_kg / M_EARTH


@quantity("planets", kind="bool", label="M estimated",
          description="True where the mass is estimated from the radius (Chen & Kipping 2017)",
          source="chen_kipping2017", source_when="mass_is_estimated", estimate=True)
def mass_estimated(c):
    return c.mass_is_estimated


@quantity("planets", unit="g / cm3", unit_label="g/cm3", label="rho", description="bulk density", group=_BULK, views=("flux",))
def density_gcc(c):
    return composition.bulk_density(c.mass_kg, c.radius_m) / 1000.0


@quantity("planets", unit="m / s2", unit_label="m/s2", label="g", description="surface gravity", group=_BULK, views=("flux",))
def surface_gravity_ms2(c):
    return composition.surface_gravity(c.mass_kg, c.radius_m)


@quantity("planets", unit="km / s", unit_label="km/s", label="v_esc", description="escape speed from the surface", group=_BULK,
          views=("flux",))
def escape_speed_kms(c):
    return composition.escape_speed(c.mass_kg, c.radius_m) / 1000.0


@quantity("planets", unit="au", label="r_Hill", description="Hill radius at periastron", source="hamilton_burns1992",
          group=_BULK, views=("flux",))
def hill_radius_au(c):
    return dynamics.hill_radius(c.semi_major_axis_au, c.eccentricity, c.mass_kg, c.star_mass_kg)


@quantity("planets", unit="Gyr", label="t_lock", description="tidal locking time, order of magnitude",
          source="gladman1996", estimate=True, group=_BULK, views=("flux",))
def tidal_lock_gyr(c):
    return dynamics.tidal_locking_time(c.a_m, c.mass_kg, c.radius_m, c.star_mass_kg) / GYR
