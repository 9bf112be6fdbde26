"""System files: the demos load, files round-trip losslessly, units convert, errors are complete."""

from __future__ import annotations

import dataclasses
import math
import tomllib

import astropy.units as u
from astropy.coordinates import Angle
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from orbitdeck.demo_systems import demo_names, demo_path
from orbitdeck.models import (Assumptions, Planet, Star, System, SystemFileError, Uncertainty, derive, dumps_system,
                              load_system, loads_system, save_system)
from orbitdeck.models.files.system_file import FORMAT, Problem, system_from_document, system_to_document
from orbitdeck.models.files.names import display_key
from orbitdeck.models.files.system import PERIOD_BOUNDS, TIME_BOUNDS

import drawn_names

DEMOS = demo_names()


def _body(obj, fields) -> dict:
    return {**{f: getattr(obj, f) for f in fields}, "uncertainties": dict(obj.uncertainties),
            "refs": dict(obj.refs)}


def snapshot(system: System) -> dict:
    """Every input of ``system`` as plain values (planets in the system's order)."""
    return {
        "name": system.name, "notes": system.notes, "epoch": system.epoch,
        "assumptions": _body(system.assumptions, ["bond_albedo", "heat_redistribution", "free_eccentricity_amplitude",
                                                  "free_eccentricity_angle"]),
        "star": _body(system.star, ["name", *Star.UNITS]),
        "planets": [_body(p, ["name", *Planet.UNITS]) for p in system.planets],
    }


# -- the bundled demos ---------------------------------------------------------------------------

def test_there_are_demos():
    assert len(DEMOS) >= 3
    assert all(demo_path(n).is_file() for n in DEMOS)


@pytest.mark.parametrize("name", DEMOS)
def test_demo_loads_with_the_values_written_in_it(name):
    system = load_system(demo_path(name))
    raw = tomllib.loads(demo_path(name).read_text(encoding="utf-8"))  # the standard parser as the reference
    assert raw["format"] == FORMAT
    assert system.name == raw["system"]["name"]
    assert system.planet_names == [p["name"] for p in sorted(raw["planets"], key=lambda p: _value(p["period"]))]
    periods = [p.period for p in system.planets]
    assert periods == sorted(periods) and len(set(system.planet_names)) == len(periods)
    pairs = [(system.star, raw["star"])] + [(system.planet(p["name"]), p) for p in raw["planets"]]
    pairs.append((system.assumptions, raw.get("assumptions", {})))
    for body, table in pairs:
        for key, written in table.items():
            if key in ("name", "heat_redistribution"):
                assert getattr(body, key) == written
                continue
            if key in ("ra", "dec") and isinstance(written, str):
                # sexagesimal text, read independently by astropy's own angle parser
                angle = Angle(written, unit=u.hourangle if key == "ra" else u.deg)
                assert getattr(body, key) == pytest.approx(angle.deg, abs=1e-10), key
                continue
            assert getattr(body, key) == _value(written), key
            spread = body.uncertainty(key)
            if isinstance(written, dict) and "sigma" in written:
                assert spread == Uncertainty(written["sigma"], written["sigma"], True)
            elif isinstance(written, dict) and "plus" in written:
                assert spread == Uncertainty(written["plus"], written["minus"], False)
            else:
                assert spread is None
            assert body.refs.get(key) == (written.get("ref") if isinstance(written, dict) else None)


def _value(written):
    return float(written["value"] if isinstance(written, dict) else written)


# -- round trips ---------------------------------------------------------------------------------

@pytest.mark.parametrize("name", DEMOS)
def test_demo_round_trip_is_lossless(name):
    first = load_system(demo_path(name))
    text = dumps_system(first)
    second = loads_system(text)
    assert snapshot(second) == snapshot(first)
    assert dumps_system(second) == text
    assert derive(second).to_dict() == derive(first).to_dict()
    assert derive(second, samples=64, seed=11).to_dict() == derive(first, samples=64, seed=11).to_dict()


def test_round_trip_through_a_saved_file(tmp_path):
    first = load_system(demo_path(DEMOS[0]))
    save_system(first, tmp_path / "copy.toml")
    assert snapshot(load_system(tmp_path / "copy.toml")) == snapshot(first)


def test_planets_written_out_of_order_are_kept_in_period_order():
    text = dumps_system(load_system(demo_path("ossery_loom")))
    doc = tomllib.loads(text)
    doc["planets"].reverse()
    reordered = system_from_document(doc)
    assert [p.period for p in reordered.planets] == sorted(p.period for p in reordered.planets)
    assert [p["name"] for p in tomllib.loads(dumps_system(reordered))["planets"]] == reordered.planet_names


