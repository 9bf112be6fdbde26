"""Which published methods the numbers of a derivation used, for their references (BibTeX).

A quantity's numbers rest on its own method (the registry's ``source``)
and on those of every quantity and intermediate it reads, however
indirectly: an equilibrium temperature uses Kepler's third law through
the semi-major axis. The reads are recorded once per process by
evaluating every registered quantity on a small fixed system through a
recording context; what a quantity reads does not depend on the values.
A method with a ``source_when`` counts only where that condition holds in
the system at hand (the mass-radius relation only for a mass not given).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np

from ..files.system import Planet, Star, System
from .inputs import nominal_inputs
from .references import Reference, references_of
from .registry import REGISTRY, Context, Quantity, declared


@dataclass
class _Recording(Context):
    """A context that notes, for each registered name it computes, the names that computation reads."""

    _reading: list = field(default_factory=list)
    _reads: dict = field(default_factory=dict)
    _keeps_attributes = False   # every read must come through __getattr__ to be noted

    def __getattr__(self, name: str):
        if name.startswith("_"):
            raise AttributeError(name)
        reading, reads = self.__dict__["_reading"], self.__dict__["_reads"]
        if reading:
            reads[reading[-1]].add(name)
        if name in REGISTRY and name not in self.__dict__["_values"]:
            reads.setdefault(name, set())
            reading.append(name)
            try:
                return super().__getattr__(name)
            finally:
                reading.pop()
        return super().__getattr__(name)


def _probe_system() -> System:
    """A small valid system on which every registered quantity can be evaluated."""
    star = Star(name="probe", mass=0.3, radius=0.3, teff=3300.0, j_mag=10.0, k_mag=9.0)
    planets = [Planet(name=n, period=p, radius=r, mass=m, eccentricity=e)
               for n, p, r, m, e in (("b", 2.0, 1.0, 1.0, 0.0), ("c", 3.1, 1.5, None, 0.05),
                                     ("d", 4.7, 2.0, 4.0, 0.1))]
    return System(name="probe", star=star, planets=planets)


@lru_cache(maxsize=1)
def _recorded() -> tuple[dict[str, frozenset], tuple[str, ...]]:
    declared()   # fills the registry
    context = _Recording(nominal_inputs(_probe_system()))
    failed = []
    for name in list(REGISTRY):
        try:
            with np.errstate(all="ignore"):
                getattr(context, name)
        except Exception:   # what it read up to there is kept; probe_failures() names it for the tests
            failed.append(name)
    reads = {name: frozenset(n for n in found if n in REGISTRY) for name, found in context._reads.items()}
    return reads, tuple(failed)


def direct_reads() -> dict[str, frozenset]:
    """Registered name -> the registered names its function reads directly."""
    return _recorded()[0]


def probe_failures() -> tuple[str, ...]:
    """Registered names whose function failed on the probe system (their reads may be incomplete)."""
    return _recorded()[1]


def depends_on(name: str) -> set[str]:
    """``name`` and every registered name it reads, directly or through others."""
    reads = direct_reads()
    found, waiting = set(), [name]
    while waiting:
        current = waiting.pop()
        if current not in found:
            found.add(current)
            waiting.extend(reads.get(current, ()))
    return found


def _values(derived, quantity: Quantity):
    """The values of a document quantity in ``derived`` (a column, or one value of a one-row table)."""
    if quantity.table in ("system", "star"):
        node = getattr(derived, quantity.table)
        for part in quantity.key.split("."):
            if not isinstance(node, dict):
                return None
            node = node.get(part)
        return node
    return getattr(derived, quantity.table).get(quantity.key)


def has_value(values) -> bool:
    """Whether anything in ``values`` is a value (not None, NaN or infinite)."""
    for value in np.ravel(np.asarray(values, dtype=object)) if values is not None else ():
        if value is None:
            continue
        if isinstance(value, (float, np.floating)) and not math.isfinite(value):
            continue
        return True
    return False


def quantities_with_values(derived, keys=None) -> list[Quantity]:
    """The document quantities that hold at least one value in ``derived`` (of ``keys``, ``table.key``
    strings such as ``"planets.teq_k"``, when given)."""
    chosen = [q for q in declared() if keys is None or f"{q.table}.{q.key}" in keys]
    return [q for q in chosen if has_value(_values(derived, q))]


def methods_used(system: System, derived, keys=None) -> dict[str, list[str]]:
    """Source key -> the document keys (``table.key``) whose numbers used that method.

    Parameters
    ----------
    system : System
        The system ``derived`` was derived from (for the conditions of ``source_when``).
    derived : Derived
        The derivation.
    keys : iterable of str, optional
        Only these ``table.key`` quantities (a table with some columns, say); default all.
    """
    context = Context(nominal_inputs(system))
    applies: dict[str, bool] = {}

    def used(name: str) -> bool:
        quantity = REGISTRY[name]
        if not quantity.source:
            return False
        if not quantity.source_when:
            return True
        if name not in applies:
            applies[name] = bool(np.any(getattr(context, quantity.source_when)))
        return applies[name]

    methods: dict[str, list[str]] = {}
    for quantity in quantities_with_values(derived, None if keys is None else set(keys)):
        for name in sorted(depends_on(quantity.name)):
            if used(name):
                users = methods.setdefault(REGISTRY[name].source, [])
                label = f"{quantity.table}.{quantity.key}"
                if label not in users:
                    users.append(label)
    return dict(sorted(methods.items()))


def references_used(system: System, derived, keys=None) -> list[Reference]:
    """The references of the methods the numbers used (see :func:`methods_used`)."""
    return references_of(methods_used(system, derived, keys))


def bibtex(system: System, derived, keys=None, header: list[str] = ()) -> str:
    """BibTeX of exactly the methods the numbers used, each entry preceded by a comment naming
    the quantities that used it; ``header`` lines come first as comments."""
    methods = methods_used(system, derived, keys)
    # text outside entries is ignored by BibTeX, except that an "@" would open an entry
    lines = [f"% {' '.join(line.replace('@', '(at)').split())}" for line in header]
    for reference in references_of(methods):
        lines.append("")
        lines.append(f"% used for: {', '.join(methods[reference.key])}")
        lines.append(reference.bibtex)
    return "\n".join(lines).lstrip("\n") + "\n"
