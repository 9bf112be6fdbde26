"""Monte Carlo propagation of input uncertainties to every derived quantity.

Inputs with a ``sigma`` are drawn from normals, inputs with ``plus``/``minus``
from split normals whose halves each hold half the probability, so that the
nominal value is the median and value - minus, value + plus are the 16th and
84th percentiles, the way asymmetric errors are quoted (a two-piece normal,
Wallis 2014, Stat. Sci. 29, 106, with equal half masses),
all from one seeded numpy Generator in a fixed order, so the same seed gives
the same numbers. Draws outside a parameter's physical domain (its param
bounds: masses and radii > 0, 0 <= e < 1, 0 <= A < 1 ...) are redrawn, which
truncates the distribution instead of piling samples on the boundary.
The samples feed one :func:`compute` call, so correlations between derived
quantities (one stellar-mass draw feeds a, S and Teq alike) are kept.
"""

from __future__ import annotations

import warnings
from dataclasses import replace

import numpy as np

from . import resonances
from .compute import compute, sky_rows
from .constants import RAD_TO_ARCSEC
from .skies import moon_ratio
from .inputs import PLANET_FIELDS, STAR_FIELDS, Inputs, nominal_inputs
from .system import System, _Body

#: percentiles that bound the reported interval (one sigma for a normal)
PERCENTILES = (16.0, 84.0)
_MAX_REDRAWS = 100


def split_normal(rng: np.random.Generator, value, plus, minus, size):
    """Draws from a split normal with median ``value`` and widths ``plus`` / ``minus``.

    Each half of a unit normal is scaled by its own width, so each side
    keeps half the probability (a two-piece normal with equal half masses;
    Wallis 2014, Stat. Sci. 29, 106); for plus == minus it is a normal.

    Parameters
    ----------
    rng : numpy.random.Generator
    value, plus, minus : array_like
        Mode and one-sigma widths above and below it, broadcast to ``size``.
    size : tuple
        Output shape.
    """
    z = rng.standard_normal(size)
    return value + z * np.where(z >= 0.0, plus, minus)


def _inside(values, bounds, inclusive):
    lo, hi = bounds if bounds is not None else (None, None)
    ok = np.ones(values.shape, dtype=bool)
    if lo is not None:
        ok &= values >= lo if inclusive[0] else values > lo
    if hi is not None:
        ok &= values <= hi if inclusive[1] else values < hi
    return ok | np.isnan(values)  # an absent optional value stays absent


def truncated_split_normal(rng, value, plus, minus, size, bounds, inclusive=(True, True)):
    """Split-normal draws restricted to ``bounds`` by redrawing those outside.

    Parameters
    ----------
    rng : numpy.random.Generator
    value, plus, minus : array_like
        Mode and widths, broadcast against ``size``.
    size : tuple
    bounds : (low, high) or None
        Domain; either end may be None.
    inclusive : (bool, bool)
        Whether each end belongs to the domain.
    """
    value, plus, minus = (np.broadcast_to(np.asarray(x, dtype=float), size) for x in (value, plus, minus))
    draws = split_normal(rng, value, plus, minus, size)
    for _ in range(_MAX_REDRAWS):
        bad = ~_inside(draws, bounds, inclusive)
        if not bad.any():
            return draws
        draws[bad] = split_normal(rng, value[bad], plus[bad], minus[bad], int(bad.sum()))
    # a domain that far in a tail keeps its last valid neighbour: the nominal value
    bad = ~_inside(draws, bounds, inclusive)
    draws[bad] = value[bad]
    return draws


def _sampled(rng, bodies: list[_Body], field: str, nominal: np.ndarray, samples: int) -> np.ndarray:
    """Samples of ``field`` of every body in ``bodies`` (columns of ``nominal``)."""
    spreads = [body.uncertainty(field) for body in bodies]
    if not any(spreads) or np.isnan(nominal).all():
        return np.repeat(nominal, samples, axis=0)
    plus = np.array([[s.plus if s else 0.0 for s in spreads]])
    minus = np.array([[s.minus if s else 0.0 for s in spreads]])
    parameter = type(bodies[0]).param[field]
    return truncated_split_normal(rng, nominal, plus, minus, (samples, len(bodies)),
                                  parameter.bounds, parameter.inclusive_bounds)


def sampled_inputs(system: System, samples: int, seed: int | None) -> Inputs:
    """``samples`` joint draws of every uncertain input of ``system``."""
    rng = np.random.default_rng(seed)
    nominal = nominal_inputs(system)
    planets = list(system.planets)
    star = [system.star]
    fields = {field: _sampled(rng, planets, field, getattr(nominal, field), samples) for field in PLANET_FIELDS}
    fields.update({f"star_{field}": _sampled(rng, star, field, getattr(nominal, f"star_{field}"), samples)
                   for field in STAR_FIELDS})
    fields["j_mag"] = _sampled(rng, star, "j_mag", nominal.j_mag, samples)
    fields["k_mag"] = _sampled(rng, star, "k_mag", nominal.k_mag, samples)
    fields["bond_albedo"] = _sampled(rng, [system.assumptions], "bond_albedo", nominal.bond_albedo, samples)
    return replace(nominal, **fields)