names = drawn_names.names(max_size=12)
times = st.floats(*TIME_BOUNDS)
free_text = st.text(max_size=40)
spreads = st.one_of(
    st.none(),
    st.floats(0, 1e6).map(Uncertainty.from_sigma),
    st.tuples(st.floats(0, 1e6), st.floats(0, 1e6)).map(lambda pm: Uncertainty(*pm)),
)


def measured(strategy):
    """(value, uncertainty or None, ref or None)."""
    return st.tuples(strategy, spreads, st.none() | free_text)


def positive(high):
    return st.floats(0, high, exclude_min=True)


def _build(cls, fields: dict, **plain):
    values, uncertainties, refs = dict(plain), {}, {}
    for key, item in fields.items():
        if item is None:
            continue
        value, spread, ref = item
        values[key] = value
        if spread is not None:
            uncertainties[key] = spread
        if ref is not None:
            refs[key] = ref
    return cls(**values, uncertainties=uncertainties, refs=refs)


@st.composite
def planets(draw, name):
    fields = {
        "period": draw(measured(st.floats(*PERIOD_BOUNDS))),
        "radius": draw(measured(positive(1000.0))),
        "mass": draw(st.none() | measured(positive(1e5))),
        "eccentricity": draw(measured(st.floats(0, 1, exclude_max=True))),
        "inclination": draw(measured(st.floats(0, 180))),
        "omega": draw(measured(st.floats(-360, 360))),
        "transit_time": draw(st.none() | measured(times)),
    }
    return _build(Planet, fields, name=name)


@st.composite
def systems(draw):
    star = _build(Star, {
        "mass": draw(measured(st.floats(1e-3, 300, exclude_min=True))),
        "radius": draw(measured(st.floats(1e-3, 2000, exclude_min=True))),
        "teff": draw(measured(st.floats(500, 60000))),
        "luminosity": draw(st.none() | measured(positive(1e7))),
        "j_mag": draw(st.none() | measured(st.floats(-5, 30))),
        "k_mag": draw(st.none() | measured(st.floats(-5, 30))),
        "distance": draw(st.none() | measured(positive(1e6))),
    }, name=draw(names))
    assumptions = _build(Assumptions, {"bond_albedo": draw(measured(st.floats(0, 1, exclude_max=True)))},
                         heat_redistribution=draw(st.sampled_from(["full", "dayside", "none"])),
                         free_eccentricity_amplitude=draw(st.just(0.0) | st.floats(0, 1, exclude_max=True)),
                         free_eccentricity_angle=draw(st.just(0.0) | st.floats(-360, 360)))
    planet_names = draw(st.lists(names, min_size=1, max_size=5, unique_by=display_key))
    return System(name=draw(names), notes=draw(free_text), epoch=draw(times), star=star,
                  assumptions=assumptions, planets=[draw(planets(n)) for n in planet_names])


@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(systems())
def test_any_valid_system_round_trips(system):
    text = dumps_system(system)
    again = loads_system(text)
    assert snapshot(again) == snapshot(system)
    assert dumps_system(again) == text


# -- units ---------------------------------------------------------------------------------------

STAR_LINES = "mass = 0.5\nradius = 0.5\nteff = 3500"
PLANET_LINES = "period = 3.0\nradius = 1.0"


def _with_units(star: str = STAR_LINES, planet: str = PLANET_LINES) -> str:
    return f"""format = "{FORMAT}"
[system]
name = "units"
[star]
name = "s"
{star}
[[planets]]
name = "b"
{planet}
"""


def _close(got, quantity, unit):
    # astropy.units as the reference for every conversion (IAU 2015 nominal values)
    return math.isclose(got, quantity.to_value(unit), rel_tol=1e-12)


def test_planet_units_convert_to_the_default_ones():
    system = loads_system(_with_units(planet="""
period = { value = 51.216, plus = 0.0024, minus = 0.0012, unit = "h", ref = "invented" }
radius = { value = 0.25, sigma = 0.01, unit = "Rjup" }
mass = { value = 0.003, unit = "Mjup" }
inclination = { value = 1.56, unit = "rad" }
transit_time = { value = 212630443200.0, unit = "s" }
"""))
    b = system.planet("b")
    assert _close(b.period, 51.216 * u.h, u.d) and _close(b.period, 2.134 * u.d, u.d)
    spread = b.uncertainty("period")
    assert _close(spread.plus, 0.0024 * u.h, u.d) and _close(spread.minus, 0.0012 * u.h, u.d)
    assert not spread.symmetric and b.refs["period"] == "invented"
    assert _close(b.radius, 0.25 * u.Rjup, u.Rearth)
    assert b.uncertainty("radius").symmetric and _close(b.uncertainty("radius").plus, 0.01 * u.Rjup, u.Rearth)
    assert _close(b.mass, 0.003 * u.Mjup, u.Mearth)
    assert _close(b.inclination, 1.56 * u.rad, u.deg)
    assert _close(b.transit_time, 212630443200.0 * u.s, u.d)
    # written back in the default units, it reads back the same
    text = dumps_system(system)
    assert "unit =" not in text
    assert snapshot(loads_system(text)) == snapshot(system)


