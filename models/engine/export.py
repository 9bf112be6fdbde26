"""Derived tables as astropy Tables, with units and descriptions from the registry (for ECSV),
and the derivation's provenance in the table's metadata."""

from __future__ import annotations

import astropy.units as u
import numpy as np
from astropy.table import Table

from .derive import Derived, document_keys
from .provenance import CAUTION
from .registry import by_key


def planet_table(derived: Derived) -> Table:
    """The planet table with units, one row per planet, 16th/84th percentile columns when sampled."""
    table = Table(meta={"system": derived.system_name, "format": "orbitdeck-derived/1 planets",
                        "caution": CAUTION, "warnings": list(derived.warnings)})
    if derived.provenance is not None:
        table.meta["provenance"] = derived.provenance
    intervals = derived.intervals.get("planets", {}) if derived.intervals else {}
    declared = by_key("planets")
    for key in document_keys("planets"):
        column = derived.planets[key]
        if column.dtype == object:
            column = np.array(["" if v is None else str(v) for v in column])
        table[key] = column
        quantity = declared.get(key)
        if quantity is None:
            continue
        if quantity.unit:
            table[key].unit = u.Unit(quantity.unit)
        table[key].description = quantity.description + (" (model estimate)" if quantity.estimate else "")
        if key in intervals:
            for label, bound in zip(("p16", "p84"), intervals[key]):
                table[f"{key}_{label}"] = bound
                table[f"{key}_{label}"].unit = table[key].unit
    return table
