"""What every export says about where its numbers came from.

The provenance of a derivation names the orbitdeck version, the input (its
name and the SHA-256 of the bytes read; for a state edited after reading,
also the SHA-256 of its system text), every modelling assumption in
force (read from the :class:`~orbitdeck.models.files.system.Assumptions` object's
parameters, so an added assumption appears without further code), the
Monte Carlo draws and seed, and the published methods the numbers used.
It holds no time of day: the same input gives byte-identical exports.
"""

from __future__ import annotations

import hashlib
import math

from .system import System
from ..engine.methods import methods_used

#: what every export says of its numbers
CAUTION = "Model estimates under the stated assumptions, not measurements."
#: parameters of a body that are bookkeeping, not assumptions
_BOOKKEEPING = ("name", "uncertainties", "refs")


def _plain(value):
    if isinstance(value, float) and not math.isfinite(value):
        return None
    return value


def assumptions_of(system: System) -> dict:
    """Every assumption in force, by name: each parameter of ``system.assumptions`` (with its
    uncertainty and citation when it has them) and each plain-valued property (such as the
    redistribution factor f)."""
    assumptions = system.assumptions
    found = {}
    for name in assumptions.param:
        if name in _BOOKKEEPING:
            continue
        value = _plain(getattr(assumptions, name))
        spread, ref = assumptions.uncertainty(name), assumptions.refs.get(name)
        if spread is None and ref is None:
            found[name] = value
            continue
        entry = {"value": value}
        if spread is not None:
            entry.update(spread.to_file_fields())
        if ref is not None:
            entry["ref"] = ref
        found[name] = entry
    for name in sorted(dir(type(assumptions))):
        if isinstance(getattr(type(assumptions), name, None), property) and not name.startswith("_"):
            value = getattr(assumptions, name)
            if isinstance(value, (bool, int, float, str)):
                found[name] = _plain(value)
    return found


def provenance_of(system: System, derived, source_name: str, source_sha256: str,
                  edited_text: str | None = None) -> dict:
    """The provenance of ``derived`` (derived from ``system``, read from ``source_name``).

    Parameters
    ----------
    system : System
        The state derived.
    derived : Derived
        The derivation (for its draws, seed and the methods its numbers used).
    source_name, source_sha256 : str
        The input's name and the SHA-256 of the bytes read from it.
    edited_text : str, optional
        When the state was changed after it was read: its system-file text
        (whose SHA-256 is given too; snapshots embed that text).

    Returns
    -------
    dict
        Plain JSON-ready values, keys in a fixed order.
    """
    from orbitdeck import __version__

    source = {"name": source_name, "sha256": source_sha256, "edited": edited_text is not None}
    if edited_text is not None:
        source["edited_sha256"] = hashlib.sha256(edited_text.encode("utf-8")).hexdigest()
    return {
        "orbitdeck": __version__,
        "input": source,
        "assumptions": assumptions_of(system),
        "samples": int(derived.samples),
        "seed": derived.seed if derived.samples else None,
        "intervals": "16th-84th percentiles of the Monte Carlo draws" if derived.samples else None,
        "methods": list(methods_used(system, derived)),
        "caution": CAUTION,
    }


def provenance_lines(provenance: dict, sampling: bool = True) -> list[str]:
    """The provenance as short lines of text (for comments in LaTeX and BibTeX files); without
    the line on draws and seed when ``sampling`` is False."""
    source = provenance["input"]
    assumptions = ", ".join(f"{k} = {v}" for k, v in provenance["assumptions"].items())
    draws = (f"{provenance['samples']} Monte Carlo draws, seed {provenance['seed']}; "
                f"{provenance['intervals']}" if provenance["samples"] else "nominal values only (no Monte Carlo draws)")
    return [f"orbitdeck {provenance['orbitdeck']}",
            f"input: {source['name']}",
            f"input SHA-256: {source['sha256']}",
            *([f"edited after reading; SHA-256 of the edited system text: {source['edited_sha256']}"]
              if source["edited"] else []),
            f"assumptions: {assumptions}",
            *([f"uncertainties: {draws}"] if sampling else []),
            provenance["caution"]]