def test_star_units_convert_to_the_default_ones():
    star = loads_system(_with_units(star="""
mass = { value = 2.8e29, unit = "kg" }
radius = { value = 1.2e5, unit = "km" }
teff = { value = 3.5, unit = "kK" }
luminosity = { value = 8e23, unit = "W" }
distance = { value = 50, sigma = 0.5, unit = "lyr" }
""")).star
    assert _close(star.mass, 2.8e29 * u.kg, u.Msun)
    assert _close(star.radius, 1.2e5 * u.km, u.Rsun)
    assert _close(star.teff, 3.5 * u.kK, u.K)
    assert _close(star.luminosity, 8e23 * u.W, u.Lsun)
    assert _close(star.distance, 50 * u.lyr, u.pc) and _close(star.uncertainty("distance").plus, 0.5 * u.lyr, u.pc)


def test_the_default_unit_written_out_changes_nothing():
    plain = loads_system(_with_units())
    spelled = loads_system(_with_units(planet='period = { value = 3.0, unit = "d" }\nradius = { value = 1.0, unit = "earthRad" }'))
    assert snapshot(spelled) == snapshot(plain)


def test_bounds_apply_after_conversion():
    # 200 Rjup is about 2242 Rearth, above the 1000 Rearth bound
    with pytest.raises(SystemFileError) as caught:
        loads_system(_with_units(planet='period = 3.0\nradius = { value = 200, unit = "Rjup" }'))
    (problem,) = caught.value.problems
    assert problem.field == "planets[0].radius" and "1000" in problem.reason


# -- errors --------------------------------------------------------------------------------------

MANY = f"""format = "{FORMAT}"
colour = "red"
[system]
name = "many"
epoch = "tomorrow"
[assumptions]
bond_albedo = 2
[star]
name = "s"
mass = 0.5
radius = -0.5
[[planets]]
name = "c"
period = 4.5
radius = 1.0
[[planets]]
name = "b"
period = {{ value = 2.1, unit = "kg" }}
radius = 1.0
eccentricity = 1.0
[[planets]]
name = "c"
period = 9.0
radius = {{ value = 1.0, sigma = -1.0 }}
"""
MANY_FIELDS = {
    "colour": "unknown key",
    "system.epoch": "must be a number",
    "assumptions.bond_albedo": "must be < 1",
    "star.teff": "required key is missing",
    "star.radius": "must be >",
    "planets[1].period.unit": "not convertible to d",
    "planets[1].eccentricity": "must be < 1",
    "planets[2].radius.sigma": "must be >= 0",
}


def test_every_problem_is_reported_at_once(tmp_path):
    path = tmp_path / "many.toml"
    path.write_text(MANY)
    with pytest.raises(SystemFileError) as caught:
        load_system(path)
    problems = caught.value.problems
    assert all(isinstance(p, Problem) and p.file == str(path) for p in problems)
    found = {p.field: p.reason for p in problems}
    for field, reason in MANY_FIELDS.items():
        assert reason in found.get(field, ""), (field, found)
    # the planet list is broken, so the duplicate name is not even reached; nothing else is reported
    assert set(found) == set(MANY_FIELDS)
    # one line per problem: file, field path (naming the planet, unless its name repeats an earlier one's), reason
    shown = {"planets[1].period.unit": "planets[1] (b).period.unit",
             "planets[1].eccentricity": "planets[1] (b).eccentricity"}
    assert str(caught.value).splitlines() == [f"{path}: {shown.get(p.field, p.field)}: {p.reason}" for p in problems]


def test_duplicate_names_are_reported_with_the_other_problems():
    text = MANY.replace('value = 1.0, sigma = -1.0', 'value = 1.0, sigma = 1.0')
    with pytest.raises(SystemFileError) as caught:
        loads_system(text, "mem")
    fields = [p.field for p in caught.value.problems]
    assert "planets[2].name" in fields and "planets[1].eccentricity" in fields
    (duplicate,) = [p for p in caught.value.problems if p.field == "planets[2].name"]
    assert "'c'" in duplicate.reason and "planets[0]" in duplicate.reason


def _two_planets(second: str) -> str:
    return (f'format = "{FORMAT}"\n[system]\nname = "two"\n[star]\nname = "s"\n{STAR_LINES}\n'
            f'[[planets]]\nname = "b"\n{PLANET_LINES}\n[[planets]]\n{second}\n')


