"""The registry of derived quantities: each declared once, read by everything that shows one.

A quantity is a function of a :class:`Context` (the inputs and every other
quantity, computed on first use) declared with :func:`quantity` beside its
metadata: the table it belongs to, its unit, label, format, description,
the published source of its method, whether it is a model estimate, the
group it is listed under and the views that show it. ``derive`` and its
JSON document, the ECSV and LaTeX exports, the command line's tables, the
dashboard's tables and the references of the methods all read from here.

Declarations live in :mod:`orbitdeck.models.engine.quantities`, one module
per topic; importing that package fills the registry.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

#: the tables of the derived document, and the shape of their columns: (draws, rows); the system
#: and the star are tables of one row
TABLES = ("system", "star", "planets", "pairs", "triples", "skies")
ONE_ROW_TABLES = ("system", "star")
KINDS = ("float", "int", "bool", "label")


@dataclass(frozen=True)
class Quantity:
    """One derived quantity.

    Attributes
    ----------
    name : str
        Its name in the :class:`Context` and, unless ``key`` says otherwise,
        its key in the document.
    table : str
        One of :data:`TABLES`.
    function : callable
        ``function(context) -> ndarray`` shaped (draws, rows) of its table
        (the system's and the star's: (draws, 1)).
    unit : str
        An astropy unit string ("" for dimensionless numbers).
    unit_label : str
        The unit as a reader writes it in a heading (default: ``unit``).
    label : str
        Short heading for tables and axes.
    fmt : str
        Format of a displayed value (a ``format()`` spec).
    description : str
        One line for exports and tooltips.
    source : str or None
        Key of the published method in :mod:`orbitdeck.models.engine.references`.
    source_when : str
        Name of a boolean array of the context (same table) that is true
        where the method of ``source`` is what gave the value (a mass
        estimated from the radius, say); "" when it always is. The
        references of a derivation list a method only where it was used.
    estimate : bool
        A model estimate that views and exports flag with a caution.
    group : str
        The block of the text tables that lists it ("" for none).
    views : tuple of str
        Names of the dashboard tables that show it.
    kind : str
        "float" (sampled for an interval), "int", "bool" (Monte Carlo draws
        give the fraction of draws where it holds), or "label" (an index
        into ``labels``, shown as text).
    labels : tuple of str
        Texts of a "label" quantity.
    key : str
        Key in the document (dotted for a nested key: ``hz_au.early_mars``).
    document : bool
        False for an intermediate array that no reader shows.
    """

    name: str
    table: str
    function: Callable
    unit: str = ""
    unit_label: str = ""
    label: str = ""
    fmt: str = ".4g"
    description: str = ""
    source: str | None = None
    source_when: str = ""
    estimate: bool = False
    group: str = ""
    views: tuple = ()
    kind: str = "float"
    labels: tuple = ()
    key: str = ""
    document: bool = True

    @property
    def heading(self) -> str:
        """Label and unit, as a table heading: ``Teq [K]``."""
        unit = self.unit_label or self.unit
        return f"{self.label} [{unit}]" if unit else self.label

    @property
    def sampled(self) -> bool:
        """Whether Monte Carlo draws give it an interval."""
        return self.document and self.kind == "float"


REGISTRY: dict[str, Quantity] = {}


def quantity(table: str, name: str | None = None, **metadata) -> Callable:
    """Declare the decorated function as the quantity ``name`` (default: the function's name).

    The function takes a :class:`Context` and returns an array shaped
    (draws, rows of ``table``); ``metadata`` are :class:`Quantity` fields.
    """
    if table not in TABLES:
        raise ValueError(f"unknown table {table!r}")

    def declare(function: Callable) -> Callable:
        declared = Quantity(name=name or function.__name__, table=table, function=function, **metadata)
        if declared.kind not in KINDS:
            raise ValueError(f"{declared.name}: unknown kind {declared.kind!r}")
        if declared.name in REGISTRY:
            raise ValueError(f"quantity {declared.name!r} is declared twice")
        if not declared.key:
            object.__setattr__(declared, "key", declared.name)
        REGISTRY[declared.name] = declared
        return function
    return declare


def intermediate(table: str, name: str | None = None, unit: str = "", description: str = "", **metadata) -> Callable:
    """Declare an array that quantities share but no reader shows (an SI orbit, say); ``metadata`` may
    name the ``source`` (and ``source_when``) of a method it applies."""
    return quantity(table, name, unit=unit, description=description, document=False, **metadata)


def declared(table: str | None = None, *, document: bool = True) -> list[Quantity]:
    """The quantities of ``table`` (all tables for None) in declaration order."""
    from . import quantities  # noqa: F401  (importing the declarations fills the registry)

    return [q for q in REGISTRY.values()
            if (table is None or q.table == table) and (q.document or not document)]


def by_key(table: str) -> dict[str, Quantity]:
    """The document quantities of ``table`` by document key."""
    return {q.key: q for q in declared(table)}


@dataclass
class Context:
    """The inputs of one derivation and, on first use, every registered quantity.

    ``context.teq_k`` computes the quantity ``teq_k`` (and what it needs) once
    and keeps it; names that are not quantities are read from the
    :class:`~orbitdeck.models.engine.inputs.Inputs`. ``anchor`` holds the
    nominal choices that Monte Carlo draws are measured against.
    """

    inputs: object
    anchor: object = None
    _values: dict = field(default_factory=dict, repr=False)
    #: whether a value read is also kept as an attribute, so that later reads skip ``__getattr__``
    #: (a context that must see every read turns it off)
    _keeps_attributes = True

    def __getattr__(self, name: str):
        if name.startswith("_"):
            raise AttributeError(name)
        values = self.__dict__["_values"]
        found = REGISTRY.get(name)
        if name in values:
            value = values[name]
        elif found is None:
            value = getattr(self.__dict__["inputs"], name)
        else:
            value = values[name] = found.function(self)
        if self._keeps_attributes:
            self.__dict__[name] = value
        return value

    def __getitem__(self, name: str):
        return getattr(self, name)

    def restricted(self, table: str, **values) -> "Context":
        """A context sharing this one's inputs and computed values, but for those of ``table``,
        which it computes afresh from ``values`` (the sky rows of one chunk, say)."""
        kept = {name: value for name, value in self._values.items() if REGISTRY[name].table != table}
        return Context(self.inputs, self.anchor, {**kept, **values})

    @property
    def planet_count(self) -> int:
        return self.inputs.period.shape[1]


def inner(column: np.ndarray) -> np.ndarray:
    """The inner planet's value of each adjacent pair: ``column`` (draws, planets) -> (draws, pairs)."""
    return column[:, :-1]


def outer(column: np.ndarray) -> np.ndarray:
    """The outer planet's value of each adjacent pair."""
    return column[:, 1:]


def of_triples(column: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The first, second and third planets' values of each consecutive triple."""
    n = column.shape[1]
    return column[:, : max(n - 2, 0)], column[:, 1: max(n - 1, 1)], column[:, 2:]
