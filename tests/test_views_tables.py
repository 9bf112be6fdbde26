"""The views' tables read the registry: its quantities, headings, formats, cautions and intervals.

Columns are checked against ``orbitdeck.models.engine.registry.declared`` (the quantities whose ``views``
name the table), values against ``derive()`` formatted with each quantity's own ``fmt``, and the ranges
under each value against the derived 16th-84th percentiles.
"""

from __future__ import annotations

import html

import re

import pytest

from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.dashboard.views.tables import ESTIMATE_MARK, range_text
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import load_system
from orbitdeck.models.engine.references import REFERENCES
from orbitdeck.models.engine.registry import declared

pytestmark = pytest.mark.filterwarnings("ignore:The inplace keyword in DataFrame.reset_index")

SAMPLES = 1000


@pytest.fixture(scope="module")
def nominal():
    return OrbitDeckApp(load_system(demo_path()))


@pytest.fixture(scope="module")
def drawn():
    return OrbitDeckApp(load_system(demo_path()), samples=SAMPLES, uncertainty=True)


def shown_in(view_name, table):
    return [q for q in declared(table) if view_name in q.views]


def cell(text: str) -> tuple[str, str]:
    """(value, range) read from a cell: "<span ...>v</span><span ...>+a -b</span>" or a plain value."""
    parts = re.findall(r"<span[^>]*>(.*?)</span>", text)
    return (parts[0], parts[1]) if parts else (text, "")


def test_flux_tables_are_the_registry_flux_quantities_by_group(nominal):
    flux = nominal.views["Flux & temperature"]
    expected = shown_in("flux", "planets")
    shown = [key for table in flux.tables.values() for key in table.value.columns if key != "planet"]
    assert shown == [q.key for q in expected]
    for group, table in flux.tables.items():
        assert {q.group for q in expected if q.key in table.value.columns} == {group}
        assert table.frozen_columns == ["planet"] and table.sortable is False
        for q in expected:
            if q.key in table.value.columns:
                assert table.titles[q.key] == q.heading + (f" {ESTIMATE_MARK}" if q.estimate else "")
                assert table.header_tooltips[q.key].startswith(q.description)


def test_values_are_formatted_with_the_registry_format(nominal):
    table = nominal.views["Flux & temperature"].tables["Orbits and irradiation"].value
    planets = nominal.derived.planets
    for q in shown_in("flux", "planets"):
        if q.key in table.columns and q.kind == "float":
            assert list(table[q.key]) == [format(v, q.fmt) for v in planets[q.key]], q.key
    assert list(table["hz_region"]) == [str(r) for r in planets["hz_region"]]
    bulk = nominal.views["Flux & temperature"].tables["Bulk properties"].value
    estimated = planets["mass_estimated"]
    assert [t.startswith("\u2248") for t in bulk["mass_mearth"]] == list(estimated)


def test_estimates_carry_a_caution_naming_their_source(nominal):
    flux = nominal.views["Flux & temperature"]
    caution = flux.caution.object
    for q in shown_in("flux", "planets"):
        if q.estimate:
            assert q.label in caution and html.escape(REFERENCES[q.source].citation) in caution
    assert "model estimates under the stated assumptions" in caution


def test_observability_table_names_the_impact_parameter_plainly(nominal):
    obs = nominal.views["Observability"]
    assert [c for c in obs.table.value.columns if c != "planet"] == [q.key for q in shown_in("observability",
                                                                                              "planets")]
    # the column of the impact parameter is not headed "b", which is also a planet's name
    assert obs.table.titles["impact_parameter"] == "impact parameter [R*]"
    assert "b" not in [t.split(" [")[0] for t in obs.table.titles.values()]


def test_ranges_sit_under_every_float_value_with_draws(drawn):
    obs = drawn.views["Observability"]
    table = obs.table.value
    intervals = drawn.derived.intervals["planets"]
    # the transit probability and the impact parameter get their intervals too
    for key in ("transit_probability", "impact_parameter", "tsm", "transit_depth_ppm"):
        lo, hi = intervals[key]
        value = drawn.derived.planets[key]
        for text, v, a, b in zip(table[key], value, lo, hi):
            shown_value, spread = cell(text)
            assert shown_value == format(v, next(q.fmt for q in declared("planets") if q.key == key))
            assert spread == range_text(float(v), float(a), float(b))
            plus, minus = spread.split(" ")
            assert float(plus[1:]) == pytest.approx(b - v, rel=0.06, abs=1e-12)   # two significant digits
            assert float(minus[1:]) == pytest.approx(v - a, rel=0.06, abs=1e-12)
    assert f"{SAMPLES} Monte Carlo draws" in obs.caution.object


def test_ladder_tables_read_pairs_and_triples_from_the_registry(drawn):
    ladder = drawn.views["Period ladder"]
    pairs, triples = ladder.pairs_table.value, ladder.triples_table.value
    labels = ("pair", "nearest p:q")
    assert [c for c in pairs.columns if c not in labels] == [q.key for q in shown_in("ladder", "pairs")]
    assert [c for c in triples.columns if c != "planets"] == [q.key for q in shown_in("ladder", "triples")]
    lo, hi = drawn.derived.intervals["pairs"]["delta"]
    delta = drawn.derived.pairs["delta"]
    assert cell(pairs["delta"][0]) == (format(delta[0], "+.4f"), range_text(delta[0], lo[0], hi[0]))
    assert list(pairs["nearest p:q"]) == list(drawn.derived.pairs["nearest"])


def test_range_text_rounds_to_two_significant_digits():
    assert range_text(1.0, 0.98765, 1.01234) == "+0.012 \u22120.012"
    assert range_text(100.0, 90.0, 125.0) == "+25 \u221210"
    assert range_text(1.0, float("nan"), 2.0) == ""
