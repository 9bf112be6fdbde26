"""Whether the planets keep atmospheres and what a telescope could see of them."""

from ...physics import atmospheres, irradiation
from ..registry import intermediate, quantity

_ATMOSPHERES = "Atmospheres (model estimates)"


@quantity("planets", label="S / S_shore", fmt=".3g",
          description="insolation over the cosmic shoreline's at the planet's escape speed (> 1: airless side)",
          source="zahnle_catling2017", estimate=True, group=_ATMOSPHERES, views=("bulk",))
def shoreline_flux_ratio(c):
    return c.insolation_earth / atmospheres.shoreline_insolation(c.escape_speed_kms)


@quantity("planets", unit="kg / s", unit_label="kg/s", label="escape", fmt=".3g",
          description="energy-limited escape rate for the stated XUV flux and heating efficiency",
          source="erkaev2007", estimate=True, group=_ATMOSPHERES, views=("bulk",))
def escape_rate_kg_s(c):
    xi = atmospheres.roche_lobe_radius(c.a_m, c.mass_kg, c.star_mass_kg) / c.radius_m
    flux = atmospheres.xuv_flux_at_planet(c.insolation_earth, c.xuv_flux)
    return atmospheres.energy_limited_escape_rate(c.escape_efficiency, flux, c.radius_m, c.mass_kg,
                                                  atmospheres.roche_lobe_factor(xi))


@quantity("planets", unit="km", label="H", fmt=".3g",
          description="pressure scale height at Teq for the stated mean molecular weight",
          source="scale_height", estimate=True, group=_ATMOSPHERES, views=("bulk",))
def scale_height_km(c):
    return atmospheres.scale_height(c.teq_k, c.mean_molecular_weight, c.surface_gravity_ms2) / 1000.0


@quantity("planets", label="2HRp/R*^2", unit_label="ppm", fmt=".3g",
          description="transit-depth change over one scale height, in parts per million",
          source="winn2010", estimate=True, group=_ATMOSPHERES, views=("bulk",))
def transmission_ppm(c):
    return atmospheres.transmission_signal(c.scale_height_km * 1000.0, c.radius_m, c.star_radius_m) * 1e6


@intermediate("planets", unit="K", description="dayside temperature of a bare rock with no heat transport")
def dayside_temperature_k(c):
    return atmospheres.dayside_temperature_bare_rock(c.star_teff, c.star_radius_m, c.a_m, c.bond_albedo)


@quantity("planets", label="eclipse", unit_label="ppm", fmt=".3g",
          description="secondary-eclipse depth of a bare rock at the stated wavelength (black bodies)",
          source="koll2019", estimate=True, group=_ATMOSPHERES, views=("bulk",))
def eclipse_depth_ppm(c):
    ratio = c.radius_m / c.star_radius_m
    return atmospheres.eclipse_depth(ratio, c.eclipse_wavelength_um * 1e-6, c.dayside_temperature_k, c.star_teff) * 1e6


@quantity("planets", label="runaway S_eff", unit_label="S_earth", fmt=".3f",
          description="runaway-greenhouse flux for the planet's mass (null outside Teff 2600-7200 K)",
          source="kopparapu2014", estimate=True, group=_ATMOSPHERES, views=("bulk",))
def runaway_greenhouse_seff(c):
    return irradiation.runaway_greenhouse_flux(c.star_teff, c.mass_mearth)


@quantity("planets", kind="bool", label="runaway mass clamped",
          description="True where the mass is outside 0.1-5 Mearth and the nearest published limit stands in",
          source="kopparapu2014", estimate=True)
def runaway_greenhouse_mass_clamped(c):
    return irradiation.runaway_greenhouse_mass_clamped(c.mass_mearth)
