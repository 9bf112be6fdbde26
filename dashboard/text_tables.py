"""Readable plain-text tables of a derived document, for the terminal.

A value with an interval is written ``value +plus -minus``, rounded by the
Particle Data Group's rule (:mod:`orbitdeck.models.files.rounding`); a value
without one, to four significant figures.

Everything printed passes through :func:`terminal_safe`, so that no name,
path or message can move the cursor, retitle or clear the terminal, or start
a line of its own; numbers never show as ``nan``, ``inf`` or a negative zero.
"""

from __future__ import annotations

import math
import re

from orbitdeck.models.engine.registry import declared
from orbitdeck.models.files.rounding import from_interval


def quantity_groups(table: str, labels) -> list[tuple[str, tuple]]:
    """(title, ((document key, heading), ...)) of each block of a table's columns, from the registry:
    the row labels, then the quantities of one group."""
    groups: dict[str, list] = {}
    for quantity in declared(table):
        if quantity.group:
            groups.setdefault(quantity.group, list(labels)).append((quantity.key, quantity.heading))
    return [(title, tuple(columns)) for title, columns in groups.items()]


def planet_groups() -> list[tuple[str, tuple]]:
    """(title, ((document key, heading), ...)) of each block of planet columns, from the registry."""
    return quantity_groups("planets", (("name", "planet"),))


def table_columns(table: str, labels) -> tuple:
    """((document key, heading), ...) of a table: its row labels, then its listed quantities."""
    return tuple(labels) + tuple((q.key, q.heading) for q in declared(table) if q.group)


PAIR_LABELS = (("inner", "inner"), ("outer", "outer"), ("nearest", "nearest"))
TRIPLE_LABELS = (("planets", "planets"),)
SKY_LABELS = (("observer", "observer"), ("body", "body"))


def terminal_safe(text: str, keep: str = "\n") -> str:
    """``text`` with every character a terminal would not show as itself written as an escape.

    Control characters (``\\x1b``, ``\\x00``, a newline not in ``keep``),
    bidirectional-text controls and invisible characters (``\\u202e``,
    ``\\u200b``) become their Python escapes, so that printed text can
    neither drive the terminal nor hide or reorder what follows it.
    """
    if text.isprintable():
        return text
    from orbitdeck.models.files.names import character_kind

    return "".join(c if c in keep or (c.isprintable() and character_kind(c) is None)
                   else c.encode("unicode_escape").decode("ascii") for c in text)


_NEGATIVE_ZERO = re.compile(r"(?<![\w.])-(?=0(?:\.0*)?(?![0-9.]))")


def unsigned_zeros(text: str) -> str:
    """``text`` with the sign taken off numbers written as zero ("-0.00" -> "0.00"; "-0.01" stays)."""
    return _NEGATIVE_ZERO.sub("", text)


def format_number(value) -> str:
    """Four significant figures, plain or scientific as the size asks; "-" for a missing or infinite value."""
    if value is None:
        return "-"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int):
        return str(value)
    if not math.isfinite(value):
        return "-"
    if value == 0:
        return "0"  # never "-0"
    if abs(value) >= 1e5 or abs(value) < 1e-3:
        return f"{value:.3e}"
    return f"{value:.4g}"


def format_cell(row: dict, key: str) -> str:
    value = row.get(key)
    if key == "planets":
        return "-".join(value)
    if isinstance(value, str):
        return value
    text = format_number(value)
    share = row.get("fraction", {}).get(key)
    if isinstance(value, bool) and share is not None:
        text += f" ({100 * share:.0f}% of draws)"
    interval = row.get("interval", {}).get(key)
    if interval and value is not None and None not in interval and isinstance(value, float):
        rounded = from_interval(value, *interval)
        if rounded.plus is not None:   # rounded with its interval by the PDG rule
            text = rounded.text()
    if key == "mass_mearth" and row.get("mass_estimated"):
        text += " (est.)"
    return text


def render(headings: list[str], rows: list[list[str]]) -> str:
    """An aligned table; every cell is made terminal-safe (a cell never spans two lines)."""
    headings = [terminal_safe(h, keep="") for h in headings]
    rows = [[terminal_safe(c, keep="") for c in r] for r in rows]
    widths = [max(len(h), *(len(r[i]) for r in rows)) if rows else len(h) for i, h in enumerate(headings)]
    line = lambda cells: "  ".join(c.rjust(w) if i else c.ljust(w) for i, (c, w) in enumerate(zip(cells, widths)))
    return "\n".join([line(headings), line(["-" * w for w in widths]), *(line(r) for r in rows)])


