"""``orbitdeck transits``: outputs (text, JSON, CSV, iCalendar) and bad input, run as real child processes.

The JSON keys are the documented ones; the iCalendar file is parsed back
with ``icalendar`` (a general-purpose library from the registries); the
system file's star position and sites round-trip; every bad input exits
with status 2, names the field and prints no traceback.
"""

from __future__ import annotations

import csv
import io
import json
from datetime import timedelta, timezone

import pytest
from astropy.time import Time
from icalendar import Calendar

from cli_harness import succeeded
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import SystemFileError, dumps_system, load_system, loads_system
from orbitdeck.models.motion.forecast import forecast_transits
from orbitdeck.models.motion.sites import parse_time, star_coordinate

SITE = "--site=35.0,-105.0,2000"
RANGE = ("--start", "2026-01-01", "--end", "2026-01-21")
KEYS = {"planet", "epoch", "mid_bjd_tdb", "sigma_min", "ingress_bjd_tdb", "egress_bjd_tdb", "overlaps"}
SITE_KEYS = {"mid_utc", "altitude_deg", "sun_altitude_deg", "observable"}
HEADER = """format = "orbitdeck-system/1"
[system]
name = "sky test"
[star]
name = "S"
mass = 0.2
radius = 0.22
teff = 3200
"""
PLANET = """
[[planets]]
name = "b"
period = 2.5
radius = 1.1
transit_time = { value = 2461000.3, sigma = 0.001 }
"""


def _refused(result, *fields):
    assert result.returncode == 2, result.stdout + result.stderr
    assert "Traceback" not in result.stderr and result.stdout == ""
    for field in fields:
        assert f": {field}: " in result.stderr, result.stderr
    return result.stderr


def _file(tmp_path, text, name="system.toml"):
    path = tmp_path / name
    path.write_text(text)
    return path


def test_json_without_a_site_has_the_forecast_keys_and_matches_the_models(cli):
    rows = json.loads(succeeded(cli.run("transits", *RANGE, "--json")).stdout)
    assert rows and all(KEYS <= set(r) and not (SITE_KEYS & set(r)) for r in rows)
    system = load_system(demo_path())
    # the ISO dates become BJD_TDB with the star's light time at the geocentre (checked against astropy in
    # test_forecast_sky.py)
    coord = star_coordinate(system.star)
    start, end = (parse_time(t, coord)[0] for t in ("2026-01-01", "2026-01-21"))
    expected = forecast_transits(system, start, end)
    assert [r["mid_bjd_tdb"] for r in rows] == expected.mid.tolist()
    assert [r["sigma_min"] for r in rows] == (expected.sigma * 1440.0).tolist()
    assert [r["planet"] for r in rows] == [expected.planet_names[i] for i in expected.planet]
    assert all(r["ingress_bjd_tdb"] < r["mid_bjd_tdb"] < r["egress_bjd_tdb"] for r in rows)


def test_json_with_a_site_adds_the_sky_keys(cli):
    rows = json.loads(succeeded(cli.run("transits", *RANGE, SITE, "--json")).stdout)
    assert all((KEYS | SITE_KEYS) <= set(r) for r in rows)
    assert any(r["observable"] for r in rows) and not all(r["observable"] for r in rows)
    for r in rows:
        assert r["mid_utc"].endswith("Z") and Time(r["mid_utc"][:-1], format="isot", scale="utc")
        assert isinstance(r["observable"], bool) and isinstance(r["overlaps"], list)
        assert -90.0 <= r["altitude_deg"] <= 90.0 and -90.0 <= r["sun_altitude_deg"] <= 90.0


def test_text_output_says_these_are_model_estimates(cli):
    text = succeeded(cli.run("transits", *RANGE, SITE)).stdout
    assert "linear ephemeris" in text and "model estimates" in text
    assert "observable" in text and "Moon" in text


