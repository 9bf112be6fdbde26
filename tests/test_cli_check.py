"""``orbitdeck check``: ok (status 0), valid with warnings (status 3), or not valid (status 2).

Warnings are those of the file (astropy's remarks on a unit string) and of
its nominal derivation (crossing orbits, Hill spacing, a star outside the
habitable-zone fit's range...), each on its own line naming the planets.
Commands run as child processes (see ``cli_harness``).
"""

from __future__ import annotations

import re

import pytest
from cli_harness import run_installed

from orbitdeck.dashboard.cli import EXIT_BAD_INPUT, EXIT_WARNINGS, build_parser
from orbitdeck.demo_systems import demo_names, demo_path

#: demos with nothing doubtful in them
CLEAN_DEMOS = ("ossery_loom", "amber_pair")
#: demos with warnings, and a pattern of each warning line after "warning: FILE: "
WARNED_DEMOS = {"skew_trio": [r"planets c and d: not Hill stable for their eccentricities \(Gladman 1993 criterion "
                              r"with eccentricities; spacing \d+\.\d\d mutual Hill radii\)\."]}
ESTIMATES = "those of the derivation rest on its nominal values, model estimates under the file's assumptions"


def system_text(teff=3100.0, eccentricity=0.0, second='name = "c"\nperiod = 3.0') -> str:
    """A small two-planet system; its planets' orbits cross when b's eccentricity exceeds about 0.31."""
    return (f'format = "orbitdeck-system/1"\n[system]\nname = "Pair"\n[star]\nname = "S"\nmass = 0.2\n'
            f'radius = 0.2\nteff = {teff}\n'
            f'[[planets]]\nname = "b"\nperiod = 2.0\nradius = 1.0\nmass = 1.0\neccentricity = {eccentricity}\n'
            f'[[planets]]\n{second}\nradius = 1.0\nmass = 1.0\n')


