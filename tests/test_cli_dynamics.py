"""The command line carries the dynamics: the text table's Dynamics block and system line, the JSON keys
with their intervals and fractions, and the adjacent-pair ECSV (``--pairs-ecsv``) with units."""

from __future__ import annotations

import json
import math

import astropy.units as u
from astropy.table import Table
from cli_harness import succeeded

from orbitdeck.demo_systems import DEFAULT_DEMO, demo_path
from orbitdeck.models import derive, load_system

DYNAMICS_KEYS = ("ttv_inner_min", "ttv_outer_min", "amd_critical", "amd_beta", "hill_stable", "in_overlap_zone")


def test_json_has_every_dynamics_key_with_intervals_and_fractions(cli):
    doc = json.loads(succeeded(cli.run("table", "--json", "--samples", "200", "--seed", "3")).stdout)
    for row in doc["pairs"]:
        assert all(key in row for key in DYNAMICS_KEYS)
        assert len(row["interval"]["ttv_inner_min"]) == 2 and len(row["interval"]["amd_beta"]) == 2
        assert set(row["fraction"]) == {"hill_stable", "in_overlap_zone"}
    assert doc["system"]["amd_stable"] is True and 0.5 < doc["system"]["fraction"]["amd_stable"] <= 1.0
    assert doc["system"]["free_eccentricity"] == {"amplitude": 0.0, "angle": 0.0}
    low, high = doc["system"]["interval"]["amd_kg_m2_s"]   # two slightly eccentric orbits: some AMD
    assert 0.0 < low < doc["system"]["amd_kg_m2_s"] < high


def test_text_table_lists_the_dynamics_block_and_says_what_it_assumes(cli):
    text = succeeded(cli.run("table", "--samples", "100", "--seed", "3")).stdout
    block = text.split("Dynamics (coplanar orbits; model estimates)\n", 1)[1].split("\n\n", 1)[0]
    lines = block.splitlines()
    assert "TTV inner [min]" in lines[0] and "beta (AMD)" in lines[0] and "Hill stable" in lines[0]
    nominal = derive(load_system(demo_path(DEFAULT_DEMO))).pairs
    assert lines[2].split()[:3] == ["b", "c", "7:5"] and lines[4].split()[:3] == ["d", "e", "3:2"]
    assert lines[4].split()[3] == f"{nominal['ttv_inner_min'][2]:.2g}" and "yes (100% of draws)" in lines[4]
    assert "system: AMD = " in text and "AMD-stable = yes" in text
    assert "|Z_free| = 0 at 0 deg" in text and "Pairs b-c, c-d, e-f rest on masses estimated from radii." in text


def test_pairs_ecsv_is_read_back_with_units_and_system_values(cli, tmp_path):
    out = tmp_path / "pairs.ecsv"
    result = succeeded(cli.run("table", "--pairs-ecsv", out, "--samples", "100", "--seed", "3"))
    assert result.stdout == "" and result.stderr == f"wrote {out}\n"
    table = Table.read(out, format="ascii.ecsv")
    doc = json.loads(succeeded(cli.run("table", "--json", "--samples", "100", "--seed", "3")).stdout)
    assert list(table["inner"]) == [row["inner"] for row in doc["pairs"]]
    assert table["ttv_inner_min"].unit == u.min and table["ttv_inner_min_p84"].unit == u.min
    for got, row in zip(table["ttv_outer_min"].quantity, doc["pairs"]):
        if row["ttv_outer_min"] is None:   # outside the formula's range: no amplitude
            assert math.isnan(got.value)
            continue
        # minutes are minutes: 60 s each
        assert math.isclose(got.to_value(u.s), row["ttv_outer_min"] * 60, rel_tol=1e-12)
    assert list(table["hill_stable_fraction"]) == [row["fraction"]["hill_stable"] for row in doc["pairs"]]
    assert "model estimate" in table["amd_beta"].description
    assert table.meta["system values"]["amd_stable"] is True


def test_both_ecsv_tables_at_once(cli, tmp_path):
    planets, pairs = tmp_path / "planets.ecsv", tmp_path / "pairs.ecsv"
    succeeded(cli.run("table", "--ecsv", planets, "--pairs-ecsv", pairs, "--samples", "0"))
    assert len(Table.read(planets, format="ascii.ecsv")) == 5 and len(Table.read(pairs, format="ascii.ecsv")) == 4
