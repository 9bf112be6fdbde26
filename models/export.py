"""Derived tables as astropy Tables, with units attached (for ECSV)."""

from __future__ import annotations

import astropy.units as u
import numpy as np
from astropy.table import Table

from .derive import PLANET_KEYS, Derived

#: unit of each planet column of the derived document
PLANET_UNITS = {
    "period_d": u.day, "semi_major_axis_au": u.au, "insolation_earth": None, "teq_k": u.K,
    "radius_rearth": u.earthRad, "mass_mearth": u.earthMass, "density_gcc": u.g / u.cm**3,
    "surface_gravity_ms2": u.m / u.s**2, "escape_speed_kms": u.km / u.s, "hill_radius_au": u.au,
    "transit_depth_ppm": None, "transit_duration_h": u.hour, "rv_semi_amplitude_ms": u.m / u.s,
    "tidal_lock_gyr": u.Gyr,
}
PLANET_DESCRIPTIONS = {
    "insolation_earth": "orbit-averaged insolation relative to Earth's",
    "teq_k": "equilibrium temperature under the stated albedo and redistribution (model estimate)",
    "mass_estimated": "True where the mass is estimated from radius (Chen & Kipping 2017)",
    "hz_region": "place in the Kopparapu et al. 2014 habitable zone",
    "transit_depth_ppm": "(Rp/R*)^2 in parts per million",
    "tsm": "transmission spectroscopy metric (Kempton et al. 2018)",
    "esm": "emission spectroscopy metric (Kempton et al. 2018)",
    "tidal_lock_gyr": "tidal locking time, order of magnitude (Gladman et al. 1996)",
}


def planet_table(derived: Derived) -> Table:
    """The planet table with units, one row per planet, interval columns when sampled."""
    table = Table(meta={"system": derived.system_name, "format": "orbitdeck-derived/1 planets",
                        "warnings": list(derived.warnings)})
    intervals = derived.intervals.get("planets", {})
    for key in PLANET_KEYS:
        column = derived.planets[key]
        if column.dtype == object:
            column = np.array(["" if v is None else str(v) for v in column])
        table[key] = column
        if PLANET_UNITS.get(key) is not None:
            table[key].unit = PLANET_UNITS[key]
        if key in PLANET_DESCRIPTIONS:
            table[key].description = PLANET_DESCRIPTIONS[key]
        if key in intervals:
            for label, bound in zip(("p16", "p84"), intervals[key]):
                table[f"{key}_{label}"] = bound
                table[f"{key}_{label}"].unit = table[key].unit
    return table
