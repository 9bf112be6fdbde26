"""The ``orbitdeck`` command line: version, help, tables, JSON, ECSV and check, on the demos.

Commands run as child processes (see ``cli_harness``); a sample also goes
through the installed console script and ``python -m``.
"""

from __future__ import annotations

import argparse
import hashlib
import json
import math
import re
from importlib.metadata import version

import astropy.units as u
import pytest
from astropy.table import Table
from cli_harness import console_script, run_installed, succeeded

from orbitdeck.dashboard.cli import DEFAULT_SAMPLES, build_parser
from orbitdeck.demo_systems import DEFAULT_DEMO, demo_names, demo_path
from orbitdeck.models import derive, load_system
from orbitdeck.models.engine.derive import document_keys
from orbitdeck.models.engine.registry import declared

PLANET_KEYS, PAIR_KEYS, TRIPLE_KEYS, SKY_KEYS = (document_keys(t) for t in ("planets", "pairs", "triples", "skies"))

DEMOS = demo_names()
DOCUMENT_KEYS = {"format", "system", "warnings", "star", "planets", "pairs", "triples", "skies", "provenance"}
STAR_KEYS = {"name", "mass_msun", "radius_rsun", "teff_k", "luminosity_lsun", "hz_au", "hz_extrapolated"}


def _strict_json(text):
    def refuse(constant):
        raise ValueError(f"{constant} is not JSON")

    return json.loads(text, parse_constant=refuse)


def _subcommands():
    (action,) = [a for a in build_parser()._actions if isinstance(a, argparse._SubParsersAction)]
    return sorted(action.choices)


# -- version and help ----------------------------------------------------------------------------

@pytest.mark.parametrize("entry", ["script", "module"])
def test_version(entry):
    assert console_script().is_file()
    result = succeeded(run_installed("--version", entry=entry))
    assert result.stdout == f"orbitdeck {version('orbitdeck')}\n"


def test_help_lists_every_subcommand(cli):
    commands = _subcommands()
    assert {"table", "check"} <= set(commands)
    text = succeeded(cli.run("--help")).stdout
    assert text.startswith("usage: orbitdeck")
    assert all(name in text for name in commands)


@pytest.mark.parametrize("command", _subcommands())
def test_help_of_subcommand(cli, command):
    result = succeeded(cli.run(command, "--help"))
    assert result.stdout.startswith(f"usage: orbitdeck {command}")
    assert "-h, --help" in result.stdout and result.stderr == ""


@pytest.mark.parametrize("argv", [[], ["no-such-command"], ["check"], ["table", "--samples", "many"]])
def test_usage_errors_exit_2_without_traceback(cli, argv):
    result = cli.run(*argv)
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert "usage: orbitdeck" in result.stderr and result.stdout == ""


def test_negative_samples_are_refused(cli):
    result = cli.run("table", "--samples", "-1", demo_path(DEFAULT_DEMO))
    assert result.returncode == 2 and result.stdout == ""
    assert result.stderr.splitlines()[-1] == "orbitdeck table: error: argument --samples: must be from 0 to 20000, not -1"


#: (command with its other options, the option, a bad value, a phrase of the reason)
BAD_OPTIONS = [
    (["positions"], "--time", "nan", "finite"), (["positions"], "--time", "inf", "finite"),
    (["positions"], "--time", "-inf", "finite"), (["positions"], "--time", "1e308", "from -1e+07 to 1e+07"),
    (["positions"], "--time", "tomorrow", "not a number"),
    (["sky", "--observer", "b"], "--time", "nan", "finite"),
    (["sky", "--observer", "b"], "--albedo", "-1", "from 0 to 2"),
    (["sky", "--observer", "b"], "--albedo", "nan", "finite"),
    (["sky", "--observer", "b"], "--events", "-3", "from 0 to 100"),
    (["sky", "--observer", "b"], "--events", "1000000", "from 0 to 100"),
    (["sky", "--observer", "b"], "--events", "2.5", "not a whole number"),
    (["table"], "--seed", "-1", "from 0 to 4294967295"), (["table"], "--seed", "1e3", "not a whole number"),
    (["table"], "--samples", "100000000", "from 0 to 20000"),
    (["snapshot", "-o", "never.html"], "--time", "inf", "finite"),
    (["snapshot", "-o", "never.html"], "--samples", "-5", "from 0 to 20000"),
    (["snapshot", "-o", "never.html"], "--seed", "-1", "from 0 to"),
]


