"""The free eccentricity Z_free of the TTV amplitudes, an assumption of the system file.

``[assumptions] free_eccentricity = { amplitude = .., angle = .. }`` (angle in
degrees, both optional, default 0): read, checked with the field named,
written back only when set, and shown in the derived document. The bad-file
corpus (tests/data/bad/free_eccentricity_*.toml) runs the same refusals
through the command line.
"""

from __future__ import annotations

import json

import pytest

from orbitdeck.demo_systems import demo_path
from orbitdeck.models import SystemFileError, derive, dumps_system, load_system, loads_system

BASE = demo_path("amber_pair").read_text(encoding="utf-8")


def with_assumption(line: str) -> str:
    assert "[assumptions]" in BASE
    return BASE.replace("[assumptions]", f"[assumptions]\n{line}", 1)


def test_the_assumption_is_read_and_defaults_to_zero():
    assert load_system(demo_path("amber_pair")).assumptions.free_eccentricity_amplitude == 0.0
    system = loads_system(with_assumption("free_eccentricity = { amplitude = 0.012, angle = -40.0 }"))
    assert system.assumptions.free_eccentricity_amplitude == 0.012
    assert system.assumptions.free_eccentricity_angle == -40.0
    only_amplitude = loads_system(with_assumption("free_eccentricity = { amplitude = 0.02 }"))
    assert only_amplitude.assumptions.free_eccentricity_angle == 0.0


def test_it_is_written_back_only_when_set():
    assert "free_eccentricity" not in dumps_system(load_system(demo_path("amber_pair")))
    system = loads_system(with_assumption("free_eccentricity = { amplitude = 0.012, angle = -40.0 }"))
    again = loads_system(dumps_system(system))
    assert (again.assumptions.free_eccentricity_amplitude, again.assumptions.free_eccentricity_angle) == (0.012, -40.0)


def test_it_is_shown_in_the_document():
    system = loads_system(with_assumption("free_eccentricity = { amplitude = 0.012, angle = -40.0 }"))
    doc = json.loads(json.dumps(derive(system).to_dict()))
    assert doc["system"]["free_eccentricity"] == {"amplitude": 0.012, "angle": -40.0}


@pytest.mark.parametrize("line, field, reason", [
    ("free_eccentricity = { amplitude = -0.01 }", "assumptions.free_eccentricity.amplitude", "must be >= 0"),
    ("free_eccentricity = { amplitude = 1.0 }", "assumptions.free_eccentricity.amplitude", "must be < 1"),
    ('free_eccentricity = { amplitude = 0.01, angle = "north" }', "assumptions.free_eccentricity.angle",
     "must be a number"),
    ("free_eccentricity = { angle = nan }", "assumptions.free_eccentricity.angle", "must be finite"),
    ("free_eccentricity = { angle = 400.0 }", "assumptions.free_eccentricity.angle", "must be <= 360"),
    ("free_eccentricity = { amplitude = true }", "assumptions.free_eccentricity.amplitude", "must be a number"),
    ("free_eccentricity = { e = 0.01 }", "assumptions.free_eccentricity.e", "unknown key"),
    ("free_eccentricity = [0.01, 30.0]", "assumptions.free_eccentricity", "must be a table"),
])
def test_bad_values_are_refused_with_the_field_named(line, field, reason):
    with pytest.raises(SystemFileError) as caught:
        loads_system(with_assumption(line), source="bad.toml")
    (problem,) = caught.value.problems
    assert problem.file == "bad.toml" and problem.field == field and reason in problem.reason