def table_block(title: str, columns, records: list[dict]) -> str:
    headings = [h for _, h in columns]
    rows = [[format_cell(r, k) for k, _ in columns] for r in records]
    return f"{title}\n{render(headings, rows) if records else '(none)'}"


def document_text(doc: dict) -> str:
    """The whole document as readable tables with units."""
    star = doc["star"]
    lines = [f"{doc['system']['name']}",
             f"star {star['name']}: M = {format_number(star['mass_msun'])} Msun, "
             f"R = {format_number(star['radius_rsun'])} Rsun, Teff = {format_number(star['teff_k'])} K, "
             f"L = {format_cell(star, 'luminosity_lsun')} Lsun"]
    if star["hz_au"]:
        lines.append("habitable zone [au]: " + ", ".join(
            f"{k.replace('_', ' ')} {format_number(v)}" for k, v in star["hz_au"].items()))
    system_values = system_line(doc["system"])
    if system_values:
        lines.append(system_values)
    if "samples" in doc:
        lines.append(f"intervals: 16th-84th percentiles of {doc['samples']} Monte Carlo samples (seed {doc['seed']}); "
                     "values and intervals rounded by the Particle Data Group's rule")
    blocks = ["\n".join(lines)]
    blocks += [table_block(title, cols, doc["planets"]) for title, cols in planet_groups()]
    blocks += [table_block(title, cols, doc["pairs"]) for title, cols in quantity_groups("pairs", PAIR_LABELS)]
    for table, title, labels in (("triples", "Three-body relations (consecutive triples)", TRIPLE_LABELS),
                                 ("skies", "Skies: largest apparent size of each body", SKY_LABELS)):
        blocks.append(table_block(title, table_columns(table, labels), doc[table]))
    notes = ["Results are model estimates under the stated assumptions "
             "(albedo, heat redistribution, mass-radius relation)."]
    if doc["pairs"]:
        notes.append(dynamics_note(doc))
    notes += [f"warning: {terminal_safe(unsigned_zeros(w), keep='')}" for w in doc["warnings"]]
    if doc.get("provenance"):
        source = doc["provenance"]["input"]
        notes.append(f"orbitdeck {doc['provenance']['orbitdeck']}; input {source['name']} "
                     f"(SHA-256 {source['sha256']})")
    blocks.append("\n".join(notes))
    return terminal_safe("\n\n".join(blocks) + "\n")


def system_line(system: dict) -> str:
    """The system's listed quantities on one line ("" when it has none)."""
    listed = [(q.key, q) for q in declared("system") if q.group]
    if not listed:
        return ""
    fields = []
    for key, quantity in listed:
        row = {key: system.get(key), "interval": system.get("interval", {}), "fraction": system.get("fraction", {})}
        unit = f" {quantity.unit_label or quantity.unit}" if quantity.unit and quantity.kind == "float" else ""
        fields.append(f"{quantity.label} = {format_cell(row, key)}{unit}")
    return "system: " + ", ".join(fields)


def dynamics_note(doc: dict) -> str:
    """What the dynamics columns assume: the free eccentricity of the TTVs, coplanar orbits, the masses."""
    free = doc["system"].get("free_eccentricity") or {}
    note = ("Dynamics: TTV amplitudes (Lithwick, Xie & Wu 2012) assume the free eccentricity "
            f"|Z_free| = {format_number(free.get('amplitude'))} at {format_number(free.get('angle'))} deg and "
            "apply near first-order commensurabilities only; AMD stability (Laskar & Petit 2017; Petit, Laskar & "
            "Boue 2017), Hill stability (Gladman 1993) and resonance overlap (Deck, Payne & Holman 2013) take "
            "mutual inclinations as zero.")
    estimated = {row["name"] for row in doc["planets"] if row.get("mass_estimated")}
    pairs = [f"{row['inner']}-{row['outer']}" for row in doc["pairs"] if {row["inner"], row["outer"]} & estimated]
    if pairs:
        note += f" Pairs {', '.join(pairs)} rest on masses estimated from radii."
    return note