@pytest.mark.parametrize("command,option,value,reason", BAD_OPTIONS,
                         ids=[f"{c[0]}{o}={v}" for c, o, v, _ in BAD_OPTIONS])
def test_a_bad_option_value_is_a_usage_error_naming_the_option(cli, tmp_path, command, option, value, reason):
    result = cli.run(*command, demo_path(DEFAULT_DEMO), f"{option}={value}", cwd=tmp_path)
    assert result.returncode == 2, result.stderr
    assert result.stdout == "" and "internal error" not in result.stderr and "Traceback" not in result.stderr
    assert result.stderr.startswith(f"usage: orbitdeck {command[0]}")
    last = result.stderr.splitlines()[-1]
    assert last.startswith(f"orbitdeck {command[0]}: error: argument {option}: ") and reason in last, last
    assert list(tmp_path.iterdir()) == []


# -- check: see test_cli_check.py ---------------------------------------------------------------

# -- table as text -------------------------------------------------------------------------------

UNIT_HEADINGS = ["P [d]", "a [au]", "S [S_earth]", "Teq [K]", "R [R_earth]", "M [M_earth]", "rho [g/cm3]",
                 "g [m/s2]", "v_esc [km/s]", "r_Hill [au]", "t_lock [Gyr]", "depth [ppm]", "T14 [h]", "K [m/s]",
                 "P_super [d]", "closest [au]", "max diameter [arcsec]"]


@pytest.mark.parametrize("name", DEMOS)
def test_table_prints_tables_with_units(cli, name):
    system = load_system(demo_path(name))
    text = succeeded(cli.run("table", demo_path(name))).stdout
    lines = text.splitlines()
    assert lines[0] == system.name
    star = system.star
    assert lines[1].startswith(f"star {star.name}: M = {star.mass:.4g} Msun, R = {star.radius:.4g} Rsun, "
                               f"Teff = {star.teff:.4g} K, L = ")
    assert lines[1].endswith(" Lsun")
    for heading in UNIT_HEADINGS:
        assert heading in text, heading
    # one row per planet in the first table, its period to four significant figures with its interval
    first = lines.index("Orbits and irradiation")
    rows = lines[first + 3: first + 3 + len(system.planets)]
    for planet, row in zip(system.planets, rows):
        cells = row.split()
        assert cells[0] == planet.name and math.isclose(float(cells[1]), planet.period, rel_tol=5e-4)
        assert cells[2].startswith("+") and cells[3].startswith("-")
    assert f"intervals: 16th-84th percentiles of {DEFAULT_SAMPLES} Monte Carlo samples" in text
    assert "Results are model estimates" in text
    # a mass estimated from radius keeps the interval the radius errors give it, and says it is estimated
    estimated = [row for row in lines if "(est.)" in row]
    assert len(estimated) == sum(p.mass is None for p in system.planets)
    assert all(re.search(r"\d \+\S+ -\S+ \(est\.\)", row) for row in estimated)


#: text-table heading -> key of the JSON document, for every numeric or text column the tables show
TEXT_COLUMNS = {
    "P [d]": "period_d", "a [au]": "semi_major_axis_au", "S [S_earth]": "insolation_earth", "Teq [K]": "teq_k",
    "HZ region": "hz_region", "R [R_earth]": "radius_rearth", "M [M_earth]": "mass_mearth",
    "rho [g/cm3]": "density_gcc", "g [m/s2]": "surface_gravity_ms2", "v_esc [km/s]": "escape_speed_kms",
    "r_Hill [au]": "hill_radius_au", "t_lock [Gyr]": "tidal_lock_gyr", "P_transit": "transit_probability",
    "depth [ppm]": "transit_depth_ppm", "T14 [h]": "transit_duration_h", "b": "impact_parameter",
    "K [m/s]": "rv_semi_amplitude_ms", "TSM": "tsm", "ESM": "esm",
    "P2/P1": "period_ratio", "nearest": "nearest", "order": "order", "Delta": "delta",
    "P_super [d]": "super_period_d", "spacing [R_H,m]": "mutual_hill_spacing",
    "closest [au]": "closest_distance_au", "max diameter [arcsec]": "max_angular_diameter_arcsec",
    "x Moon from Earth": "moon_ratio",
}


