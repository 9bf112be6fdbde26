"""The derived picture of a system: :func:`derive` and its :class:`Derived` result.

Nominal values and Monte Carlo draws go through the same registered
quantities (:mod:`orbitdeck.models.engine.registry`) in double precision:
the nominal values are one draw. The intervals of the sky table, N^2 rows,
are worked out only when something reads them, once per derivation.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from ..physics import irradiation
from ..files.system import System
from .draws import percentile_bounds, sampled_inputs, share_of_draws
from .inputs import nominal_inputs
from .methods import depends_on
from .registry import ONE_ROW_TABLES, Context, declared
from .quantities.skies import all_sky_rows
from .checks import collect_warnings

FORMAT = "orbitdeck-derived/1"
#: the columns that label rows, ahead of the registered quantities in each table
ROW_LABELS = {"planets": ("name",), "pairs": ("inner", "outer", "nearest"), "triples": ("planets",),
              "skies": ("observer", "body")}
#: sky rows whose draws are held at once while their intervals are worked out (bounds the memory)
SKY_ROWS_PER_CHUNK = 64
#: rows of draws (a quantity's table row each) sorted together for their intervals
ROWS_PER_SORT = 128


def document_keys(table: str) -> tuple[str, ...]:
    """The keys of ``table``'s rows in the document, in order."""
    return ROW_LABELS.get(table, ()) + tuple(q.key for q in declared(table))


@dataclass(frozen=True)
class Anchor:
    """Nominal choices that Monte Carlo draws are measured against: each adjacent pair's nearest
    commensurability p:q and each consecutive triple's three-body relation, shaped (1, rows)."""

    pair_p: np.ndarray
    pair_q: np.ndarray
    triple_p: np.ndarray
    triple_q: np.ndarray


class Intervals(Mapping):
    """(16th, 84th) percentile arrays by table and key; the sky table's are worked out on first read."""

    def __init__(self, tables: dict, pending: dict | None = None):
        self._tables = dict(tables)
        self._pending = dict(pending or {})

    def __getitem__(self, table: str):
        if table in self._pending:
            self._tables[table] = self._pending.pop(table)()
        return self._tables[table]

    def __iter__(self):
        return iter([*self._tables, *self._pending])

    def __len__(self) -> int:
        return len(self._tables) + len(self._pending)


@dataclass
class Derived:
    """Everything derived from one state of a system.

    ``system`` and ``star`` are dictionaries of values (nested where a key
    is dotted: ``star["hz_au"]["early_mars"]``); ``planets``, ``pairs``, ``triples``
    and ``skies`` are dictionaries of columns (numpy arrays, one entry per
    row) keyed as in the ``orbitdeck-derived/1`` document, plus the integer
    rungs ``p`` and ``q`` of each pair. ``extra`` holds the nominal values
    of the intermediate arrays the views use (orbital elements in SI and
    au, periastron and apoastron distances, the habitable-zone limit
    fluxes, the pairs' complex TTV amplitudes). Missing values are NaN in float columns and None in object
    columns. ``hz_valid`` says whether the habitable zone is given at all
    (``star["hz_extrapolated"]`` whether beyond its fit's calibrated range).
    ``intervals`` is empty without Monte Carlo draws; with them,
    ``fractions`` holds the fraction of draws in which each yes/no quantity
    holds, by table and key. ``provenance``, when attached, goes into the
    document as its ``provenance`` object.
    """

    system_name: str
    system: dict
    star: dict
    planets: dict
    pairs: dict
    triples: dict
    skies: dict
    warnings: list[str] = field(default_factory=list)
    hz_valid: bool = True
    samples: int = 0
    seed: int | None = None
    intervals: Mapping = field(default_factory=dict)
    fractions: dict = field(default_factory=dict)
    extra: dict = field(default_factory=dict)
    #: where the numbers came from (see :mod:`orbitdeck.models.files.provenance`); None until attached
    provenance: dict | None = None

    @property
    def planet_names(self) -> list[str]:
        return list(self.planets["name"])

    def to_dict(self) -> dict:
        """The ``orbitdeck-derived/1`` document as plain Python values."""
        doc = {"format": FORMAT, "system": {"name": self.system_name, **_plain(self.system)},
               "warnings": list(self.warnings), "star": _plain(self.star)}
        for table in ("planets", "pairs", "triples", "skies"):
            doc[table] = _rows(getattr(self, table), document_keys(table),
                               self.intervals.get(table) if self.intervals else None, self.fractions.get(table))
        if self.samples:
            for table in ONE_ROW_TABLES:
                if self.intervals[table]:
                    doc[table]["interval"] = _plain(self.intervals[table])
                if self.fractions.get(table):
                    doc[table]["fraction"] = _plain(self.fractions[table])
            doc["samples"] = self.samples
            doc["seed"] = self.seed
        if self.provenance is not None:
            doc["provenance"] = _plain(self.provenance)
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


