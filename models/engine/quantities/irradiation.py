"""Light received: insolation, equilibrium temperature and place in the habitable zone."""

from ...physics import irradiation
from ..registry import intermediate, quantity

_ORBITS = "Orbits and irradiation"


@quantity("planets", label="S", unit_label="S_earth", description="orbit-averaged insolation relative to Earth's",
          source="williams_pollard2002", group=_ORBITS, views=("flux",))
def insolation_earth(c):
    return irradiation.insolation(c.luminosity_lsun, c.semi_major_axis_au, c.eccentricity)


@quantity("planets", unit="K", label="Teq", fmt=".0f",
          description="equilibrium temperature of the orbit-averaged flux, under the stated albedo and heat "
                      "redistribution", source="mendez_rivera2017", estimate=True, group=_ORBITS, views=("flux",))
def teq_k(c):
    return irradiation.equilibrium_temperature(c.insolation_earth, c.bond_albedo, c.redistribution)


@intermediate("planets", unit="K", description="Teq for zero albedo and full redistribution (the TSM/ESM convention)",
              source="equilibrium_temperature")
def teq_zero_albedo_k(c):
    return irradiation.equilibrium_temperature(c.insolation_earth, 0.0, 0.25)


@quantity("planets", label="HZ region", kind="label", labels=irradiation.HZ_REGIONS,
          description="place in the habitable zone by insolation", source="kopparapu2014", estimate=True,
          group=_ORBITS, views=("flux",))
def hz_region(c):
    return irradiation.hz_region_index(c.insolation_earth, c.hz_limit_flux)


@quantity("planets", kind="bool", label="in conservative HZ",
          description="insolation between the runaway and maximum greenhouse limits", source="kopparapu2014",
          estimate=True)
def in_conservative_hz(c):
    return c.hz_region == irradiation.HZ_REGIONS.index("conservative")


@quantity("planets", kind="bool", label="in optimistic HZ",
          description="insolation between the recent Venus and early Mars limits", source="kopparapu2014",
          estimate=True)
def in_optimistic_hz(c):
    region = c.hz_region
    return (region >= irradiation.HZ_REGIONS.index("optimistic inner")) & (
        region <= irradiation.HZ_REGIONS.index("optimistic outer"))
