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

import math
from collections.abc import Callable
from dataclasses import fields, replace

import numpy as np

from .compute import Anchor, orbit_of, pair_columns, star_and_planet_columns, triple_columns
from .inputs import PLANET_FIELDS, STAR_FIELDS, Inputs, nominal_inputs
from .parallel import SharedWork
from .percentiles import row_percentiles
from .sky_intervals import SkyIntervals
from .system import System

#: percentiles that bound the reported interval (one sigma for a normal)
PERCENTILES = (16.0, 84.0)


#: 2 pi in single precision, for the Box-Muller angles
_TWO_PI_32 = np.float32(2.0 * np.pi)


def standard_normals(rng: np.random.Generator, size) -> np.ndarray:
    """Unit normal draws by the Box-Muller transform (Box & Muller 1958, Ann. Math. Stat. 29, 610).

    Each pair of uniforms (u1, u2) gives two independent normals,
    r cos(2 pi u2) and r sin(2 pi u2) with r = sqrt(-2 ln(1 - u1)). The
    radius comes from double-precision uniforms (tails out to 8.5 sigma);
    the angle, its sine and cosine are single precision, which places each
    draw to ~1e-7 of a sigma. About twice as fast here as numpy's ziggurat,
    whose table lookups do not vectorise.

    Parameters
    ----------
    rng : numpy.random.Generator
    size : int or tuple
        Output shape.

    Returns
    -------
    ndarray of float64, shape ``size``
    """
    count = math.prod(size) if isinstance(size, tuple) else int(size)
    half = (count + 1) // 2
    radius = rng.random(half)
    np.subtract(1.0, radius, out=radius)   # in (0, 1]: never log(0)
    np.log(radius, out=radius)
    radius *= -2.0
    np.sqrt(radius, out=radius)
    angle = rng.random(half, dtype=np.float32)
    angle *= _TWO_PI_32
    z = np.empty(2 * half)
    np.multiply(np.cos(angle), radius, out=z[:half])
    np.multiply(np.sin(angle), radius, out=z[half:])
    return z[:count].reshape(size)


def split_normal(z: np.ndarray, value, plus, minus) -> np.ndarray:
    """Unit normal draws ``z`` made, in place, into draws of a split normal with median
    ``value`` and widths ``plus`` / ``minus``.

    Each half of a unit normal is scaled by its own width, so each side
    keeps half the probability (a two-piece normal with equal half masses;
    Wallis 2014, Stat. Sci. 29, 106); for plus == minus it is a normal.

    Parameters
    ----------
    z : ndarray of float64
        Unit normal draws; overwritten and returned.
    value, plus, minus : array_like
        Mode and one-sigma widths above and below it, broadcasting against ``z``.
    """
    plus, minus = np.asarray(plus, dtype=float), np.asarray(minus, dtype=float)
    if (plus == minus).all():
        z *= plus
    else:   # minus below the median, plus above (arithmetic: np.where with broadcasting is slow)
        width = (z >= 0.0) * (plus - minus)
        width += minus
        z *= width
    z += value
    return z


def _outside(values, bounds, inclusive):
    """Where ``values`` fall outside ``bounds`` (NaN, an absent optional value, never does)."""
    lo, hi = bounds if bounds is not None else (None, None)
    outside = [] if lo is None else [values < lo if inclusive[0] else values <= lo]
    if hi is not None:
        outside.append(values > hi if inclusive[1] else values >= hi)
    if not outside:
        return np.zeros(np.shape(values), dtype=bool)
    return outside[0] if len(outside) == 1 else np.logical_or(*outside, out=outside[0])


#: rounds of fresh tries for draws outside the domain, and the tries per rejected draw in the first
_REDRAW_ROUNDS = 8
_FIRST_TRIES = 4
_MAX_TRIES_PER_ROUND = 1 << 20


