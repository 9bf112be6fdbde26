"""The derived picture of a system: :func:`derive` and its :class:`Derived` result."""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from . import composition, dynamics, irradiation
from .allocator import keep_freed_memory
from .compute import compute, sky_rows
from .constants import AU, R_SUN
from .inputs import nominal_inputs
from .system import System

FORMAT = "orbitdeck-derived/1"

#: per-planet keys of the document, in order
PLANET_KEYS = (
    "name", "period_d", "semi_major_axis_au", "insolation_earth", "teq_k", "radius_rearth",
    "mass_mearth", "mass_estimated", "density_gcc", "surface_gravity_ms2", "escape_speed_kms",
    "hill_radius_au", "hz_region", "transit_probability", "transit_depth_ppm", "transit_duration_h",
    "impact_parameter", "rv_semi_amplitude_ms", "tsm", "esm", "tidal_lock_gyr",
)
PAIR_KEYS = ("inner", "outer", "period_ratio", "nearest", "order", "delta", "super_period_d", "mutual_hill_spacing")
TRIPLE_KEYS = ("planets", "p", "q", "residual_deg_per_day")
SKY_KEYS = ("observer", "body", "closest_distance_au", "max_angular_diameter_arcsec", "moon_ratio")
#: crossing pairs named one by one in the warnings; more are counted in one line
MAX_LISTED_CROSSINGS = 20
#: sky-table rows (N(N-1), about 128 planets) from which a nominal derivation's arrays outgrow
#: glibc malloc's first mmap threshold (128 KiB of doubles), as a Monte Carlo's always do: see
#: :mod:`orbitdeck.models.allocator`
LARGE_SKY_ROWS = 16_384


@dataclass
class Derived:
    """Everything derived from one state of a system.

    Tables are dictionaries of columns (numpy arrays, one entry per row),
    keyed by the names of the ``orbitdeck-derived/1`` document; ``extra``
    holds columns the views use that the document does not carry
    (periastron and apoastron distances). Missing values are NaN in float
    columns and None in object columns.
    """

    system_name: str
    star: dict
    planets: dict
    pairs: dict
    triples: dict
    skies: dict
    warnings: list[str] = field(default_factory=list)
    hz_valid: bool = True
    samples: int = 0
    seed: int | None = None
    intervals: dict = field(default_factory=dict)
    extra: dict = field(default_factory=dict)

    @property
    def planet_names(self) -> list[str]:
        return list(self.planets["name"])

    def to_dict(self) -> dict:
        """The ``orbitdeck-derived/1`` document as plain Python values."""
        doc = {
            "format": FORMAT,
            "system": {"name": self.system_name},
            "warnings": list(self.warnings),
            "star": {k: _plain(v) for k, v in self.star.items()},
            "planets": _rows(self.planets, PLANET_KEYS, self.intervals.get("planets")),
            "pairs": _rows(self.pairs, PAIR_KEYS, self.intervals.get("pairs")),
            "triples": _rows(self.triples, TRIPLE_KEYS, self.intervals.get("triples")),
            "skies": _rows(self.skies, SKY_KEYS, self.intervals.get("skies")),
        }
        if self.samples:
            doc["star"]["interval"] = _plain(self.intervals["star"])
            doc["samples"] = self.samples
            doc["seed"] = self.seed
        return doc