def test_the_calendar_parses_with_one_event_per_observable_transit(cli, tmp_path):
    rows = json.loads(succeeded(cli.run("transits", *RANGE, SITE, "--json")).stdout)
    target = tmp_path / "transits.ics"
    succeeded(cli.run("transits", *RANGE, SITE, "--ics", target))
    calendar = Calendar.from_ical(target.read_bytes())
    events = calendar.walk("VEVENT")
    observable = [r for r in rows if r["observable"]]
    assert len(events) == len(observable) > 0
    by_uid = {str(e["uid"]): e for e in events}
    assert len(by_uid) == len(events)
    for row in observable:
        event = by_uid[f"ossery-loom-{row['planet']}-{row['epoch']}@orbitdeck"]
        start, end = event.decoded("dtstart"), event.decoded("dtend")
        assert start.tzinfo is not None and start.utcoffset() == timedelta(0)
        ingress = Time(row["ingress_utc"][:-1], scale="utc").to_datetime(timezone=timezone.utc)
        egress = Time(row["egress_utc"][:-1], scale="utc").to_datetime(timezone=timezone.utc)
        # the window: one hour of baseline before ingress and after egress (to the second)
        assert abs((ingress - start) - timedelta(hours=1)) <= timedelta(seconds=1)
        assert abs((end - egress) - timedelta(hours=1)) <= timedelta(seconds=1)
        assert "model estimates" in str(event["description"])


def test_csv_holds_every_transit(cli, tmp_path):
    rows = json.loads(succeeded(cli.run("transits", *RANGE, SITE, "--json")).stdout)
    target = tmp_path / "transits.csv"
    succeeded(cli.run("transits", *RANGE, SITE, "--csv", target))
    table = list(csv.DictReader(io.StringIO(target.read_text())))
    assert len(table) == len(rows)
    assert [float(r["mid_bjd_tdb"]) for r in table] == [r["mid_bjd_tdb"] for r in rows]
    assert [r["observable"] for r in table] == [str(r["observable"]) for r in rows]


def test_a_named_site_of_the_file_is_used(cli, tmp_path):
    text = (HEADER + 'ra = "04:09:37.5"\ndec = "+12:48:20"\n' + PLANET
            + '\n[[sites]]\nname = "ridge"\nlatitude = 35.0\nlongitude = -105.0\nelevation = 2000\n')
    path = _file(tmp_path, text)
    named = json.loads(succeeded(cli.run("transits", path, *RANGE, "--site", "ridge", "--json")).stdout)
    typed = json.loads(succeeded(cli.run("transits", path, *RANGE, SITE, "--json")).stdout)
    assert named == typed and "observable" in named[0]


def test_star_position_and_sites_round_trip_through_the_file():
    text = (HEADER + 'ra = "04:09:37.5"\ndec = "-12:48:20"\npm_ra = 100.0\npm_dec = -20.0\n' + PLANET
            + '\n[[sites]]\nname = "ridge"\nlatitude = -35.5\nlongitude = 290.0\n')
    system = loads_system(text)
    # hand arithmetic: 4 h 9 m 37.5 s = 4.160416667 h = 62.40625 deg; -(12 + 48/60 + 20/3600) = -12.805556 deg
    assert system.star.ra == pytest.approx(62.40625, abs=1e-9)
    assert system.star.dec == pytest.approx(-12.8055556, abs=1e-7)
    assert system.sites[0].elevation == 0.0 and system.sites[0].longitude == 290.0
    again = loads_system(dumps_system(system))
    assert (again.star.ra, again.star.dec, again.star.pm_ra, again.star.pm_dec) == (
        system.star.ra, system.star.dec, 100.0, -20.0)
    assert again.sites == system.sites
    assert "[[sites]]" in dumps_system(system)


@pytest.mark.parametrize("extra, field", [
    ("ra = 361.0\ndec = 10.0\n", "star.ra"),
    ("ra = 10.0\ndec = -95.0\n", "star.dec"),
    ('ra = "24:00:01"\ndec = 10.0\n', "star.ra"),
    ('ra = "12:61:00"\ndec = 10.0\n', "star.ra"),
    ('ra = 10.0\ndec = "+10:30:60"\n', "star.dec"),
    ('ra = "twelve"\ndec = 10.0\n', "star.ra"),
    ("ra = 10.0\n", "star.dec"),
    ("ra = 10.0\ndec = 10.0\npm_ra = 5.0\n", "star.pm_dec"),
    ("pm_ra = 5.0\npm_dec = 5.0\n", "star.pm_ra"),
])
def test_bad_star_coordinates_name_the_field(cli, tmp_path, extra, field):
    path = _file(tmp_path, HEADER + extra + PLANET)
    with pytest.raises(SystemFileError) as error:
        load_system(path)
    assert any(p.field == field for p in error.value.problems), str(error.value)
    _refused(cli.run("transits", path, *RANGE), field)


