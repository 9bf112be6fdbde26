"""The registry of derived quantities: complete, consistent metadata for every declared quantity."""

import astropy.units as u
import pytest

from orbitdeck.models.engine.references import REFERENCES
from orbitdeck.models.engine.registry import KINDS, TABLES, declared


@pytest.mark.parametrize("quantity", declared(document=False), ids=lambda q: q.name)
def test_every_quantity_has_a_known_table_kind_and_unit(quantity):
    assert quantity.table in TABLES and quantity.kind in KINDS
    u.Unit(quantity.unit)   # parses as an astropy unit
    if quantity.document:
        assert quantity.label and quantity.description
        assert quantity.source is None or quantity.source in REFERENCES, quantity.source
        format(1.2345, quantity.fmt)


def test_document_keys_are_unique_within_each_table():
    for table in TABLES:
        keys = [q.key for q in declared(table)]
        assert len(keys) == len(set(keys)), table


def test_model_estimates_name_their_source():
    for quantity in declared():
        if quantity.estimate:
            assert quantity.source, quantity.name
