"""The planet table for a paper, written by astropy's LaTeX and AASTeX writers.

Values with Monte Carlo intervals are written as journals print them,
``$x^{+a}_{-b}$`` (``$x \\pm a$`` when both sides agree), rounded by the
rule of :mod:`orbitdeck.models.files.rounding`; values without an interval keep
the registry's format. Each column heading gives the quantity's label and
its unit from the registry, in parentheses (in the heading itself, so that
astropy reads the table back). The provenance opens the file as ``%``
comment lines; the caption names the system and the foot says that the
numbers are model estimates under the stated assumptions.
"""

from __future__ import annotations

import io
import math
import re

import astropy.units as u
from astropy.table import Table

from .rounding import from_interval
from .provenance import CAUTION, provenance_lines
from ..engine.registry import Quantity, by_key, declared

FORMATS = {"latex": "ascii.latex", "aastex": "ascii.aastex"}
_LATEX_SPECIAL = {"\\": r"\textbackslash{}", "&": r"\&", "%": r"\%", "$": r"\$", "#": r"\#", "_": r"\_",
                  "{": r"\{", "}": r"\}", "~": r"\textasciitilde{}", "^": r"\textasciicircum{}"}
_E_NOTATION = re.compile(r"^([+-]?[0-9.]+)e([+-]?)0*([0-9]+)$")


def latex_text(text) -> str:
    """Free text made safe for LaTeX: every special character escaped, line breaks as spaces."""
    flat = " ".join(str(text).split())
    return "".join(_LATEX_SPECIAL.get(c, c) for c in flat)


def default_columns() -> list[str]:
    """Keys of the planet quantities the text tables list (the registry's grouped ones), in order."""
    return [q.key for q in declared("planets") if q.group]


def unit_latex(quantity: Quantity) -> str:
    """A quantity's unit as LaTeX ("" for none): astropy's form of its unit (the astronomical unit as
    "au", IAU 2012 Resolution B2), else its unit label (``S_earth`` as ``$S_\\oplus$``, other labels as text)."""
    if quantity.unit:
        return u.Unit(quantity.unit).to_string("latex_inline").replace("\\mathrm{AU}", "\\mathrm{au}")
    label = quantity.unit_label
    if label.endswith("_earth") and label[:-6].isalpha():
        return f"${label[:-6]}_\\oplus$"
    return latex_text(label) if label else ""


def heading(quantity: Quantity) -> str:
    """``label (unit)`` in LaTeX."""
    unit = unit_latex(quantity)
    return f"{latex_text(quantity.label)} ({unit})" if unit else latex_text(quantity.label)


def _math_number(text: str) -> str:
    """A formatted number as LaTeX math (``1.2e-05`` -> ``1.2 \\times 10^{-5}``)."""
    match = _E_NOTATION.match(text)
    if match:
        mantissa, sign, power = match.groups()
        return f"{mantissa} \\times 10^{{{'-' if sign == '-' else ''}{power}}}"
    return text


#: what an empty cell holds in each style (AASTeX has its own command)
MISSING = {"latex": "---", "aastex": "\\nodata"}


def cell(quantity: Quantity, value, interval=None, missing: str = "---") -> str:
    """One table cell in LaTeX: a rounded value with its interval, a formatted value, text, or ``missing``."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return missing
    if quantity.kind == "bool":
        return "yes" if value else "no"
    if quantity.kind in ("label", "int") or isinstance(value, str):
        return latex_text(value)
    if interval is not None and None not in interval:
        rounded = from_interval(float(value), *interval)
        if rounded.plus is not None:
            return rounded.latex()
    return f"${_math_number(format(float(value), quantity.fmt))}$"


def planet_table_for_paper(derived, columns=None, style: str = "latex") -> Table:
    """The planet table of ``derived`` as an astropy Table of LaTeX cells (see the module docstring).

    Parameters
    ----------
    derived : Derived
    columns : list of str, optional
        Document keys of planet quantities, in order; default :func:`default_columns`.
    style : str
        "latex" or "aastex" (how an empty cell is written).

    Raises
    ------
    ValueError
        For a key that is not a planet quantity (the message lists the keys there are).
    """
    quantities = by_key("planets")
    keys = list(columns) if columns else default_columns()
    unknown = [k for k in keys if k not in quantities]
    if unknown:
        raise ValueError(f"not a planet quantity: {', '.join(unknown)} (the keys are: {', '.join(quantities)})")
    intervals = derived.intervals.get("planets", {}) if derived.intervals else {}
    names = [latex_text(n) for n in derived.planets["name"]]
    table = Table()
    table["Planet"] = names
    estimated = [bool(e) for e in derived.planets["mass_estimated"]]
    for key in keys:
        quantity, values = quantities[key], derived.planets[key]
        bounds = intervals.get(key)
        cells = []
        for i, value in enumerate(values):
            interval = (float(bounds[0][i]), float(bounds[1][i])) if bounds is not None else None
            if interval is not None and not all(map(math.isfinite, interval)):
                interval = None
            text = cell(quantity, value.item() if hasattr(value, "item") else value, interval, MISSING[style])
            if key == "mass_mearth" and estimated[i]:
                text += "\\,$^{\\ast}$"   # "\\," keeps "$$" (display math) from forming
            cells.append(text)
        table[heading(quantity)] = cells
    return table


def _foot(derived, keys) -> str:
    quantities = by_key("planets")
    estimates = [quantities[k].label for k in keys if quantities[k].estimate]
    parts = [latex_text(CAUTION)]
    if estimates:
        parts.append("Model estimates: " + ", ".join(latex_text(e) for e in estimates) + ".")
    if "mass_mearth" in keys and any(derived.planets["mass_estimated"]):
        parts.append("$^{\\ast}$ Mass estimated from the radius (Chen \\& Kipping 2017), not measured.")
    if derived.samples:
        parts.append(f"Uncertainties: 16th and 84th percentiles of {derived.samples} Monte Carlo draws, "
                     "rounded by the Particle Data Group's rule.")
    return " ".join(parts)


def write_paper_table(derived, style: str = "latex", columns=None) -> str:
    """The planet table as LaTeX (``style`` "latex") or AASTeX ("aastex") text, provenance first as comments."""
    if style not in FORMATS:
        raise ValueError(f"unknown table style {style!r} (one of {', '.join(FORMATS)})")
    keys = list(columns) if columns else default_columns()
    table = planet_table_for_paper(derived, keys, style)
    caption = f"Derived parameters of {latex_text(derived.system_name)}"
    foot = _foot(derived, keys)
    out = io.StringIO()
    table.write(out, format=FORMATS[style],
                latexdict={"caption": caption, "tablefoot": f"\\tablecomments{{{foot}}}" if style == "aastex" else foot})
    comments = provenance_lines(derived.provenance) if derived.provenance else [CAUTION]
    return "".join(f"% {latex_text_comment(line)}\n" for line in comments) + out.getvalue()


def latex_text_comment(text: str) -> str:
    """Text for a ``%`` comment line: on one line (a line break would end the comment)."""
    return " ".join(str(text).split())
