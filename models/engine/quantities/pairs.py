"""Adjacent pairs: period ratios, the nearest commensurability and the spacing in Hill radii.

Monte Carlo draws measure every pair from its nominal commensurability
(the context's ``anchor``), so an interval never jumps between rungs.
"""

import numpy as np

from ...physics import dynamics, resonances
from ..registry import inner, intermediate, outer, quantity

_PAIRS = "Adjacent pairs"


@quantity("pairs", label="P2/P1", fmt=".5f", description="period ratio, outer over inner", group=_PAIRS,
          views=("ladder", "dynamics"))
def period_ratio(c):
    return outer(c.period) / inner(c.period)


@intermediate("pairs", description="p and q of the nearest commensurability p:q (the nominal one for draws)")
def pair_rung(c):
    if c.anchor is not None:
        return c.anchor.pair_p, c.anchor.pair_q
    p, q, _ = resonances.nearest_commensurability(c.period_ratio)
    return p, q


@intermediate("pairs", description="p of the nearest commensurability p:q")
def pair_p(c):
    return c.pair_rung[0]


@intermediate("pairs", description="q of the nearest commensurability p:q")
def pair_q(c):
    return c.pair_rung[1]


@intermediate("pairs", description="whether a draw's own nearest commensurability differs from the nominal one")
def other_nearest(c):
    return resonances.nearest_differs(c.period_ratio, c.pair_p, c.pair_q)


@quantity("pairs", kind="int", label="order", description="order p - q of the nearest commensurability",
          group=_PAIRS, views=("ladder",))
def order(c):
    return c.pair_p - c.pair_q


@quantity("pairs", label="Delta", fmt="+.4f", description="fractional offset from the nearest commensurability",
          source="lithwick2012", group=_PAIRS, views=("ladder", "dynamics"))
def delta(c):
    return resonances.resonance_offset(c.period_ratio, c.pair_p, c.pair_q)


@quantity("pairs", unit="d", label="P_super", fmt=".4g",
          description="TTV super-period of a first-order pair", source="lithwick2012", group=_PAIRS,
          views=("ladder", "dynamics"))
def super_period_d(c):
    with np.errstate(divide="ignore"):
        period = resonances.super_period(inner(c.period), outer(c.period), c.pair_p)
    return np.where(c.order == 1, period, np.nan)


@quantity("pairs", label="spacing", unit_label="R_H,m", fmt=".3g",
          description="separation in mutual Hill radii", source="chambers1996", group=_PAIRS, views=("ladder",))
def mutual_hill_spacing(c):
    return dynamics.mutual_hill_spacing(inner(c.semi_major_axis_au), outer(c.semi_major_axis_au),
                                        inner(c.mass_kg), outer(c.mass_kg), c.star_mass_kg)