def _rows(columns: dict, keys, intervals: dict | None, fractions: dict | None = None) -> list[dict]:
    count = len(columns[keys[0]])
    plain = {k: _plain(columns[k]) for k in keys}
    rows = [{k: plain[k][i] for k in keys} for i in range(count)]
    if intervals is not None:
        bounds = {k: (_plain(lo), _plain(hi)) for k, (lo, hi) in intervals.items()}
        for i, row in enumerate(rows):
            row["interval"] = {k: [lo[i], hi[i]] for k, (lo, hi) in bounds.items()}
    if fractions:
        shares = {k: _plain(v) for k, v in fractions.items()}
        for i, row in enumerate(rows):
            row["fraction"] = {k: v[i] for k, v in shares.items()}
    return rows


def _nest(flat: dict) -> dict:
    """Dotted keys made nested dictionaries: {"hz_au.early_mars": x} -> {"hz_au": {"early_mars": x}}."""
    nested: dict = {}
    for key, value in flat.items():
        head, dot, rest = key.partition(".")
        if dot:
            nested.setdefault(head, {})[rest] = value
        else:
            nested[key] = value
    return nested


def rests_on_habitable_zone(quantity) -> bool:
    """Whether ``quantity`` is computed from the habitable-zone limits (withheld where they do not apply)."""
    return "hz_limit_flux" in depends_on(quantity.name)


def _nominal_column(quantity, value: np.ndarray, hz_valid: bool) -> np.ndarray:
    """Row 0 of a computed array, as the document shows it (labels as text; None where the
    habitable-zone limits it rests on are withheld)."""
    column = np.asarray(value)[0]
    if not hz_valid and rests_on_habitable_zone(quantity):
        return np.full(column.shape, None, dtype=object)
    if quantity.kind == "label":
        return np.array([quantity.labels[i] for i in column], dtype=object)
    return column


def _one_row_table(table: str, context: Context, hz_valid: bool) -> dict:
    """The values of a one-row table (the system's or the star's), dotted keys nested."""
    values = {q.key: _nominal_column(q, getattr(context, q.name), hz_valid)[0] for q in declared(table)
              if hz_valid or not rests_on_habitable_zone(q)}
    return _nest(values)


def _row_labels(names: np.ndarray, p: np.ndarray, q: np.ndarray) -> dict:
    n = len(names)
    observer, body = all_sky_rows(n)
    # fixed-width text, not objects: the sky table has N^2 rows; body -1 takes the trailing "star"
    with_star = np.array([*names, "star"], dtype=str)
    return {
        "planets": {"name": names},
        "pairs": {"inner": names[:-1], "outer": names[1:],
                  "nearest": np.array([f"{a}:{b}" for a, b in zip(p, q)], dtype=object)},
        "triples": {"planets": np.array([list(names[i:i + 3]) for i in range(max(n - 2, 0))],
                                        dtype=object).reshape(-1, 3)},
        "skies": {"observer": with_star[observer], "body": with_star[body]},
    }


def nominal_tables(system: System, context: Context, hz_valid: bool) -> dict:
    """The document's tables of one nominal :class:`Context`, plus the intermediates in ``"extra"``."""
    names = np.array(system.planet_names, dtype=object)
    p, q = (np.asarray(x)[0] for x in context.pair_rung)
    tables = _row_labels(names, p, q)
    for table in ("planets", "pairs", "triples", "skies"):
        for quantity in declared(table):
            tables[table][quantity.key] = _nominal_column(quantity, getattr(context, quantity.name), hz_valid)
    tables["pairs"].update(p=p, q=q)
    tables["system"] = _one_row_table("system", context, hz_valid)
    star = {"name": system.star.name, "mass_msun": system.star.mass, "radius_rsun": system.star.radius,
            "teff_k": system.star.teff}
    tables["star"] = {**star, "hz_au": None, **_one_row_table("star", context, hz_valid)}
    tables["extra"] = {quantity.name: np.asarray(getattr(context, quantity.name))[0]
                       for quantity in declared("planets", document=False)}
    tables["extra"]["hz_limit_flux"] = context.hz_limit_flux[0]
    # the pairs' complex TTV amplitudes V and V' [d]: their phases give the TTV curves over time
    for name in ("ttv_inner_complex", "ttv_outer_complex"):
        tables["extra"][name] = np.asarray(getattr(context, name))[0]
    return tables


