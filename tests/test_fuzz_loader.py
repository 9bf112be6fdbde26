"""Fuzzing the loader: whatever it is fed, it returns a System or raises SystemFileError.

Inputs: random bytes, random TOML documents, and near-valid documents made by
mutating a demo (keys dropped or renamed, types changed, NaN and infinities
written as TOML text, wrong or odd units). A document that is accepted must
also be valid: written back out, it loads again to the same inputs.

Integers stay within the 64 bits TOML allows, and values given with a unit stay
below 1e250 so that no unit factor overflows them; the loader's handling of
values beyond those ranges is pinned by corpus members (huge_integer.toml,
overlong_integer.toml, overflow_after_unit.toml, sigma_overflow_after_unit.toml,
log_unit_magnitude.toml in tests/data/bad).
"""

from __future__ import annotations

import copy
import math
import re
import tomllib

import tomli_w
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from orbitdeck.demo_systems import demo_names, demo_path
from orbitdeck.models import Planet, Star, System, SystemFileError, dumps_system, loads_system
from orbitdeck.models.files.system_file import system_from_document



FUZZ = settings(max_examples=250, deadline=None, suppress_health_check=[HealthCheck.too_slow],
                report_multiple_bugs=False)
DEMO_TEXTS = {n: demo_path(n).read_text(encoding="utf-8") for n in demo_names()}
DEMO_DOCS = {n: tomllib.loads(t) for n, t in DEMO_TEXTS.items()}
#: key names the format knows, so random documents often hit real fields
KNOWN_KEYS = sorted({"format", "system", "assumptions", "star", "planets", "name", "notes", "epoch",
                     "bond_albedo", "heat_redistribution", "value", "sigma", "plus", "minus", "unit", "ref",
                     *Star.UNITS, *Planet.UNITS})
UNITS = ["", "d", "h", "yr", "s", "Rjup", "Rearth", "km", "AU", "Mjup", "Mearth", "kg", "Msun", "Rsun", "K",
         "deg_C", "deg", "rad", "%", "mag", "pc", "lyr", "W", "Lsun", "m / s", "1 / d", "furlong", "xyzzy",
         "m**2", "2 d", "0.5 h"]

int64 = st.integers(-(2**63), 2**63 - 1)
scalars = st.one_of(
    st.booleans(), int64, st.floats(), st.text(max_size=20), st.sampled_from(UNITS),
    st.sampled_from(["orbitdeck-system/1", "full", "dayside", "none", "b"]),
)
toml_values = st.recursive(
    scalars,
    lambda inner: st.lists(inner, max_size=4)
    | st.dictionaries(st.sampled_from(KNOWN_KEYS) | st.text(min_size=1, max_size=8), inner, max_size=5),
    max_leaves=25,
)


def outcome(data):
    """Load ``data``; a System or the SystemFileError (anything else propagates and fails the test)."""
    try:
        result = loads_system(data, "fuzz")
    except SystemFileError as error:
        assert error.problems and all(p.file == "fuzz" and p.reason for p in error.problems)
        return error
    assert isinstance(result, System)
    # an accepted document is valid: written back it loads again, identically
    text = dumps_system(result)
    assert dumps_system(loads_system(text)) == text
    for body in (result.star, result.assumptions, *result.planets):
        for key in body.UNITS:
            value = getattr(body, key)
            assert value is None or math.isfinite(value), key
    return result


@FUZZ
@given(st.binary(max_size=3000))
def test_random_bytes(data):
    outcome(data)


@FUZZ
@given(st.sampled_from(sorted(DEMO_TEXTS)), st.binary(max_size=200), st.integers(0, 10**6))
def test_demo_with_random_bytes_spliced_in(name, junk, where):
    data = DEMO_TEXTS[name].encode("utf-8")
    cut = where % (len(data) + 1)
    outcome(data[:cut] + junk + data[cut:])


@FUZZ
@given(st.dictionaries(st.sampled_from(KNOWN_KEYS) | st.text(max_size=8), toml_values, max_size=6))
def test_random_toml_documents(doc):
    outcome(tomli_w.dumps(doc))
    try:
        system_from_document(doc, "fuzz")
    except SystemFileError:
        pass


# -- near-valid documents ------------------------------------------------------------------------

def _paths(node, prefix=()):
    """Every path to a value inside ``node``."""
    items = node.items() if isinstance(node, dict) else enumerate(node) if isinstance(node, list) else ()
    for key, child in items:
        yield prefix + (key,)
        yield from _paths(child, prefix + (key,))


def _parent(doc, path):
    node = doc
    for key in path[:-1]:
        node = node[key]
    return node


moderate = st.floats(-1e250, 1e250, allow_nan=False)
replacement = st.one_of(
    scalars, toml_values,
    st.sampled_from([math.nan, math.inf, -math.inf, 0, -1, 0.0, -0.0, 1.0, 1e-300, 2**63 - 1]),
    st.fixed_dictionaries({"value": moderate}, optional={
        "unit": st.sampled_from(UNITS) | st.text(max_size=8), "sigma": moderate, "plus": moderate,
        "minus": moderate, "ref": scalars}),
)


@st.composite
def mutated_documents(draw):
    doc = copy.deepcopy(DEMO_DOCS[draw(st.sampled_from(sorted(DEMO_DOCS)))])
    for _ in range(draw(st.integers(1, 4))):
        paths = list(_paths(doc))
        if not paths:
            break
        path = draw(st.sampled_from(paths))
        parent, key = _parent(doc, path), path[-1]
        action = draw(st.sampled_from(["drop", "replace", "rename", "add", "duplicate"]))
        if action == "drop":
            del parent[key]
        elif action == "replace":
            parent[key] = draw(replacement)
        elif action == "rename" and isinstance(parent, dict):
            parent[draw(st.sampled_from(KNOWN_KEYS) | st.text(min_size=1, max_size=8))] = parent.pop(key)
        elif action == "add" and isinstance(parent, dict):
            parent[draw(st.sampled_from(KNOWN_KEYS) | st.text(min_size=1, max_size=8))] = draw(replacement)
        elif action == "duplicate" and isinstance(parent, list):
            parent.append(copy.deepcopy(parent[key]))
    return doc


@FUZZ
@given(mutated_documents())
def test_mutated_demo_documents(doc):
    outcome(tomli_w.dumps(doc))


NUMBER = re.compile(r"(?<=[=,\[] )-?\d[\d_.eE+-]*")
LITERALS = ["nan", "inf", "-inf", "+nan", "1e999", "-1e999", "0", "-0.0", "true", '"7"', "[]", "{}",
            "0x1F", "1979-05-27", "9223372036854775807", "1e-320"]


@FUZZ
@given(st.sampled_from(sorted(DEMO_TEXTS)), st.data())
def test_demo_text_with_literals_swapped(name, data):
    text = DEMO_TEXTS[name]
    spots = list(NUMBER.finditer(text))
    for _ in range(data.draw(st.integers(1, 3))):
        match = spots[data.draw(st.integers(0, len(spots) - 1))]
        literal = data.draw(st.sampled_from(LITERALS))
        text = text[:match.start()] + literal + text[match.end():]
        spots = list(NUMBER.finditer(text))
    lines = text.splitlines(keepends=True)
    if data.draw(st.booleans()):
        del lines[data.draw(st.integers(0, len(lines) - 1))]
    outcome("".join(lines))
