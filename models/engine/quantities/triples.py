"""Consecutive triples: the Laplace-type relation p/P1 - (p+q)/P2 + q/P3 closest to zero."""

from ...physics import resonances
from ..registry import intermediate, of_triples, quantity

_TRIPLES = "Three-body relations (consecutive triples)"


@intermediate("triples", description="p and q of the best small-integer three-body relation (nominal for draws)")
def triple_relation(c):
    if c.anchor is not None:
        return c.anchor.triple_p, c.anchor.triple_q
    p, q, _ = resonances.best_three_body_relation(*of_triples(c.period))
    return p, q


@quantity("triples", key="p", kind="int", label="p", description="p of the relation", group=_TRIPLES,
          views=("ladder",))
def triple_p(c):
    return c.triple_relation[0]


@quantity("triples", key="q", kind="int", label="q", description="q of the relation", group=_TRIPLES,
          views=("ladder",))
def triple_q(c):
    return c.triple_relation[1]


@quantity("triples", unit="deg / d", label="p/P1-(p+q)/P2+q/P3", fmt=".3g",
          description="residual of the three-body relation", source="laplace_relation", group=_TRIPLES,
          views=("ladder",))
def residual_deg_per_day(c):
    return 360.0 * resonances.three_body_residual(*of_triples(c.period), c.triple_p, c.triple_q)
