"""Names show as themselves: no terminal controls, no invisible or reordering characters, no look-alikes.

The loader refuses such names with a message naming the field; the Python
API refuses them when a system is built or its planet list set; and whatever
reaches the terminal is escaped, so that a name can neither drive the
terminal nor forge a table row.
"""

from __future__ import annotations

import unicodedata

import pytest

from orbitdeck.dashboard.text_tables import document_text, render, terminal_safe
from orbitdeck.models import Planet, Star, System, SystemFileError, derive, loads_system
from orbitdeck.models.files.names import display_key, name_problem

BASE = """format = "orbitdeck-system/1"
[system]
name = {system}
[star]
name = {star}
mass = 0.2
radius = 0.2
teff = 3000
[[planets]]
name = {first}
period = 2.0
radius = 1.0
[[planets]]
name = {second}
period = 3.1
radius = 1.0
"""

#: characters that may not appear in a name, with the kind the message gives (code points named by Unicode)
REFUSED = {
    "\x1b": "a control character",            # ESC: starts terminal escape sequences
    "\x00": "a control character",            # NUL
    "\n": "a control character",              # would forge a new table row
    "\x9b": "a control character",            # C1 control sequence introducer
    "\u202e": "a bidirectional-text control",  # RIGHT-TO-LEFT OVERRIDE
    "\u2066": "a bidirectional-text control",  # LEFT-TO-RIGHT ISOLATE
    "\u200f": "a bidirectional-text control",  # RIGHT-TO-LEFT MARK
    "\u200b": "an invisible character",       # ZERO WIDTH SPACE
    "\u2060": "an invisible character",       # WORD JOINER
    "\u00ad": "an invisible character",       # SOFT HYPHEN
    "\ufeff": "an invisible character",       # ZERO WIDTH NO-BREAK SPACE
    "\u3164": "an invisible character",       # HANGUL FILLER (a letter that shows as nothing)
    "\ufe0f": "an invisible character",       # VARIATION SELECTOR-16
    "\U000e0041": "an invisible character",   # TAG LATIN CAPITAL LETTER A
    "\u2028": "a line separator",
    "\ue000": "a private-use character",
}


def document(system="\"S\"", star="\"T\"", first="\"b\"", second="\"c\""):
    return BASE.format(system=system, star=star, first=first, second=second)


def toml_string(text: str) -> str:
    """A TOML basic string of ``text``, every character outside printable ASCII as a \\u or \\U escape."""
    def escaped(char):
        code = ord(char)
        if 0x20 <= code < 0x7F and char not in '"\\':
            return char
        return f"\\u{code:04X}" if code <= 0xFFFF else f"\\U{code:08X}"
    return '"' + "".join(map(escaped, text)) + '"'


def refusal(text: str):
    with pytest.raises(SystemFileError) as caught:
        loads_system(text, "names.toml")
    return [(p.field, p.reason) for p in caught.value.problems]


@pytest.mark.parametrize("char,kind", REFUSED.items(), ids=[f"U+{ord(c):04X}" for c in REFUSED])
@pytest.mark.parametrize("field", ["system.name", "star.name", "planets[1].name"])
def test_a_name_with_a_character_that_does_not_show_as_itself_is_refused(char, kind, field):
    name = toml_string(f"c{char}x")
    text = {"system.name": document(system=name), "star.name": document(star=name),
            "planets[1].name": document(second=name)}[field]
    ((where, reason),) = refusal(text)
    assert where == field
    assert reason.startswith(f"contains {kind} (U+{ord(char):04X}")
    assert "at character 2" in reason and "visible characters" in reason


def test_the_message_gives_the_unicode_name():
    ((_, reason),) = refusal(document(second=toml_string("b\u202e")))
    assert "U+202E RIGHT-TO-LEFT OVERRIDE" in reason


@pytest.mark.parametrize("first,second", [("b", "B"), ("b", "\uff42"), ("b", " b"), ("b c", "b  c"),
                                          ("\u00c5", "A\u030a"), ("\u2167", "VIII")],
                         ids=["case", "full-width", "leading-space", "inner-spaces", "composed", "roman-numeral"])
def test_planet_names_that_look_the_same_are_refused(first, second):
    problems = refusal(document(first=toml_string(first), second=toml_string(second)))
    ((where, reason),) = problems
    assert where == "planets[1].name" and reason.startswith("duplicate planet name")
    assert "planets[0]" in reason and "looks the same" in reason


