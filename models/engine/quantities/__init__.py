"""Declarations of the derived quantities, one module per topic; importing this fills the registry.

Modules are imported in the order their quantities appear in tables and documents.
"""

from . import star, orbit, irradiation, bulk, observing, pairs, triples, skies, dynamics, interiors, atmospheres  # noqa: F401,E501
