"""What a telescope sees of each planet: transits, radial velocities, spectroscopy metrics."""

from ...physics import observability
from ...constants import HOUR, R_EARTH, R_SUN
from ..registry import quantity

_OBS = "Observability"


@quantity("planets", label="P_transit", description="geometric transit probability", source="winn2010",
          group=_OBS, views=("observability",))
def transit_probability(c):
    return observability.transit_probability(c.star_radius_m, c.radius_m, c.a_m, c.eccentricity, c.omega_rad)


@quantity("planets", label="depth", unit_label="ppm", description="(Rp/R*)^2 in parts per million",
          source="winn2010", group=_OBS, views=("observability",))
def transit_depth_ppm(c):
    return observability.transit_depth(c.radius_m, c.star_radius_m) * 1e6


@quantity("planets", unit="h", label="T14", description="total transit duration", source="winn2010",
          group=_OBS, views=("observability",))
def transit_duration_h(c):
    return observability.transit_duration_total(c.period_s, c.a_m, c.star_radius_m, c.radius_m, c.inclination_rad,
                                                c.impact_parameter, c.eccentricity, c.omega_rad) / HOUR


@quantity("planets", label="impact parameter", unit_label="R*",
          description="impact parameter of the transit, in stellar radii", source="winn2010", group=_OBS,
          views=("observability",))
def impact_parameter(c):
    return observability.impact_parameter(c.a_m, c.inclination_rad, c.star_radius_m, c.eccentricity, c.omega_rad)


@quantity("planets", unit="m / s", unit_label="m/s", label="K", description="radial-velocity semi-amplitude of the star",
          source="rv_semi_amplitude", group=_OBS, views=("observability",))
def rv_semi_amplitude_ms(c):
    return observability.rv_semi_amplitude(c.period_s, c.mass_kg, c.star_mass_kg, c.inclination_rad, c.eccentricity)


@quantity("planets", label="TSM", fmt=".3g", description="transmission spectroscopy metric", source="kempton2018",
          estimate=True, group=_OBS, views=("observability",))
def tsm(c):
    return observability.transmission_spectroscopy_metric(c.radius, c.mass_mearth, c.star_radius,
                                                          c.teq_zero_albedo_k, c.j_mag)


@quantity("planets", label="ESM", fmt=".3g", description="emission spectroscopy metric", source="kempton2018",
          estimate=True, group=_OBS, views=("observability",))
def esm(c):
    return observability.emission_spectroscopy_metric(c.radius, c.star_radius * R_SUN / R_EARTH,
                                                      c.teq_zero_albedo_k, c.star_teff, c.k_mag)