def _plain(value):
    """A JSON-ready Python value: NaN and infinities become None."""
    if isinstance(value, dict):
        return {k: _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    if isinstance(value, np.ndarray):
        return [_plain(v) for v in value.tolist()]
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        value = float(value)
        return value if math.isfinite(value) else None
    return value


def _rows(columns: dict, keys, intervals: dict | None) -> list[dict]:
    count = len(columns[keys[0]])
    rows = [{k: _plain(columns[k][i]) for k in keys} for i in range(count)]
    if intervals is not None:
        for i, row in enumerate(rows):
            row["interval"] = {k: [_plain(lo[i]), _plain(hi[i])] for k, (lo, hi) in intervals.items()}
    return rows


def tables_from_columns(system: System, columns: dict, row: int = 0) -> tuple[dict, dict, dict, dict, dict, dict]:
    """Split :func:`compute` output (one sample row) into the document's tables."""
    names = np.array(system.planet_names, dtype=object)
    n = len(names)
    hz_valid = irradiation.HZ_TEFF_RANGE[0] <= system.star.teff <= irradiation.HZ_TEFF_RANGE[1]

    by_table: dict[str, dict] = {}
    for key, value in columns.items():
        table, _, name = key.partition(".")
        by_table.setdefault(table, {})[name] = value[row]

    def pick(table):
        return by_table.get(table, {})

    star_cols = pick("star")
    star = {
        "name": system.star.name,
        "mass_msun": system.star.mass,
        "radius_rsun": system.star.radius,
        "teff_k": system.star.teff,
        "luminosity_lsun": float(star_cols["luminosity_lsun"]),
        "hz_au": ({k: float(star_cols[f"hz_au.{k}"]) for k in irradiation.HZ_LIMITS} if hz_valid else None),
    }
    planet_cols = pick("planets")
    region_index = planet_cols.pop("hz_region_index")
    planets = {"name": names, **planet_cols,
               "hz_region": np.array([irradiation.HZ_REGIONS[i] if hz_valid else None for i in region_index],
                                     dtype=object)}
    extra = {"periastron_au": planets.pop("periastron_au"), "apoastron_au": planets.pop("apoastron_au")}

    pair_cols = pick("pairs")
    p, q = pair_cols.pop("p"), pair_cols.pop("q")
    pairs = {"inner": names[:-1], "outer": names[1:],
             "nearest": np.array([f"{a}:{b}" for a, b in zip(p, q)], dtype=object), **pair_cols}

    triple_cols = pick("triples")
    triples = {"planets": np.array([list(names[i:i + 3]) for i in range(max(n - 2, 0))] or np.empty((0, 3)),
                                   dtype=object).reshape(-1, 3), **triple_cols}

    _, body, _ = sky_rows(n)
    # fixed-width text, not objects: the sky table has N(N-1) rows; body -1 takes the trailing "star"
    # (each observer has N rows; repeat and take copy text faster than fancy indexing)
    with_star = np.array([*names, "star"], dtype=str)
    skies = {"observer": np.repeat(with_star[:-1], n), "body": np.take(with_star, body), **pick("skies")}
    return star, planets, pairs, triples, skies, extra


def collect_warnings(system: System, derived: Derived) -> list[str]:
    """Notes on doubtful but valid systems and on estimates the reader should know of."""
    warnings = []
    teff = system.star.teff
    lo, hi = irradiation.HZ_TEFF_RANGE
    if not lo <= teff <= hi:
        warnings.append(f"Teff = {teff:g} K is outside {lo:g}-{hi:g} K, the range of the Kopparapu et al. 2014 "
                        "habitable-zone fit; no habitable-zone limits or regions are given.")
    pl = derived.planets
    star_radius_au = system.star.radius * R_SUN / AU
    for name, peri in zip(pl["name"], derived.extra["periastron_au"]):
        if peri <= star_radius_au:
            warnings.append(f"planet {name}: periastron {peri:.4g} au is inside the star ({star_radius_au:.4g} au).")
    for name, r, est in zip(pl["name"], pl["radius_rearth"], pl["mass_estimated"]):
        if est and r >= composition.R_NEPTUNIAN_MAX:
            warnings.append(f"planet {name}: radius {r:g} Rearth is in the giant regime, where mass cannot be "
                            "estimated from radius; the mass shown is a placeholder (0.414 Mjup).")
    if system.star.j_mag is not None:
        for name, r in zip(pl["name"], pl["radius_rearth"]):
            if r >= 10.0:
                warnings.append(f"planet {name}: TSM is defined for radii below 10 Rearth (Kempton et al. 2018).")
    sk = derived.skies
    observer, body, _ = sky_rows(len(pl["name"]))
    crossed = np.flatnonzero((body > observer) & (sk["closest_distance_au"] == 0.0))
    for a, b in zip(sk["observer"][crossed[:MAX_LISTED_CROSSINGS]], sk["body"][crossed[:MAX_LISTED_CROSSINGS]]):
        warnings.append(f"planets {a} and {b}: their orbits cross.")
    if crossed.size > MAX_LISTED_CROSSINGS:
        warnings.append(f"... and {crossed.size - MAX_LISTED_CROSSINGS} more pairs of planets whose orbits cross.")
    pr = derived.pairs
    for a, b, spacing in zip(pr["inner"], pr["outer"], pr["mutual_hill_spacing"]):
        if spacing < dynamics.HILL_STABLE_SPACING:
            warnings.append(f"planets {a} and {b}: spacing {spacing:.2f} mutual Hill radii is below "
                            "2 sqrt(3), the Hill-stability limit for circular orbits (Gladman 1993).")
    estimated = [str(n) for n, est in zip(pl["name"], pl["mass_estimated"]) if est]
    if estimated:
        warnings.append("masses of " + ", ".join(estimated) + " are estimated from radius "
                        "(Chen & Kipping 2017), not measured.")
    return warnings


def derive(system: System, samples: int = 0, seed: int | None = None) -> Derived:
    """Derive every quantity of ``system``.

    Parameters
    ----------
    system : System
        The inputs.
    samples : int
        Monte Carlo draws for the 16th-84th percentile intervals; 0 for
        nominal values only.
    seed : int, optional
        Seed of the random generator (same seed, same result).

    Returns
    -------
    Derived
    """
    count = len(system.planets)
    if samples or count * (count - 1) >= LARGE_SKY_ROWS:
        keep_freed_memory()   # arrays of this size are otherwise paged in afresh each time
    nominal = nominal_inputs(system)
    columns = compute(nominal)
    star, planets, pairs, triples, skies, extra = tables_from_columns(system, columns)
    derived = Derived(system_name=system.name, star=star, planets=planets, pairs=pairs, triples=triples,
                      skies=skies, extra=extra,
                      hz_valid=star["hz_au"] is not None)
    derived.warnings = collect_warnings(system, derived)
    if samples:
        from .uncertainty import attach_intervals

        attach_intervals(derived, system, samples, seed, nominal)
    return derived
