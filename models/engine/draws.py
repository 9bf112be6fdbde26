"""Monte Carlo draws of every uncertain input, and the percentile intervals they give.

Inputs with a ``sigma`` are drawn from normals, inputs with ``plus``/``minus``
from split normals whose halves each hold half the probability, so that the
nominal value is the median and value - minus, value + plus are the 16th and
84th percentiles, the way asymmetric errors are quoted (a two-piece normal,
Wallis 2014, Stat. Sci. 29, 106, with equal half masses). All draws come
from one seeded numpy Generator in a fixed order: the same seed gives the
same numbers. Draws outside a parameter's physical domain (its param
bounds: masses and radii > 0, 0 <= e < 1, 0 <= A < 1 ...) are drawn again,
which truncates the distribution instead of piling draws on the boundary.
The draws feed the same quantities as the nominal values, so correlations
(one stellar-mass draw feeds a, S and Teq alike) are kept. A mass estimated
from the radius also draws the intrinsic scatter of the mass-radius relation
(``mass_relation_z``, unit normals of the same generator, drawn last so the
other inputs' draws do not depend on whether any mass is estimated).
"""

from __future__ import annotations

from dataclasses import replace

import numpy as np

from ..files.system import System
from .inputs import ASSUMPTION_FIELDS, PLANET_FIELDS, STAR_FIELDS, Inputs, nominal_inputs

#: percentiles that bound the reported interval (one sigma for a normal)
PERCENTILES = (16.0, 84.0)
#: rounds of fresh draws for those outside the domain before the nominal value stands in
_REDRAW_ROUNDS = 50


def split_normal(z, value, plus, minus) -> np.ndarray:
    """Draws of a split normal with median ``value`` and widths ``plus`` above, ``minus`` below.

    Each half of the unit normal draws ``z`` is scaled by its own width, so
    each side keeps half the probability (Wallis 2014, Stat. Sci. 29, 106);
    for plus == minus it is a normal.
    """
    if np.array_equal(plus, minus):   # a normal: no side to pick
        return value + z * plus
    return value + z * np.where(z >= 0.0, plus, minus)


def _outside(values, bounds, inclusive) -> np.ndarray:
    """Where ``values`` fall outside ``bounds`` (low, high; either may be None)."""
    low, high = bounds if bounds is not None else (None, None)
    outside = np.zeros(np.shape(values), dtype=bool)
    if low is not None:
        outside |= values < low if inclusive[0] else values <= low
    if high is not None:
        outside |= values > high if inclusive[1] else values >= high
    return outside


def truncated_split_normal(rng: np.random.Generator, shape, value, plus, minus, bounds,
                           inclusive=(True, True)) -> np.ndarray:
    """Split-normal draws of ``shape`` (draws, bodies) restricted to ``bounds`` by drawing again those outside.

    Rejection sampling truncates the distribution exactly. A domain so far
    in a tail that 50 rounds find nothing keeps the nominal value there.
    """
    # one value and widths per body, broadcast against the draws
    value, plus, minus = (np.broadcast_to(np.asarray(x, dtype=float), shape)[0] for x in (value, plus, minus))
    draws = split_normal(rng.standard_normal(shape), value, plus, minus)
    # indices of the draws outside, in the order of a boolean mask (C order): each round touches only them
    bad = np.nonzero(_outside(draws, bounds, inclusive))
    for _ in range(_REDRAW_ROUNDS):
        if not bad[0].size:
            return draws
        body = bad[-1]
        draws[bad] = split_normal(rng.standard_normal(body.size), value[body], plus[body], minus[body])
        still = _outside(draws[bad], bounds, inclusive)
        bad = tuple(index[still] for index in bad)
    draws[bad] = value[bad[-1]]
    return draws