def _text_tables(text: str) -> list[tuple[list[str], list[dict]]]:
    """Every table of the text output: its headings and rows (heading -> cell text), columns found from the
    dashes under the headings (cells may hold spaces)."""
    lines = text.splitlines()
    tables = []
    for i in range(1, len(lines) - 1):
        rule = lines[i + 1]
        if not rule or set(rule) != {"-", " "} or not lines[i].strip():
            continue
        spans = [m.span() for m in re.finditer(r"-+", rule)]
        cut = lambda line: [line[a:b if k < len(spans) - 1 else None].strip() for k, (a, b) in enumerate(spans)]
        headings = cut(lines[i])
        rows = []
        for line in lines[i + 2:]:
            if not line.strip():
                break
            rows.append(dict(zip(headings, cut(line))))
        tables.append((headings, rows))
    return tables


@pytest.mark.parametrize("name", DEMOS)
def test_table_numbers_are_the_json_documents(cli, name):
    # every column of every planet, pair and sky table against the JSON document of the same run: numbers
    # to the four significant figures shown, texts exactly, "-" where the document has none
    path = demo_path(name)
    text = succeeded(cli.run("table", "--samples", "0", path)).stdout
    doc = _strict_json(succeeded(cli.run("table", "--json", "--samples", "0", path)).stdout)
    compared = set()
    for headings, rows in _text_tables(text):
        first = headings[0]
        records = {"planet": doc["planets"], "inner": doc["pairs"], "observer": doc["skies"]}.get(first)
        if records is None:
            continue
        assert len(rows) == len(records), headings
        for row, record in zip(rows, records):
            for heading, cell in row.items():
                key = TEXT_COLUMNS.get(heading)
                if key is None:
                    continue
                value = record[key]
                cell = cell.removesuffix(" (est.)")
                if value is None:
                    assert cell == "-", (heading, cell)
                elif isinstance(value, str) or isinstance(value, int) and not isinstance(value, bool):
                    assert cell == str(value), (heading, cell, value)
                else:
                    assert math.isclose(float(cell), value, rel_tol=5.01e-4, abs_tol=0.0), (heading, cell, value)
                compared.add(key)
    # at least these columns were found and checked (a renamed heading must not silently skip its column)
    assert {"period_d", "semi_major_axis_au", "insolation_earth", "teq_k", "density_gcc", "mass_mearth",
            "tidal_lock_gyr", "transit_depth_ppm", "rv_semi_amplitude_ms", "tsm", "esm", "delta",
            "mutual_hill_spacing", "closest_distance_au", "max_angular_diameter_arcsec"} <= compared, compared


def test_table_without_file_shows_the_default_demo(cli):
    text = succeeded(cli.run("table", "--samples", "0")).stdout
    assert text.splitlines()[0] == load_system(demo_path(DEFAULT_DEMO)).name
    assert "intervals:" not in text and " +" not in text


def test_table_through_the_installed_script_matches(cli):
    args = ("table", "--samples", "40", "--seed", "9", demo_path("skew_trio"))
    installed = succeeded(run_installed(*args, entry="script"))
    assert installed.stdout == succeeded(cli.run(*args)).stdout


# -- table --json --------------------------------------------------------------------------------

def _assert_document_shape(doc, system, sampled):
    expected = DOCUMENT_KEYS | ({"samples", "seed"} if sampled else set())
    assert set(doc) == expected
    system_keys = {"name"} | {q.key.partition(".")[0] for q in declared("system")}
    assert doc["format"] == "orbitdeck-derived/1" and doc["system"]["name"] == system.name
    assert set(doc["system"]) == system_keys | ({"interval", "fraction"} if sampled else set())
    assert set(doc["star"]) == STAR_KEYS | ({"interval", "fraction"} if sampled else set())
    n = len(system.planets)
    for table, keys, rows in (("planets", PLANET_KEYS, n), ("pairs", PAIR_KEYS, n - 1),
                              ("triples", TRIPLE_KEYS, max(n - 2, 0)), ("skies", SKY_KEYS, n * n)):
        assert len(doc[table]) == rows, table
        for row in doc[table]:
            extra = [k for k in ("interval", "fraction") if sampled and k in row]
            assert list(row) == list(keys) + extra, table
    assert [row["name"] for row in doc["planets"]] == system.planet_names
    assert all(isinstance(w, str) for w in doc["warnings"])


def _contains_key(node, key):
    if isinstance(node, dict):
        return key in node or any(_contains_key(v, key) for v in node.values())
    if isinstance(node, list):
        return any(_contains_key(v, key) for v in node)
    return False