@pytest.mark.parametrize("site, field", [
    ('name = "a"\nlatitude = 95.0\nlongitude = 0.0\n', "sites[0].latitude"),
    ('name = "a"\nlatitude = 10.0\nlongitude = 400.0\n', "sites[0].longitude"),
    ('name = "a"\nlatitude = 10.0\nlongitude = 0.0\nelevation = 99999.0\n', "sites[0].elevation"),
    ('name = "a"\nlatitude = "north"\nlongitude = 0.0\n', "sites[0].latitude"),
    ('name = "a"\nlongitude = 0.0\n', "sites[0].latitude"),
    ('name = "a"\nlatitude = 1.0\nlongitude = 0.0\nheight = 3\n', "sites[0].height"),
])
def test_bad_sites_in_the_file_name_the_field(cli, tmp_path, site, field):
    path = _file(tmp_path, HEADER + PLANET + "\n[[sites]]\n" + site)
    _refused(cli.run("check", path), field)


@pytest.mark.parametrize("argv, field, words", [
    (("--site=95,0,0",), "--site", "latitude"),
    (("--site=10,-200,0",), "--site", "longitude"),
    (("--site=a,b,c",), "--site", "three numbers"),
    (("--site", "nowhere"), "--site", "no site named 'nowhere'"),
    (("--start", "2026-02-01", "--end", "2026-01-01"), "--end", "after the start"),
    (("--start", "2026-01-01", "--end", "2031-06-01"), "--end", "5 years"),
    (("--start", "soon", "--end", "2026-01-01"), "--start", "ISO date"),
    (("--start", "61041.5", "--end", "2461100"), "--start", "Julian date"),
    (("--ics", "out.ics"), "--ics", "--site"),
    ((SITE, "--min-altitude", "95"), "--min-altitude", "between"),
])
def test_bad_command_lines_name_the_field(cli, tmp_path, argv, field, words):
    args = list(argv)
    if "--start" not in args:
        args += list(RANGE)
    message = _refused(cli.run("transits", *args, cwd=tmp_path), field)
    assert words in message


def test_planets_without_transit_time_are_named(cli, tmp_path):
    path = _file(tmp_path, HEADER + "\n[[planets]]\nname = \"b\"\nperiod = 2.5\nradius = 1.1\n")
    message = _refused(cli.run("transits", path, *RANGE), "planets[0] (b).transit_time")
    assert "has none (a mid-transit time, BJD_TDB)" in message
    # with one timed planet beside it, the forecast runs and names the missing field in a warning
    both = _file(tmp_path, HEADER + PLANET + "\n[[planets]]\nname = \"c\"\nperiod = 4.5\nradius = 1.1\n", "two.toml")
    result = succeeded(cli.run("transits", both, *RANGE))
    assert "planets[1] (c).transit_time: has none" in result.stdout


def test_a_site_without_star_coordinates_gives_the_list_without_sky_columns(cli, tmp_path):
    path = _file(tmp_path, HEADER + PLANET)
    result = succeeded(cli.run("transits", path, *RANGE, SITE, "--json"))
    rows = json.loads(result.stdout)
    assert rows and not (SITE_KEYS & set(rows[0]))
    assert "no star.ra and star.dec" in result.stderr
    _refused(cli.run("transits", path, *RANGE, SITE, "--ics", tmp_path / "x.ics"), "star.ra")


def test_times_beyond_the_bundled_tables_are_said_once_in_words(cli):
    result = succeeded(cli.run("transits", "--start", "2031-06-01", "--end", "2031-06-03", SITE, "--json"))
    assert "Warning" not in result.stderr          # no Python warning leaks from astropy or ERFA
    assert "outside the bundled IERS" in result.stderr and "leap-second list" in result.stderr
    near = succeeded(cli.run("transits", *RANGE, SITE, "--json"))
    assert "IERS" not in near.stderr
