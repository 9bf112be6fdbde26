"""Derived tables as astropy Tables, with units and descriptions from the registry (for ECSV),
and the derivation's provenance in the table's metadata."""

from __future__ import annotations

import astropy.units as u
import numpy as np
from astropy.table import Table

from ..engine.derive import Derived, _plain, document_keys
from .provenance import CAUTION
from ..engine.registry import by_key


def derived_table(derived: Derived, table: str) -> Table:
    """One table of ``derived`` ("planets" or "pairs") with units, one row per planet or pair.

    Sampled quantities get 16th/84th percentile columns (``<key>_p16``, ``<key>_p84``) and yes/no
    quantities the fraction of draws in which they hold (``<key>_fraction``) when there are Monte
    Carlo draws. The metadata carry the system's own values (for the pairs: the system's AMD and
    AMD stability, the assumed free eccentricity).
    """
    result = Table(meta={"system": derived.system_name, "format": f"orbitdeck-derived/1 {table}",
                         "caution": CAUTION, "warnings": list(derived.warnings)})
    if derived.provenance is not None:
        result.meta["provenance"] = derived.provenance
    if table == "pairs":
        result.meta["system values"] = _plain(derived.system)
        if derived.fractions.get("system"):
            result.meta["system fractions of draws"] = _plain(derived.fractions["system"])
    intervals = derived.intervals.get(table, {}) if derived.intervals else {}
    fractions = derived.fractions.get(table, {}) if derived.fractions else {}
    declared = by_key(table)
    columns = getattr(derived, table)
    for key in document_keys(table):
        column = columns[key]
        if column.dtype == object:
            column = np.array(["" if v is None else str(v) for v in column])
        result[key] = column
        quantity = declared.get(key)
        if quantity is None:
            continue
        if quantity.unit:
            result[key].unit = u.Unit(quantity.unit)
        result[key].description = quantity.description + (" (model estimate)" if quantity.estimate else "")
        if key in intervals:
            for label, bound in zip(("p16", "p84"), intervals[key]):
                result[f"{key}_{label}"] = bound
                result[f"{key}_{label}"].unit = result[key].unit
        if key in fractions:
            result[f"{key}_fraction"] = fractions[key]
            result[f"{key}_fraction"].description = f"fraction of Monte Carlo draws in which {key} holds"
    return result


def planet_table(derived: Derived) -> Table:
    """The planet table with units, one row per planet, 16th/84th percentile columns when sampled."""
    return derived_table(derived, "planets")


def pair_table(derived: Derived) -> Table:
    """The table of adjacent pairs (period ratios, TTV amplitudes, AMD and Hill stability) with units."""
    return derived_table(derived, "pairs")