def _file(tmp_path, text, name="system.toml"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def _warned(result, path, count):
    """The warning lines of a run that found ``count`` warnings, without their "warning: FILE: " head."""
    assert result.returncode == EXIT_WARNINGS == 3, (result.stdout, result.stderr)
    assert "Traceback" not in result.stderr
    plural = "" if count == 1 else "s"
    assert result.stdout.startswith(f"valid, with {count} warning{plural}") and result.stdout.count("\n") == 1
    lines = result.stderr.splitlines()
    assert len(lines) == count and all(line.startswith(f"warning: {path}: ") for line in lines), lines
    return [line[len(f"warning: {path}: "):] for line in lines]


# -- ok ------------------------------------------------------------------------------------------

def test_every_demo_is_listed_here():
    assert set(demo_names()) == set(CLEAN_DEMOS) | set(WARNED_DEMOS)


@pytest.mark.parametrize("name", CLEAN_DEMOS)
def test_a_clean_demo_is_ok(cli, name):
    result = cli.run("check", demo_path(name))
    assert (result.returncode, result.stdout, result.stderr) == (0, "ok\n", "")


def test_a_pair_on_separate_orbits_is_ok(cli, tmp_path):
    # the same pair as below with b on a circular orbit: a_c / a_b = 1.5^(2/3) = 1.31, about 13 mutual Hill
    # radii apart, well outside the first-order overlap zone (both worked out by hand from Kepler's third law)
    result = cli.run("check", _file(tmp_path, system_text()))
    assert (result.returncode, result.stdout, result.stderr) == (0, "ok\n", "")


# -- valid, with warnings ------------------------------------------------------------------------

@pytest.mark.parametrize("name", sorted(WARNED_DEMOS))
def test_a_demo_with_warnings_lists_them(cli, name):
    path = demo_path(name)
    warnings = _warned(cli.run("check", path), path, len(WARNED_DEMOS[name]))
    for line, pattern in zip(warnings, WARNED_DEMOS[name]):
        assert re.fullmatch(pattern, line), line


def test_crossing_orbits_give_the_warning_status_and_name_both_planets(cli, tmp_path):
    # b's apoastron a_b (1 + 0.6) = 1.6 a_b lies beyond c's circular orbit at a_c = 1.5^(2/3) a_b = 1.31 a_b
    # (Kepler's third law, equal planet masses): the orbits cross
    path = _file(tmp_path, system_text(eccentricity=0.6))
    result = cli.run("check", path)
    warnings = _warned(result, path, 2)
    assert warnings[0] == "planets b and c: their orbits cross."
    assert warnings[1].startswith("planets b and c: not Hill stable for their eccentricities")
    assert result.stdout == f"valid, with 2 warnings; {ESTIMATES}\n"
    # the installed console script agrees with the forked run, byte for byte
    installed = run_installed("check", path, entry="script")
    assert (installed.returncode, installed.stdout, installed.stderr) == (result.returncode, result.stdout,
                                                                          result.stderr)


def test_a_star_outside_the_habitable_zone_calibration_is_a_warning(cli, tmp_path):
    path = _file(tmp_path, system_text(teff=2000.0))
    (warning,) = _warned(cli.run("check", path), path, 1)
    assert warning.startswith("Teff = 2000 K is below 2600-7200 K") and "extrapolated" in warning


def test_a_remark_on_a_unit_string_is_a_warning_naming_the_planet(cli, tmp_path):
    path = _file(tmp_path, system_text(second='name = "c"\nperiod = { value = 72.0, unit = "h s2/s/s" }'))
    result = cli.run("check", path)
    assert _warned(result, path, 1) == ["planets[1] (c).period.unit: astropy: 'h s2/s/s' contains multiple "
                                        "slashes, which is discouraged by the FITS standard"]
    assert result.stdout == "valid, with 1 warning\n"   # none of the derivation, so nothing said of estimates


# -- not valid -----------------------------------------------------------------------------------

def test_a_bad_period_of_the_second_planet_names_it(cli, tmp_path):
    path = _file(tmp_path, system_text(second='name = "c"\nperiod = -1.0'))
    result = cli.run("check", path)
    assert (result.returncode, result.stdout) == (EXIT_BAD_INPUT, "")
    assert result.stderr.splitlines() == [f"{path}: planets[1] (c).period: must be >= 0.001 d, not -1"]


@pytest.mark.parametrize("name_line, name_problem", [
    ('name = "c\\u202e"', "contains a bidirectional-text control (U+202E RIGHT-TO-LEFT OVERRIDE) at character 2; "
                          "names may hold only visible characters and spaces"),
    ('name = ""', "must not be empty"),
    ('name = 7', "must be a string, not an integer"),
    ("", "required key is missing"),
])
def test_a_bad_name_is_never_printed_as_the_planet_name(cli, tmp_path, name_line, name_problem):
    path = _file(tmp_path, system_text(second=f"{name_line}\nperiod = -1.0"))
    result = cli.run("check", path)
    assert (result.returncode, result.stdout) == (EXIT_BAD_INPUT, "")
    assert result.stderr.splitlines() == [f"{path}: planets[1].name: {name_problem}",
                                          f"{path}: planets[1].period: must be >= 0.001 d, not -1"]


def test_errors_come_alone_even_in_a_system_that_would_warn(cli, tmp_path):
    path = _file(tmp_path, system_text(eccentricity=0.6).replace("teff = 3100.0", "teff = -5"))
    result = cli.run("check", path)
    assert (result.returncode, result.stdout) == (EXIT_BAD_INPUT, "")
    assert result.stderr.splitlines() == [f"{path}: star.teff: must be > 0 K, not -5"]


def test_the_help_gives_every_exit_status():
    (check,) = [a.choices["check"] for a in build_parser()._actions if getattr(a, "choices", None)
                and "check" in a.choices]
    text = " ".join(check.format_help().split())
    assert "Exit statuses: 0 and 'ok' when the file is valid and nothing is doubtful; 3 when it is valid but has " \
           "warnings" in text
    assert "2 when it is not valid" in text