def _anchor_to_nominal(columns: dict, samples: Inputs, derived) -> None:
    """Recompute commensurability offsets with the nominal p:q and three-body (p, q).

    The nearest commensurability reported is the nominal ratio's; each draw's
    offset is measured from that same rung so the interval is continuous.
    """
    nearest = [text.split(":") for text in derived.pairs["nearest"]]
    if nearest:
        p = np.array([int(a) for a, _ in nearest])
        q = np.array([int(b) for _, b in nearest])
        ratio = columns["pairs.period_ratio"]
        columns["pairs.other_nearest"] = (columns["pairs.p"] != p) | (columns["pairs.q"] != q)
        columns["pairs.delta"] = resonances.resonance_offset(ratio, p, q)
        inner, outer = samples.period[:, :-1], samples.period[:, 1:]
        with np.errstate(divide="ignore"):
            sup = resonances.super_period(inner, outer, p)
        columns["pairs.super_period_d"] = np.where(p - q == 1, sup, np.nan)
    if len(derived.triples["p"]):
        period = samples.period
        columns["triples.residual_deg_per_day"] = 360.0 * resonances.three_body_residual(
            period[:, :-2], period[:, 1:-1], period[:, 2:], derived.triples["p"], derived.triples["q"])


def percentile_interval(values: np.ndarray):
    """16th and 84th percentiles over the sample axis (axis 0), ignoring NaN draws.

    Columns without NaN go through one fast ``np.percentile`` call; only the
    others take the slower NaN-aware path.
    """
    has_nan = np.isnan(values).any(axis=0)
    if not has_nan.any():
        return np.percentile(values, PERCENTILES, axis=0)
    result = np.empty((2, values.shape[1]))
    result[:, ~has_nan] = np.percentile(values[:, ~has_nan], PERCENTILES, axis=0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # columns where every draw is NaN stay NaN
        result[:, has_nan] = np.nanpercentile(values[:, has_nan], PERCENTILES, axis=0)
    return result


def attach_intervals(derived, system: System, samples: int, seed: int | None) -> None:
    """Fill ``derived.intervals`` with the 16th-84th percentiles of every numeric column.

    Also records in ``derived.extra["other_nearest_fraction"]`` how often a
    draw's period ratio falls nearest to another commensurability than the
    nominal one, per pair.
    """
    draws = sampled_inputs(system, samples, seed)
    columns = compute(draws)
    _anchor_to_nominal(columns, draws, derived)
    derived.extra["other_nearest_fraction"] = (columns["pairs.other_nearest"].mean(axis=0)
                                               if "pairs.other_nearest" in columns else np.zeros(0))
    tables = {"planets": derived.planets, "pairs": derived.pairs, "triples": derived.triples, "skies": derived.skies}
    # sky distances repeat a (star rows) and each pair's distance twice, and the
    # Moon ratio is the diameter rescaled: their percentiles follow from others
    derived_later = {("skies", "closest_distance_au"), ("skies", "moon_ratio")}
    keys = [(table, key) for table, cols in tables.items() for key, col in cols.items()
            if f"{table}.{key}" in columns and col.dtype.kind == "f" and (table, key) not in derived_later]
    keys.append(("sky_pairs", "closest_distance_au"))
    star_keys = ["luminosity_lsun"] + ([f"hz_au.{k}" for k in derived.star["hz_au"]] if derived.hz_valid else [])
    blocks = [columns[f"{t}.{k}"] for t, k in keys] + [columns[f"star.{k}"][:, None] for k in star_keys]
    low, high = percentile_interval(np.concatenate(blocks, axis=1))
    edges = np.cumsum([0] + [b.shape[1] for b in blocks])
    bounds = [(low[a:b], high[a:b]) for a, b in zip(edges[:-1], edges[1:])]
    intervals: dict = {table: {} for table in (*tables, "sky_pairs")}
    for (table, key), bound in zip(keys, bounds):
        intervals[table][key] = bound
    _, body, pair = sky_rows(len(derived.planets["name"]))
    a_low, a_high = intervals["planets"]["semi_major_axis_au"]
    p_low, p_high = intervals.pop("sky_pairs")["closest_distance_au"]
    observer = np.repeat(np.arange(len(a_low)), len(a_low))
    star_row, safe_pair = body < 0, np.maximum(pair, 0)
    intervals["skies"]["closest_distance_au"] = (
        np.where(star_row, a_low[observer], p_low[safe_pair] if p_low.size else 0.0),
        np.where(star_row, a_high[observer], p_high[safe_pair] if p_high.size else 0.0))
    d_low, d_high = intervals["skies"]["max_angular_diameter_arcsec"]
    intervals["skies"]["moon_ratio"] = (moon_ratio(d_low / RAD_TO_ARCSEC), moon_ratio(d_high / RAD_TO_ARCSEC))
    star_bounds = [(float(lo[0]), float(hi[0])) for lo, hi in bounds[len(keys):]]
    star = {"luminosity_lsun": list(star_bounds[0])}
    if derived.hz_valid:
        star["hz_au"] = {k[6:]: list(b) for k, b in zip(star_keys[1:], star_bounds[1:])}
    intervals["star"] = star
    derived.intervals = intervals
    derived.samples = samples
    derived.seed = seed