def sampled_inputs(system: System, samples: int, seed: int | None, nominal: Inputs | None = None) -> Inputs:
    """``samples`` joint draws of every uncertain input of ``system``.

    An input that no body gives an uncertainty stays one row (1, bodies),
    which broadcasts against the draws of the others.
    """
    rng = np.random.default_rng(seed)
    nominal = nominal_inputs(system) if nominal is None else nominal
    planets, star, assumptions = list(system.planets), [system.star], [system.assumptions]
    # (the Inputs field, the bodies it holds a column of, their parameter)
    inputs = [(field, planets, field) for field in PLANET_FIELDS]
    inputs += [(f"star_{field}", star, field) for field in STAR_FIELDS]
    inputs += [("j_mag", star, "j_mag"), ("k_mag", star, "k_mag"), ("bond_albedo", assumptions, "bond_albedo")]
    inputs += [(field, assumptions, name) for field, name in ASSUMPTION_FIELDS.items()]
    drawn = {}
    for name, bodies, parameter in inputs:
        values = getattr(nominal, name)
        spreads = [body.uncertainty(parameter) for body in bodies]
        if not any(spreads) or np.isnan(values).all():
            continue
        plus = np.array([s.plus if s else 0.0 for s in spreads])
        minus = np.array([s.minus if s else 0.0 for s in spreads])
        declared = type(bodies[0]).param[parameter]   # its bounds are the physical domain
        drawn[name] = truncated_split_normal(rng, (samples, len(bodies)), values, plus, minus,
                                             declared.bounds, declared.inclusive_bounds)
    estimated = np.isnan(nominal.mass[0])
    if estimated.any():   # the relation's scatter, for the planets whose mass is estimated
        drawn["mass_relation_z"] = np.where(estimated, rng.standard_normal((samples, len(planets))), 0.0)
    return replace(nominal, **drawn)


def share_of_draws(holds, samples: int) -> np.ndarray:
    """The fraction of the ``samples`` draws in which a yes/no quantity holds, for each row of its table.

    ``holds`` is shaped (draws, rows), or (1, rows) for a quantity that no
    draw changes. The draws of each row are counted side by side in a
    transposed copy: counted down the columns of a (draws, rows) array of a
    few rows, numpy would pay its loop's overhead once per draw.
    """
    holds = np.broadcast_to(holds, (samples, np.shape(holds)[1]))
    return np.count_nonzero(np.ascontiguousarray(holds.T), axis=1) / samples


def percentile_bounds(rows: np.ndarray, overwrite: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """The 16th and 84th percentiles of each row of ``rows`` (rows, draws), numpy's 'linear' definition.

    Each row is sorted (NaN last) and the percentile q is interpolated
    between the order statistics around (n - 1) q, n the row's draws that
    are not NaN (Hyndman & Fan 1996, Am. Stat. 50, 361, definition 7; numpy's
    'linear' method, whose interpolation this repeats operation for
    operation). NaN draws (a quantity undefined in some draws) are thus
    left out, as ``np.nanpercentile`` leaves them, with no loop over rows;
    a row of nothing but NaN gives NaN. With ``overwrite`` a C-ordered
    ``rows`` is sorted in place (saves a copy of a large array the caller
    no longer needs).
    """
    rows = np.ascontiguousarray(rows, dtype=float) if overwrite else np.array(rows, dtype=float, order="C")
    rows.sort(axis=1)   # one vectorised sort per row beats numpy's partition at four order statistics
    counts = np.full(rows.shape[0], rows.shape[1])
    some_nan = np.isnan(rows[:, -1])   # sorted last, so a row has NaN draws only if it ends with one
    counts[some_nan] = rows.shape[1] - np.count_nonzero(np.isnan(rows[some_nan]), axis=1)
    position = (counts[:, None] - 1) * (np.asarray(PERCENTILES) / 100.0)
    below = np.floor(position)
    gamma = position - below
    lower = np.maximum(below, 0.0).astype(np.intp)
    upper = np.minimum(lower + 1, np.maximum(counts[:, None] - 1, 0))
    low_value, high_value = np.take_along_axis(rows, lower, axis=1), np.take_along_axis(rows, upper, axis=1)
    with np.errstate(invalid="ignore"):   # an infinite draw (an exact commensurability's super-period)
        step = high_value - low_value
        bounds = np.where(gamma >= 0.5, high_value - step * (1.0 - gamma), low_value + step * gamma)
    bounds[counts == 0] = np.nan
    return bounds[:, 0], bounds[:, 1]
