"""Names people read (of the system, the star and the planets): what they may hold, and when two look alike.

A name is shown in terminals, tables, plots and page titles, so it may hold
only characters that show as themselves: control characters (which move the
cursor, retitle or clear a terminal, or forge a new table row),
bidirectional-text controls (which reorder what follows them on screen),
invisible characters (format characters such as zero-width spaces, and the
other default-ignorable code points of the Unicode standard, such as the
Hangul fillers and variation selectors), line and paragraph separators,
private-use, surrogate and unassigned code points are refused.

Two names look the same when they are equal once compatibility-normalised
and case-folded (Unicode NFKC_Casefold, with runs of white space taken as one
space and none at either end): "b", "B", the full-width "ｂ" and "b " all show
as the same planet, so a system may hold only one of them.
"""

from __future__ import annotations

import unicodedata

#: default-ignorable code points (Unicode DerivedCoreProperties.txt) outside the general categories
#: refused anyway: combining grapheme joiner, Hangul and half-width fillers, Khmer inherent vowels,
#: Mongolian variation selectors, variation selectors and their supplement
_IGNORABLE_RANGES = ((0x034F, 0x034F), (0x115F, 0x1160), (0x17B4, 0x17B5), (0x180B, 0x180F),
                     (0x3164, 0x3164), (0xFE00, 0xFE0F), (0xFFA0, 0xFFA0), (0xE0100, 0xE01EF))
#: explicit bidirectional formatting characters (Unicode Standard Annex 9, table 1)
BIDI_CONTROLS = frozenset("\u061c\u200e\u200f\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069")
_KINDS = {"Cc": "a control character", "Cf": "an invisible character", "Zl": "a line separator",
          "Zp": "a paragraph separator", "Cs": "a lone surrogate", "Co": "a private-use character",
          "Cn": "an unassigned character"}


def _ignorable(code: int) -> bool:
    return any(lo <= code <= hi for lo, hi in _IGNORABLE_RANGES)


def character_kind(char: str) -> str | None:
    """Why ``char`` may not appear in a name ("a control character", ...), or None when it may."""
    if char in BIDI_CONTROLS:
        return "a bidirectional-text control"
    kind = _KINDS.get(unicodedata.category(char))
    if kind is None and _ignorable(ord(char)):
        kind = "an invisible character"
    return kind


def describe_character(char: str) -> str:
    """``U+202E RIGHT-TO-LEFT OVERRIDE``: the code point and, where Unicode has one, its name."""
    name = unicodedata.name(char, "")
    return f"U+{ord(char):04X}" + (f" {name}" if name else "")


def name_problem(text: str) -> str | None:
    """The reason ``text`` cannot be a name (its first refused character), or None when it can."""
    for position, char in enumerate(text, start=1):
        kind = character_kind(char)
        if kind is not None:
            return (f"contains {kind} ({describe_character(char)}) at character {position}; "
                    "names may hold only visible characters and spaces")
    return None


def display_key(text: str) -> str:
    """What ``text`` looks like, for comparing names: NFKC_Casefold with white space collapsed."""
    folded = unicodedata.normalize("NFKC", unicodedata.normalize("NFKC", text).casefold())
    return " ".join(folded.split())