@pytest.mark.parametrize("name_line, shown", [
    ('name = "c"', "planets[1] (c)"),
    ('name = "Kepler-90 c (inner)"', "planets[1] (Kepler-90 c (inner))"),
    # no valid name: the index alone, never an empty or broken name
    ("", "planets[1]"), ('name = ""', "planets[1]"), ('name = "  "', "planets[1]"), ("name = 3", "planets[1]"),
    ('name = "c\\u202e"', "planets[1]"), ('name = "B"', "planets[1]"),
])
def test_a_planet_field_is_shown_with_the_planet_name(name_line, shown):
    with pytest.raises(SystemFileError) as caught:
        loads_system(_two_planets(f'{name_line}\nperiod = 0.0\nradius = {{ value = 1.0, unit = "kg" }}'), "two.toml")
    lines = str(caught.value).splitlines()
    assert f"two.toml: {shown}.period: must be >= 0.001 d, not 0" in lines
    assert f"two.toml: {shown}.radius.unit: unit 'kg' is not convertible to Rearth (length)" in lines
    assert all(line.startswith(("two.toml: planets[1].name: ", f"two.toml: {shown}.")) for line in lines), lines
    assert all(p.field.startswith("planets[1].") for p in caught.value.problems)   # the paths stay plain


def test_a_duplicate_name_is_not_shown_as_the_planet_name():
    # with its other fields good the duplicate is found, and no field of the planet takes the name
    with pytest.raises(SystemFileError) as caught:
        loads_system(_two_planets('name = "B"\nperiod = 4.0\nradius = 1.0\nmass = { value = 1.0, ref = 3 }'),
                     "two.toml")
    assert str(caught.value).splitlines() == ["two.toml: planets[1].mass.ref: must be a string, not an integer"]
    with pytest.raises(SystemFileError) as caught:
        loads_system(_two_planets('name = "B"\nperiod = 4.0\nradius = 1.0'), "two.toml")
    assert str(caught.value).splitlines() == ["two.toml: planets[1].name: duplicate planet name 'B' (also planets[0], "
                                              "whose name 'b' looks the same)"]


def test_a_note_on_a_planet_field_names_the_planet():
    notes = []
    loads_system(_two_planets('name = "c"\nperiod = { value = 96.0, unit = "h s2/s/s" }\nradius = 1.0'), "two.toml",
                 notes)
    assert [str(n) for n in notes] == ["two.toml: planets[1] (c).period.unit: astropy: 'h s2/s/s' contains multiple "
                                       "slashes, which is discouraged by the FITS standard"]


def test_problem_structure():
    with pytest.raises(SystemFileError) as caught:
        loads_system(b"", "nothing.toml")
    error = caught.value
    assert isinstance(error, ValueError)
    assert isinstance(error.problems, list) and len(error.problems) == 1
    (problem,) = error.problems
    assert dataclasses.astuple(problem) == ("nothing.toml", "", "is empty", None)
    assert str(problem) == "nothing.toml: is empty" == str(error)
    with pytest.raises(dataclasses.FrozenInstanceError):
        problem.reason = "changed"
    assert str(Problem("f", "star.teff", "why")) == "f: star.teff: why"
    assert str(Problem("f", "planets[1].period.unit", "why", planet="c")) == "f: planets[1] (c).period.unit: why"
    assert str(Problem("f", "planets[1].period", "why")) == "f: planets[1].period: why"
    assert str(Problem("f", "planets[1]", "why", planet="c")) == "f: planets[1] (c): why"
    # a name goes only beside a planet's index, whatever its digits; other paths stay as they are
    assert str(Problem("f", "planets[10].period", "why", planet="k")) == "f: planets[10] (k).period: why"
    assert str(Problem("f", "sites[0].latitude", "why", planet="c")) == "f: sites[0].latitude: why"


def test_unreadable_path_is_a_file_error(tmp_path):
    for target, reason in ((tmp_path / "absent.toml", "No such file"), (tmp_path, "Is a directory")):
        with pytest.raises(SystemFileError) as caught:
            load_system(target)
        (problem,) = caught.value.problems
        assert problem.file == str(target) and problem.field == "" and reason in problem.reason


def test_document_that_is_not_a_table():
    for doc in ([], "text", 3, None):
        with pytest.raises(SystemFileError) as caught:
            system_from_document(doc, "doc")
        assert [p.field for p in caught.value.problems] == [""]
        assert "must be a table" in caught.value.problems[0].reason


def test_document_round_trip_of_the_plain_structure():
    system = load_system(demo_path("skew_trio"))
    doc = system_to_document(system)
    assert doc["format"] == FORMAT
    assert snapshot(system_from_document(doc)) == snapshot(system)