def test_names_that_only_resemble_each_other_stay_apart():
    # different letters stay different names even where fonts draw them alike (not a compatibility mapping)
    system = loads_system(document(first=toml_string("b"), second=toml_string("\u0432")), "names.toml")
    assert system.planet_names == ["b", "\u0432"]
    assert name_problem("Kepler-90 b \u00e9\u0301 \u4e00 \U0001f30d") is None  # accents, CJK, emoji are fine


def test_display_key_is_nfkc_casefold():
    # Unicode's NFKC_Casefold as the reference: normalisation, case folding, normalisation again
    for text in ["Stra\u00dfe", "\ufb01", "\u2167", "A\u030a", "\u212b"]:
        expected = unicodedata.normalize("NFKC", unicodedata.normalize("NFKC", text).casefold())
        assert display_key(text) == expected
    assert display_key("Stra\u00dfe") == display_key("STRASSE")


def test_the_api_refuses_look_alikes_invisible_names_and_too_many_planets():
    from orbitdeck.models.files.system import MAX_PLANETS

    with pytest.raises(ValueError, match="look the same"):
        System(planets=[Planet(name="b", period=2.0), Planet(name="B", period=3.0)])
    with pytest.raises(ValueError, match="invisible character"):
        System(planets=[Planet(name="b\u200b", period=2.0)])
    with pytest.raises(ValueError, match="control character"):
        System(name="x\x1b[2J", planets=[Planet(name="b", period=2.0)])
    with pytest.raises(ValueError, match="bidirectional"):
        System(star=Star(name="\u202eS"), planets=[Planet(name="b", period=2.0)])
    system = System(planets=[Planet(name="b", period=2.0)])
    with pytest.raises(ValueError, match="already exists"):
        system.add_planet(Planet(name="\uff42", period=5.0))
    many = [Planet(name=f"p{i}", period=1.0 + i) for i in range(MAX_PLANETS + 1)]
    with pytest.raises(ValueError, match=f"at most {MAX_PLANETS} planets, not {MAX_PLANETS + 1}"):
        System(planets=many)
    full = System(planets=many[:MAX_PLANETS])
    with pytest.raises(ValueError, match=f"at most {MAX_PLANETS}"):
        full.add_planet(many[-1])
    assert len(full.planets) == MAX_PLANETS


# -- the terminal ----------------------------------------------------------------------------------

def test_terminal_safe_escapes_what_a_terminal_would_act_on():
    assert terminal_safe("b\x1b]0;owned\x07\x1b[2J") == "b\\x1b]0;owned\\x07\\x1b[2J"
    assert terminal_safe("b\u202ec\u200bd") == "b\\u202ec\\u200bd"
    assert terminal_safe("one\ntwo") == "one\ntwo"
    assert terminal_safe("one\ntwo", keep="") == "one\\ntwo"
    assert terminal_safe("Kepler \u00e9 \u4e00") == "Kepler \u00e9 \u4e00"


def test_a_name_never_forges_a_row_or_drives_the_terminal():
    # a document from elsewhere (an older file, the API) with names no loader would take
    system = System(name="ok", planets=[Planet(name="b", period=2.0), Planet(name="c", period=3.0)])
    doc = derive(system).to_dict()
    doc["system"]["name"] = "\x1b]0;owned\x07\x1b[2J"
    doc["planets"][0]["name"] = "b\nforged  9.9  9.9"
    doc["warnings"] = ["planet \x1b[31mred\x1b[0m"]
    text = document_text(doc)
    assert "\x1b" not in text and "\x07" not in text
    assert not any(line.startswith("forged") for line in text.splitlines())
    assert "b\\nforged" in text
    assert render(["a"], [["x\ny"]]).splitlines()[-1] == "x\\ny"


def test_the_command_line_escapes_paths_and_refuses_such_names(cli, tmp_path):
    bad = tmp_path / "names.toml"
    bad.write_text(document(second=toml_string("c\x1b[2J")))
    result = cli.run("table", bad)
    assert result.returncode == 2 and "\x1b" not in result.stderr
    assert result.stderr.splitlines() == [f"{bad}: planets[1].name: contains a control character (U+001B) at "
                                          "character 2; names may hold only visible characters and spaces"]
    missing = tmp_path / "gone\x1b[2J.toml"
    result = cli.run("check", missing)
    assert result.returncode == 2 and "\x1b" not in result.stderr and "gone\\x1b[2J.toml" in result.stderr