@pytest.mark.parametrize("name", DEMOS)
def test_json_nominal(cli, name):
    system = load_system(demo_path(name))
    doc = _strict_json(succeeded(cli.run("table", "--json", "--samples", "0", demo_path(name))).stdout)
    _assert_document_shape(doc, system, sampled=False)
    assert not _contains_key(doc, "interval")
    assert doc.pop("provenance")["input"]["sha256"] == hashlib.sha256(demo_path(name).read_bytes()).hexdigest()
    assert doc == json.loads(json.dumps(derive(system).to_dict()))


@pytest.mark.parametrize("name", DEMOS)
def test_json_sampled_is_reproducible(cli, name):
    args = ("table", "--json", "--samples", "200", "--seed", "3", demo_path(name))
    first, second = succeeded(cli.run(*args)).stdout, succeeded(cli.run(*args)).stdout
    assert first == second
    system = load_system(demo_path(name))
    doc = _strict_json(first)
    _assert_document_shape(doc, system, sampled=True)
    assert doc["samples"] == 200 and doc["seed"] == 3
    for row in doc["planets"]:
        assert set(row["interval"]) <= set(PLANET_KEYS) and "period_d" in row["interval"]
        for low, high in row["interval"].values():
            assert low is None or high is None or low <= high
    assert (doc["provenance"]["samples"], doc["provenance"]["seed"]) == (200, 3)
    del doc["provenance"]
    assert doc == json.loads(json.dumps(derive(system, samples=200, seed=3).to_dict()))
    other = succeeded(cli.run("table", "--json", "--samples", "200", "--seed", "4", demo_path(name))).stdout
    assert other != first  # the seed is the one used


# -- table --ecsv --------------------------------------------------------------------------------

ECSV_UNITS = {"period_d": u.d, "semi_major_axis_au": u.au, "teq_k": u.K, "radius_rearth": u.earthRad,
              "mass_mearth": u.earthMass, "density_gcc": u.g / u.cm**3, "surface_gravity_ms2": u.m / u.s**2,
              "escape_speed_kms": u.km / u.s, "transit_duration_h": u.h, "rv_semi_amplitude_ms": u.m / u.s}


@pytest.mark.parametrize("name", DEMOS)
def test_ecsv_is_read_back_by_astropy_with_units(cli, tmp_path, name):
    out = tmp_path / "planets.ecsv"
    result = succeeded(cli.run("table", "--ecsv", out, "--samples", "0", demo_path(name)))
    assert result.stdout == "" and result.stderr == f"wrote {out}\n"
    table = Table.read(out, format="ascii.ecsv")
    nominal = derive(load_system(demo_path(name))).to_dict()["planets"]
    assert list(table.colnames) == list(PLANET_KEYS)
    assert list(table["name"]) == [row["name"] for row in nominal]
    for key, unit in ECSV_UNITS.items():
        assert table[key].unit == unit, key
        for got, row in zip(table[key].quantity, nominal):
            assert math.isclose(got.to_value(unit), row[key], rel_tol=1e-12), key
    # the units are real astropy units: conversions follow them
    # (au = 149 597 870.7 km exactly, IAU 2012 Resolution B2, from memory; a day is 24 h)
    for got, row in zip(table["semi_major_axis_au"].quantity, nominal):
        assert math.isclose(got.to_value(u.km), row["semi_major_axis_au"] * 149_597_870.7, rel_tol=1e-12)
    for got, row in zip(table["period_d"].quantity, nominal):
        assert math.isclose(got.to_value(u.h), row["period_d"] * 24, rel_tol=1e-12)


def test_ecsv_with_intervals_and_json_together(cli, tmp_path):
    out = tmp_path / "planets.ecsv"
    result = succeeded(cli.run("table", "--ecsv", out, "--json", "--samples", "100", "--seed", "5",
                         demo_path("amber_pair")))
    doc = _strict_json(result.stdout)
    table = Table.read(out, format="ascii.ecsv")
    assert table["period_d_p16"].unit == u.d and table["period_d_p84"].unit == u.d
    low, high = doc["planets"][0]["interval"]["period_d"]
    assert math.isclose(table["period_d_p16"][0], low) and math.isclose(table["period_d_p84"][0], high)