def _percentiles_by_blocks(arrays: list, samples: int) -> tuple[np.ndarray, np.ndarray]:
    """The (16th, 84th) percentiles of each column of each array (draws, rows), shaped (arrays, rows).

    Each column's draws are copied side by side into a row of one buffer,
    a block of arrays at a time, and sorted there: a buffer of about
    :data:`ROWS_PER_SORT` rows is reused while its memory is fresh in the
    caches, where one array of every row of a large table cost more in
    page faults than its sort.
    """
    rows = max((a.shape[1] for a in arrays), default=0)
    low, high = np.empty((len(arrays), rows)), np.empty((len(arrays), rows))
    per_block = max(1, ROWS_PER_SORT // max(rows, 1))
    buffer = np.empty((min(per_block, len(arrays)) * rows, samples))
    for start in range(0, len(arrays), per_block):
        block = arrays[start:start + per_block]
        stacked = buffer[:len(block) * rows]
        for i, array in enumerate(block):
            stacked[i * rows:(i + 1) * rows] = array.T
        block_low, block_high = percentile_bounds(stacked, overwrite=True)
        low[start:start + len(block)] = block_low.reshape(len(block), rows)
        high[start:start + len(block)] = block_high.reshape(len(block), rows)
    return low, high


def _intervals(draws: Context, samples: int, hz_valid: bool) -> tuple[Intervals, dict]:
    """Percentile intervals of every sampled quantity of ``draws`` (the sky table's when first read),
    and the fraction of draws in which each yes/no quantity holds."""
    tables, fractions = {}, {}
    for table in ("system", "star", "planets", "pairs", "triples"):
        wanted = [q for q in declared(table) if hz_valid or not rests_on_habitable_zone(q)]
        sampled = [q for q in wanted if q.sampled]
        arrays = [np.asarray(getattr(draws, q.name), dtype=float) for q in sampled]
        low, high = _percentiles_by_blocks(arrays, samples)
        tables[table] = {q.key: (low[i], high[i]) for i, q in enumerate(sampled)}
        fractions[table] = {q.key: share_of_draws(getattr(draws, q.name), samples)
                            for q in wanted if q.kind == "bool"}
    for table in ONE_ROW_TABLES:
        tables[table] = _nest({key: [float(lo[0]), float(hi[0])] for key, (lo, hi) in tables[table].items()})
        fractions[table] = {key: float(share[0]) for key, share in fractions[table].items()}
    return Intervals(tables, {"skies": lambda: _sky_intervals(draws, samples)}), fractions


def _sky_intervals(draws: Context, samples: int) -> dict:
    """The sky table's intervals, a chunk of rows at a time, so no more than one chunk's draws is held."""
    sampled = [q for q in declared("skies") if q.sampled]
    observer, body = draws.sky_rows
    low = {q.key: np.empty(observer.size) for q in sampled}
    high = {q.key: np.empty(observer.size) for q in sampled}
    # rows in the order of their pair of planets (star rows first), so that a chunk holds both
    # directions of a pair, whose closest approach is then worked out once
    order = np.lexsort((np.maximum(observer, body), np.minimum(observer, body), body >= 0))
    for start in range(0, observer.size, SKY_ROWS_PER_CHUNK):
        chunk = order[start:start + SKY_ROWS_PER_CHUNK]
        part = draws.restricted("skies", sky_rows=(observer[chunk], body[chunk]))
        for q in sampled:
            rows = np.broadcast_to(getattr(part, q.name), (samples, chunk.size)).T
            low[q.key][chunk], high[q.key][chunk] = percentile_bounds(rows)
    return {key: (low[key], high[key]) for key in low}


def nominal_semi_major_axes_au(system: System) -> np.ndarray:
    """The semi-major axis [au] of each planet, as :func:`derive` gives it."""
    return Context(nominal_inputs(system)).semi_major_axis_au[0]


def derive(system: System, samples: int = 0, seed: int | None = None) -> Derived:
    """Derive every registered quantity of ``system``.

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
    nominal = nominal_inputs(system)
    hz_valid = irradiation.HZ_EXTRAPOLATED_MIN_TEFF <= system.star.teff <= irradiation.HZ_TEFF_RANGE[1]
    tables = nominal_tables(system, Context(nominal), hz_valid)
    derived = Derived(system_name=system.name, system=tables["system"], star=tables["star"], planets=tables["planets"],
                      pairs=tables["pairs"], triples=tables["triples"], skies=tables["skies"],
                      extra=tables["extra"], hz_valid=hz_valid)
    derived.warnings = collect_warnings(system, derived)
    if samples:
        anchor = Anchor(pair_p=derived.pairs["p"][None, :], pair_q=derived.pairs["q"][None, :],
                        triple_p=np.asarray(derived.triples["p"], dtype=int)[None, :],
                        triple_q=np.asarray(derived.triples["q"], dtype=int)[None, :])
        draws = Context(sampled_inputs(system, samples, seed, nominal), anchor)
        derived.intervals, derived.fractions = _intervals(draws, samples, hz_valid)
        derived.extra["other_nearest_fraction"] = share_of_draws(draws.other_nearest, samples)
        derived.samples, derived.seed = samples, seed
    return derived