def truncated_split_normal(rng, z, value, plus, minus, bounds, inclusive=(True, True)):
    """Split-normal draws made from unit normals ``z`` (in place) and restricted to ``bounds``
    by drawing again those outside.

    Rejection sampling, with several tries at once: each draw outside the
    domain takes the first of a few fresh draws that falls inside (four, then
    four times more each round for those that still found none), which
    truncates the distribution exactly, as drawing again one at a time does.

    Parameters
    ----------
    rng : numpy.random.Generator
        Source of the fresh tries.
    z : ndarray of float64
        Unit normal draws, one per output draw; overwritten and returned.
    value, plus, minus : array_like
        Mode and widths, broadcast against ``z``.
    bounds : (low, high) or None
        Domain; either end may be None.
    inclusive : (bool, bool)
        Whether each end belongs to the domain.
    """
    size = z.shape
    draws = split_normal(z, value, plus, minus)
    bad = np.flatnonzero(_outside(draws, bounds, inclusive))
    if not bad.size:
        return draws
    flat = draws.reshape(-1)
    # value, plus and minus of each rejected draw, one row each, without broadcasting them to the full size
    value, plus, minus = (np.broadcast_to(np.asarray(x, dtype=float), size)[np.unravel_index(bad, size)][:, None]
                          for x in (value, plus, minus))
    tries = _FIRST_TRIES
    for _ in range(_REDRAW_ROUNDS):
        fresh = split_normal(standard_normals(rng, (bad.size, tries)), value, plus, minus)
        inside = ~_outside(fresh, bounds, inclusive)
        found = inside.any(axis=1)
        first = inside.argmax(axis=1)
        flat[bad[found]] = fresh[found, first[found]]
        missing = ~found
        bad, value, plus, minus = bad[missing], value[missing], plus[missing], minus[missing]
        if not bad.size:
            return draws
        tries = max(tries, min(4 * tries, _MAX_TRIES_PER_ROUND // bad.size))
    # a domain that far in a tail keeps its last valid neighbour: the nominal value
    flat[bad] = value[:, 0]
    return draws


def sampled_inputs(system: System, samples: int, seed: int | None, compact: bool = False,
                   nominal: Inputs | None = None) -> Inputs:
    """``samples`` joint draws of every uncertain input of ``system``.

    The unit normals of all inputs are drawn at once, then each input's are
    scaled to its split normal and truncated to its domain, in a fixed
    order, so the same seed gives the same draws. The draws are laid out
    body by body in memory (a Fortran-ordered (samples, bodies) array), and
    so are the columns computed from them: a column's rows of draws, one per
    body, are then contiguous.

    With ``compact``, an input that no body gives an uncertainty stays one
    row (1, bodies), which broadcasts against the draws of the others:
    functions of it alone (sines of fixed angles, say) are then computed once.
    ``nominal`` is ``nominal_inputs(system)``, if the caller has it already.
    """
    rng = np.random.default_rng(seed)
    nominal = nominal_inputs(system) if nominal is None else nominal
    planets, star, assumptions = list(system.planets), [system.star], [system.assumptions]
    # (the Inputs field, the bodies it holds a column of, their parameter)
    inputs = [(field, planets, field) for field in PLANET_FIELDS]
    inputs += [(f"star_{field}", star, field) for field in STAR_FIELDS]
    inputs += [("j_mag", star, "j_mag"), ("k_mag", star, "k_mag"), ("bond_albedo", assumptions, "bond_albedo")]
    spreads_of = {id(body): body.uncertainties for body in (*planets, *star, *assumptions)}   # param reads are slow
    fields, drawn = {}, []
    for name, bodies, parameter in inputs:
        values = getattr(nominal, name)
        spreads = [spreads_of[id(body)].get(parameter) for body in bodies]
        if any(spreads) and not np.isnan(values).all():
            drawn.append((name, bodies, parameter, values, spreads))
        else:
            fields[name] = values if compact else np.repeat(values, samples, axis=0)
    z = standard_normals(rng, (sum(len(bodies) for _, bodies, *_ in drawn), samples))
    start = 0
    for name, bodies, parameter, values, spreads in drawn:
        plus = np.array([[s.plus if s else 0.0] for s in spreads])
        minus = np.array([[s.minus if s else 0.0] for s in spreads])
        declared = type(bodies[0]).param[parameter]   # its bounds are the physical domain
        rows, start = z[start:start + len(bodies)], start + len(bodies)
        fields[name] = truncated_split_normal(rng, rows, values.T, plus, minus, declared.bounds,
                                              declared.inclusive_bounds).T
    return replace(nominal, **fields)


def _anchor(derived) -> Anchor:
    """The nominal nearest commensurabilities and three-body relations of ``derived``."""
    nearest = [text.split(":") for text in derived.pairs["nearest"]]
    return Anchor(pair_p=np.array([int(a) for a, _ in nearest], dtype=int),
                  pair_q=np.array([int(b) for _, b in nearest], dtype=int),
                  triple_p=np.asarray(derived.triples["p"], dtype=int),
                  triple_q=np.asarray(derived.triples["q"], dtype=int))


def _interval_columns(derived, columns: dict[str, np.ndarray]) -> dict[str, np.ndarray]:
    """Those of ``columns`` (keyed ``"<table>.<key>"``) that get an interval: the star's and
    the float columns of the planet, pair and triple tables, each shaped (samples or 1, rows)."""
    tables = {"planets": derived.planets, "pairs": derived.pairs, "triples": derived.triples}
    wanted = {f"{table}.{key}" for table, cols in tables.items() for key, col in cols.items() if col.dtype.kind == "f"}
    return {name: (column if column.ndim == 2 else column[:, None]) for name, column in columns.items()
            if name in wanted or name.startswith("star.")}


#: draws of the stacked columns whose percentiles are one task: on one thread about 2 MB in single
#: precision (measured best: each call has ~0.1 ms of fixed cost, and larger ones leave the cache),
#: half that when two threads share the tasks
_VALUES_PER_TASK = 524_288
_VALUES_PER_SHARED_TASK = 262_144


def _nominal(derived, name: str) -> np.ndarray:
    """The nominal values of column ``name`` ("<table>.<key>") in ``derived``."""
    table, key = name.split(".", 1)
    if table != "star":
        return np.asarray(getattr(derived, table)[key], dtype=float)
    hz = derived.star["hz_au"] or {}
    return np.array([derived.star["luminosity_lsun"] if key == "luminosity_lsun" else hz.get(key[6:], np.nan)])


def _column_intervals(derived, columns: dict[str, np.ndarray], samples: int, work: SharedWork) -> Callable[[], dict]:
    """Queue on ``work`` the percentiles of every column; returns a function that, once the
    work is finished, gives them as (low, high) by name.

    Columns without spread in the draws (a single broadcasting row: every
    input exact) get the zero-width interval of their nominal value at once;
    the others are stacked, one row per quantity and one matrix per
    precision, and taken a block of rows at a time.
    """
    out = {name: (_nominal(derived, name),) * 2 for name, column in columns.items() if column.shape[0] == 1}
    finishing = []
    for dtype in (np.float32, np.float64):
        names = [name for name in columns if name not in out and columns[name].dtype == dtype]
        offsets = np.concatenate([[0], np.cumsum([columns[name].shape[1] for name in names])]).astype(int)
        matrix = np.empty((int(offsets[-1]), samples), dtype=dtype)
        for name, start, stop in zip(names, offsets[:-1], offsets[1:]):
            matrix[start:stop] = columns[name].T
        bounds = np.empty((len(PERCENTILES), matrix.shape[0]))

        def block(rows: slice, matrix=matrix, bounds=bounds) -> None:
            bounds[:, rows] = row_percentiles(matrix[rows], PERCENTILES)

        per_task = max(1, (_VALUES_PER_SHARED_TASK if work.shared else _VALUES_PER_TASK) // max(samples, 1))
        work.add(lambda rows=slice(start, start + per_task), block=block: block(rows)
                 for start in range(0, matrix.shape[0], per_task))
        finishing.append((names, offsets, bounds))

    def result() -> dict:
        for names, offsets, bounds in finishing:
            out.update({name: (bounds[0, start:stop], bounds[1, start:stop])
                        for name, start, stop in zip(names, offsets[:-1], offsets[1:])})
        return out
    return result


def _single_precision(draws: Inputs) -> Inputs:
    """``draws`` in single precision, but for the periods and inclinations.

    The star, planet and sky columns of the draws are computed from these:
    ~1e-7 relative error, below 1e-4 of the width of their intervals, at
    half the memory and far cheaper transcendental functions. Periods stay
    double: their spread can be 1e-6 of their value, and the period-ratio
    columns (offsets from commensurability, super-periods, three-body
    residuals) are computed from them in double precision. Inclinations stay
    double for the impact parameters and transit durations (see
    :func:`orbitdeck.models.compute.star_and_planet_columns`).
    """
    return replace(draws, **{f.name: value.astype(np.float32) for f in fields(draws)
                             if isinstance(value := getattr(draws, f.name), np.ndarray)
                             and f.name not in ("period", "inclination")})


#: spread every uncertain drawn input but the periods needs for the draws to be worked out in single
#: precision (~6e-8 relative): relative to the value, or absolute for angles [deg] and for
#: quantities that enter as 1 - e^2, 1 + e sin(omega), 1 - A
_SINGLE_PRECISION_MIN_SPREAD = 1e-3
_ABSOLUTE_MIN_SPREAD = {"inclination": 0.01, "omega": 0.01, "eccentricity": 1e-3, "bond_albedo": 1e-3}


def _single_precision_suffices(system: System) -> bool:
    """Whether single precision resolves every interval of ``system``'s star, planet and sky
    columns to better than ~1e-3 of its width.

    Those columns depend on the stellar mass (through a) or on other drawn
    inputs than the periods; they spread by at least ~1e-4 of their value
    when the stellar mass and every other uncertain input but the periods
    spread by 1e-3 or more of theirs (angles by 0.01 deg, eccentricity and
    albedo by 0.001). Otherwise (only periods carry errors, say, whose
    spread can be 1e-7 of their value) everything is worked out in double.
    """
    def spreads_enough(body, fields_drawn) -> bool:
        # only the fields with an uncertainty, each read once (param attributes are slow to read)
        spreads = {field: spread for field, spread in body.uncertainties.items() if field in fields_drawn}
        for (field, spread), value in zip(spreads.items(), body.values_of(spreads)):
            if value is None:
                continue
            needed = _ABSOLUTE_MIN_SPREAD.get(field, _SINGLE_PRECISION_MIN_SPREAD * abs(value))
            if 0.5 * (spread.plus + spread.minus) < needed:
                return False
        return True

    planet_fields = set(PLANET_FIELDS) - {"period"}
    drawn = [(system.star, {*STAR_FIELDS, "j_mag", "k_mag"}), (system.assumptions, {"bond_albedo"})]
    drawn += [(planet, planet_fields) for planet in system.planets]
    return system.star.uncertainty("mass") is not None and all(
        spreads_enough(body, fields_drawn) for body, fields_drawn in drawn)


#: sky-table pair draws from which a second thread shares the sky table and the percentiles, once
#: this one has worked out the other columns (about 5 planets x 4000 draws); below, handing work
#: over costs more than it gains
SHARED_MIN_PAIR_DRAWS = 40_000
#: sky-table pair draws from which the second thread begins on the sky table at once, while this one
#: works out the other columns (about 16 planets x 4000 draws). Below, that costs more than it gains:
#: the columns' many short numpy calls hand the GIL back and forth between the threads (measured at
#: 7 planets: no faster, and 40 % more CPU)
EARLY_SHARING_MIN_PAIR_DRAWS = 500_000


def attach_intervals(derived, system: System, samples: int, seed: int | None, nominal: Inputs | None = None) -> None:
    """Fill ``derived.intervals`` with the 16th-84th percentiles of every numeric column.

    Also records in ``derived.extra["other_nearest_fraction"]`` how often a
    draw's period ratio falls nearest to another commensurability than the
    nominal one, per pair. ``nominal`` is ``nominal_inputs(system)``, if the caller has it already.
    """
    draws = sampled_inputs(system, samples, seed, compact=True, nominal=nominal)
    single = _single_precision_suffices(system)
    single_draws = _single_precision(draws) if single else draws
    orbit = orbit_of(single_draws)
    # two threads share the sky table and the percentiles (long numpy calls, which they share
    # well; the columns' many short ones they do not). For a crowded system the worker begins
    # on the sky table at once, for a smaller one once this thread has the other columns
    pair_draws = len(system.planets) * (len(system.planets) - 1) // 2 * samples
    early = pair_draws >= EARLY_SHARING_MIN_PAIR_DRAWS
    work = SharedWork(threaded=pair_draws >= SHARED_MIN_PAIR_DRAWS)
    sky = SkyIntervals(orbit, samples, PERCENTILES, single)
    if early:
        work.add(sky.tasks())
    columns = star_and_planet_columns(single_draws, orbit, regions=False)
    columns["planets.period_d"] = draws.period
    anchor = _anchor(derived)
    columns.update(pair_columns(draws, orbit, anchor))
    columns.update(triple_columns(draws, anchor))
    other_nearest = columns["pairs.other_nearest"]
    derived.extra["other_nearest_fraction"] = np.broadcast_to(other_nearest, (samples, other_nearest.shape[1])).mean(axis=0)
    column_bounds = _column_intervals(derived, _interval_columns(derived, columns), samples, work)
    if not early:
        work.add(sky.tasks())
    work.finish()
    bounds = column_bounds()
    bounds.update(sky.result(bounds["planets.semi_major_axis_au"]))
    derived.intervals = _by_table(bounds, derived.hz_valid)
    derived.samples = samples
    derived.seed = seed


def _by_table(bounds: dict, hz_valid: bool) -> dict:
    """(low, high) by ``"<table>.<key>"`` as ``Derived.intervals``: by table, then key; the star's
    as plain floats, its habitable-zone distances (if valid) under ``"hz_au"``."""
    intervals: dict = {"planets": {}, "pairs": {}, "triples": {}, "skies": {}, "star": {}}
    for name, bound in bounds.items():
        table, key = name.split(".", 1)
        intervals[table][key] = bound
    star_bounds = {key: [float(lo[0]), float(hi[0])] for key, (lo, hi) in intervals.pop("star").items()}
    star = {"luminosity_lsun": star_bounds["luminosity_lsun"]}
    if hz_valid:
        star["hz_au"] = {key[6:]: bound for key, bound in star_bounds.items() if key.startswith("hz_au.")}
    intervals["star"] = star
    return intervals