def test_ecsv_into_a_missing_folder_is_a_clear_error(cli, tmp_path):
    out = tmp_path / "absent" / "planets.ecsv"
    result = cli.run("table", "--ecsv", out, "--samples", "0", demo_path(DEFAULT_DEMO))
    assert result.returncode == 2 and "Traceback" not in result.stderr
    assert result.stderr == f"{out}: cannot be written: No such file or directory\n"
    assert not out.parent.exists()


def test_ecsv_never_replaces_a_pipe_and_a_read_only_file_only_when_told(cli, tmp_path):
    import os
    import stat

    fifo = tmp_path / "pipe.ecsv"
    os.mkfifo(fifo)
    result = cli.run("table", "--ecsv", fifo, "--samples", "0", demo_path(DEFAULT_DEMO))
    assert result.returncode == 2
    assert result.stderr == f"{fifo}: is not a regular file (a named pipe); only regular files are replaced\n"
    assert stat.S_ISFIFO(os.lstat(fifo).st_mode)
    kept = tmp_path / "kept.ecsv"
    kept.write_text("earlier table\n")
    kept.chmod(0o444)
    result = cli.run("table", "--ecsv", kept, "--samples", "0", demo_path(DEFAULT_DEMO))
    assert result.returncode == 2 and "is read-only" in result.stderr and "--overwrite" in result.stderr
    assert kept.read_text() == "earlier table\n"
    succeeded(cli.run("table", "--ecsv", kept, "--overwrite", "--samples", "0", demo_path(DEFAULT_DEMO)))
    assert Table.read(kept, format="ascii.ecsv")["name"][0] == load_system(demo_path(DEFAULT_DEMO)).planet_names[0]
    assert sorted(p.name for p in tmp_path.iterdir()) == ["kept.ecsv", "pipe.ecsv"]


# -- notes and warnings, printed once and with their place ------------------------------------------

EQUAL_PERIODS = """format = "orbitdeck-system/1"
[system]
name = "Crowded"
[star]
name = "S"
mass = 0.2
radius = 0.2
teff = 3000
[[planets]]
name = "b"
period = 2.0
radius = 1.0
mass = 1.0
[[planets]]
name = "c"
period = 4.0
radius = 1.5
mass = 30.0
[[planets]]
name = "d"
period = 4.0
radius = 1.0
mass = 1.0
"""


def test_an_unusual_unit_is_reported_with_the_file_and_the_field(cli, tmp_path):
    path = tmp_path / "units.toml"
    path.write_text(demo_path(DEFAULT_DEMO).read_text().replace(
        "radius = { value = 0.246,", 'radius = { value = 0.246, unit = "Rsun s2/s/s",', 1))
    result = cli.run("check", path)
    assert result.returncode == 3 and result.stdout == "valid, with 1 warning\n"   # a valid file, with a warning
    assert result.stderr.splitlines() == [f"warning: {path}: star.radius.unit: astropy: 'Rsun s2/s/s' contains "
                                          "multiple slashes, which is discouraged by the FITS standard"]
    # the other commands print the same note and go on
    result = succeeded(cli.run("table", path, "--samples", "0"))
    assert result.stderr.splitlines() == [f"warning: {path}: star.radius.unit: astropy: 'Rsun s2/s/s' contains "
                                          "multiple slashes, which is discouraged by the FITS standard"]


def test_sky_with_events_prints_each_warning_once(cli, tmp_path):
    # planets without a transit time each give a note, from the sky and again from the close approaches
    path = tmp_path / "crowded.toml"
    path.write_text(EQUAL_PERIODS)
    result = succeeded(cli.run("sky", path, "--observer", "b", "--events", "2"))
    warnings = [line for line in result.stdout.splitlines() if line.startswith("warning: ")]
    assert any("transit_time" in w for w in warnings)
    assert len(warnings) == len(set(warnings)), warnings


def test_no_negative_zero_and_no_infinity_in_the_tables(cli, tmp_path):
    # b-c is exactly 2:1 (an infinite super-period); c and d share a period, and d's smaller mass puts
    # it a hair inside c: a spacing of about -0.003 mutual Hill radii, written -0.00 to two places
    path = tmp_path / "crowded.toml"
    path.write_text(EQUAL_PERIODS)
    text = succeeded(cli.run("table", path, "--samples", "0")).stdout
    assert re.search(r"(?<![\w.])-0(\.0*)?(?![\d.e])", text) is None, text
    for word in ("inf", "nan", "Infinity", "NaN"):
        assert re.search(rf"\b{word}\b", text) is None, word
    assert "spacing 0.00 mutual Hill radii" in text
