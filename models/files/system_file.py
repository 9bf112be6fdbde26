"""Reading and writing system files (format ``orbitdeck-system/1``, TOML).

Loading parses the TOML with the standard library and checks every field;
nothing in a file is ever evaluated. Every problem is reported with the
file, the field path (``planets[2].eccentricity``) and the reason, all at
once, as a :class:`SystemFileError`; what is doubtful but usable (astropy's
remarks on an unusual unit string) comes back as notes naming the file and
field too. Only regular files of at most :data:`MAX_FILE_BYTES` are read,
holding at most :data:`~orbitdeck.models.files.system.MAX_PLANETS` planets.
Saving writes a temporary file beside the target and renames it over, so a
failed save never damages a file (see :mod:`.safe_io`), and never writes
what loading would refuse.
"""

from __future__ import annotations

import math
import tomllib
import warnings

import astropy.units as u
import param
import tomli_w

from .file_sky import SkyFields, _join, _kind
from .names import display_key, name_problem
from .problems import Problem, SystemFileError, SystemFileWarning, valid_planet_names, with_planet_names
from .quantity import Uncertainty
from .safe_io import atomic_write, read_regular_file
from .system import MAX_PLANETS, REDISTRIBUTION_FACTORS, Assumptions, Planet, Star, System, _Body

__all__ = ["FORMAT", "MAX_FILE_BYTES", "Problem", "SystemFileError", "SystemFileWarning", "atomic_write",
           "dumps_system", "load_system", "loads_system", "read_regular_file", "save_system",
           "system_from_document", "system_to_document"]

FORMAT = "orbitdeck-system/1"
#: files larger than this are refused before parsing [bytes]
MAX_FILE_BYTES = 2 * 1024 * 1024

_QUANTITY_KEYS = {"value", "sigma", "plus", "minus", "unit", "ref"}
_REQUIRED = {Star: ("mass", "radius", "teff"), Planet: ("period", "radius"), Assumptions: ()}
#: keys of ``[assumptions] free_eccentricity``: the Assumptions parameter each sets and its unit
_FREE_ECCENTRICITY_KEYS = {"amplitude": ("free_eccentricity_amplitude", None),
                           "angle": ("free_eccentricity_angle", "deg")}


class _Checker(SkyFields):
    """Collects problems (and notes on usable oddities) while a document is turned into param objects."""

    def __init__(self, source: str):
        self.source = source
        self.problems: list[Problem] = []
        self.notes: list[Problem] = []

    def fail(self, path: str, reason: str) -> None:
        self.problems.append(Problem(self.source, path, reason))

    def table(self, doc, path, allowed, required=()) -> dict | None:
        if not isinstance(doc, dict):
            self.fail(path, f"must be a table, not {_kind(doc)}")
            return None
        for key in doc:
            if key not in allowed:
                self.fail(_join(path, key), "unknown key")
        for key in required:
            if key not in doc:
                self.fail(_join(path, key), "required key is missing")
        return doc

    def text(self, doc, path, key, default=None, required=False, name=False):
        """A string field; with ``name``, one that must show as itself (see :mod:`.names`)."""
        if key not in doc:
            return default
        value = doc[key]
        if not isinstance(value, str):
            self.fail(_join(path, key), f"must be a string, not {_kind(value)}")
            return default
        if required and not value.strip():
            self.fail(_join(path, key), "must not be empty")
        elif name and name_problem(value):
            self.fail(_join(path, key), name_problem(value))
        return value

    def number(self, value, path) -> float | None:
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            self.fail(path, f"must be a number, not {_kind(value)}")
            return None
        try:
            value = float(value)
        except OverflowError:
            self.fail(path, "is too large to be a number")
            return None
        if not math.isfinite(value):
            self.fail(path, f"must be finite, not {value}")
            return None
        return value

    def quantity(self, raw, path, unit: str | None):
        """(value in the default unit, Uncertainty or None, ref or None), or None on error."""
        if not isinstance(raw, dict):
            value = self.number(raw, path)
            return None if value is None else (value, None, None)
        if self.table(raw, path, _QUANTITY_KEYS, ("value",)) is None or "value" not in raw:
            return None
        value = self.number(raw["value"], f"{path}.value")
        factor = self.unit_factor(raw.get("unit"), f"{path}.unit", unit) if "unit" in raw else 1.0
        spread = self.spread(raw, path)
        ref = self.text(raw, path, "ref")
        if value is None or factor is None or spread is False:
            return None
        scaled = [value * factor, *((spread.plus * factor, spread.minus * factor) if spread else ())]
        if not all(math.isfinite(x) for x in scaled):
            self.fail(path, f"is not finite once converted to {unit or 'a pure number'}")
            return None
        return scaled[0], (spread.scaled(factor) if spread else None), ref

    def spread(self, raw, path):
        has_sigma, has_sides = "sigma" in raw, ("plus" in raw or "minus" in raw)
        if has_sigma and has_sides:
            self.fail(path, "give either sigma or plus/minus, not both")
            return False
        if has_sides and not ("plus" in raw and "minus" in raw):
            self.fail(path, "plus and minus must be given together")
            return False
        keys = ("sigma",) if has_sigma else ("plus", "minus") if has_sides else ()
        numbers = [self.number(raw[k], f"{path}.{k}") for k in keys]
        if any(n is None for n in numbers):
            return False
        for k, n in zip(keys, numbers):
            if n < 0:
                self.fail(f"{path}.{k}", f"an uncertainty must be >= 0, not {n:g}")
                return False
        if has_sigma:
            return Uncertainty.from_sigma(numbers[0])
        return Uncertainty(numbers[0], numbers[1]) if has_sides else None

    def unit_factor(self, text, path, unit: str | None) -> float | None:
        if not isinstance(text, str):
            self.fail(path, f"must be a unit string, not {_kind(text)}")
            return None
        try:
            with warnings.catch_warnings(record=True) as remarks:
                warnings.simplefilter("always")
                given = u.Unit(text, parse_strict="raise")
        except (ValueError, TypeError):
            self.fail(path, f"{text!r} is not a unit astropy knows")
            return None
        for remark in remarks:
            if issubclass(remark.category, u.UnitsWarning):
                self.notes.append(Problem(self.source, path, f"astropy: {remark.message}"))
            else:  # not about the unit (another thread's, say): passed on as it came
                warnings.warn_explicit(remark.message, remark.category, remark.filename, remark.lineno)
        target = u.dimensionless_unscaled if unit is None else u.Unit(unit)
        try:
            factor = float(given.to(target))
        except u.UnitConversionError:
            wanted = "dimensionless" if unit is None else f"convertible to {unit} ({target.physical_type})"
            self.fail(path, f"unit {text!r} is not {wanted}")
            return None
        if not (math.isfinite(factor) and factor > 0):
            self.fail(path, f"unit {text!r} is not convertible to {unit or 'a pure number'} by a positive scale factor")
            return None
        return factor

    def body(self, cls, raw, path):
        """A Star, Planet or Assumptions from its table, or None."""
        allowed = (set(cls.UNITS) | ({"heat_redistribution", "free_eccentricity"} if cls is Assumptions else {"name"})
                   | set(getattr(cls, "POSITION_FIELDS", ())))
        before = len(self.problems)
        if self.table(raw, path, allowed, ("name", *_REQUIRED[cls]) if cls is not Assumptions else ()) is None:
            return None
        values, spreads, refs = {}, {}, {}
        if cls is not Assumptions:
            values["name"] = self.text(raw, path, "name", required=True, name=True)
        for key, unit in cls.UNITS.items():
            if key not in raw:
                continue
            parsed = self.quantity(raw[key], _join(path, key), unit)
            if parsed is None:
                continue
            value, spread, ref = parsed
            if self.in_bounds(cls.param[key], value, _join(path, key), unit):
                values[key] = value
                if spread is not None:
                    spreads[key] = spread
                if ref is not None:
                    refs[key] = ref
        if cls is Assumptions and "heat_redistribution" in raw:
            choice = self.text(raw, path, "heat_redistribution")
            if isinstance(choice, str) and choice not in REDISTRIBUTION_FACTORS:
                self.fail(_join(path, "heat_redistribution"),
                          f"must be one of {', '.join(map(repr, REDISTRIBUTION_FACTORS))}, not {choice!r}")
            elif isinstance(choice, str):
                values["heat_redistribution"] = choice
        if cls is Star:
            values.update(self.position(raw, path))
        if cls is Assumptions and "free_eccentricity" in raw:
            values.update(self.free_eccentricity(raw["free_eccentricity"], _join(path, "free_eccentricity")))
        if len(self.problems) > before:
            return None
        return cls(**values, uncertainties=spreads, refs=refs)

    def free_eccentricity(self, raw, path) -> dict:
        """The free eccentricity Z_free of the TTV amplitudes, ``{ amplitude = .., angle = .. }``
        (angle in degrees), as Assumptions values; each key may be left out (default 0)."""
        if self.table(raw, path, _FREE_ECCENTRICITY_KEYS) is None:
            return {}
        values = {}
        for key, (field, unit) in _FREE_ECCENTRICITY_KEYS.items():
            if key not in raw:
                continue
            number = self.number(raw[key], _join(path, key))
            if number is not None and self.in_bounds(Assumptions.param[field], number, _join(path, key), unit):
                values[field] = number
        return values

    def in_bounds(self, parameter: param.Number, value: float, path: str, unit: str | None) -> bool:
        lo, hi = parameter.bounds or (None, None)
        lo_in, hi_in = parameter.inclusive_bounds
        shown = f" {unit}" if unit else ""
        if lo is not None and (value < lo or (value == lo and not lo_in)):
            self.fail(path, f"must be {'>=' if lo_in else '>'} {lo:g}{shown}, not {value:g}")
            return False
        if hi is not None and (value > hi or (value == hi and not hi_in)):
            self.fail(path, f"must be {'<=' if hi_in else '<'} {hi:g}{shown}, not {value:g}")
            return False
        return True


def system_from_document(doc: dict, source: str = "<document>", notes: list | None = None) -> System:
    """A :class:`System` from a parsed system-file document; raises :class:`SystemFileError`.

    Notes on usable oddities (astropy's remarks on a unit string) are
    appended to ``notes`` when it is a list, else issued as
    :class:`SystemFileWarning`; each names the file and the field.
    """
    check = _Checker(source)
    if check.table(doc, "", {"format", "system", "assumptions", "star", "planets", "sites"},
                   ("format", "system", "star", "planets")) is None:
        raise SystemFileError(check.problems)
    raw_planets = doc.get("planets", [])
    if isinstance(raw_planets, list) and len(raw_planets) > MAX_PLANETS:
        # refused before anything else is looked at: the work grows as the square of the count
        raise SystemFileError([Problem(source, "planets", f"holds {len(raw_planets)} planets; a system may "
                                                          f"hold at most {MAX_PLANETS}")])
    if "format" in doc and doc["format"] != FORMAT:
        check.fail("format", f"must be {FORMAT!r}, not {doc['format']!r}")
    header = check.table(doc.get("system", {}), "system", {"name", "notes", "epoch"}, ("name",)) or {}
    name = check.text(header, "system", "name", "unnamed system", required=True, name=True)
    text = check.text(header, "system", "notes", "")
    epoch = System.param.epoch.default
    if "epoch" in header:
        epoch = check.number(header["epoch"], "system.epoch")
        if epoch is not None and not check.in_bounds(System.param.epoch, epoch, "system.epoch", "d"):
            epoch = None
    assumptions = check.body(Assumptions, doc.get("assumptions", {}), "assumptions")
    star = check.body(Star, doc["star"], "star") if "star" in doc else None
    planets = []
    if not isinstance(raw_planets, list):
        check.fail("planets", f"must be an array of tables ([[planets]]), not {_kind(raw_planets)}")
    elif "planets" in doc and not raw_planets:
        check.fail("planets", "at least one planet is needed")
    else:
        planets = [check.body(Planet, raw, f"planets[{i}]") for i, raw in enumerate(raw_planets)]
        seen = {}
        for i, planet in enumerate(planets):
            if planet is None:
                continue
            key = display_key(planet.name)
            if key in seen:
                other = planets[seen[key]].name
                check.fail(f"planets[{i}].name", f"duplicate planet name {planet.name!r} (also planets[{seen[key]}]"
                           + ("" if other == planet.name else f", whose name {other!r} looks the same") + ")")
            seen.setdefault(key, i)
    sites = check.sites(doc["sites"]) if "sites" in doc else []
    names = valid_planet_names(raw_planets, check.problems)
    check.problems, check.notes = with_planet_names(check.problems, names), with_planet_names(check.notes, names)
    if check.problems:
        raise SystemFileError(check.problems)
    if notes is None:
        for note in check.notes:
            warnings.warn(SystemFileWarning(str(note)), stacklevel=3)
    else:
        notes.extend(check.notes)
    return System(name=name, notes=text, epoch=epoch, star=star, assumptions=assumptions, planets=planets,
                  sites=sites)


def load_system(path, notes: list | None = None) -> System:
    """Read a system file.

    Parameters
    ----------
    path : str or os.PathLike
        The ``orbitdeck-system/1`` TOML file: a regular file (or a link to
        one) of at most :data:`MAX_FILE_BYTES` bytes.
    notes : list, optional
        Receives a :class:`Problem` for each usable oddity (astropy's remarks
        on a unit string); without it they are issued as :class:`SystemFileWarning`.

    Raises
    ------
    SystemFileError
        With every problem found, each naming the file, field and reason.
    """
    return loads_system(read_regular_file(path, MAX_FILE_BYTES), str(path), notes)


def read_system_bytes(path) -> bytes:
    """The bytes of a system file: a regular file of at most :data:`MAX_FILE_BYTES` (SystemFileError otherwise)."""
    return read_regular_file(path, MAX_FILE_BYTES)


def loads_system(data: bytes | str, source: str = "<text>", notes: list | None = None) -> System:
    """Parse a system file's content (bytes or text); see :func:`load_system`."""
    if isinstance(data, bytes):
        if len(data) > MAX_FILE_BYTES:
            raise SystemFileError([Problem(source, "", f"content is {len(data)} bytes; system files are limited "
                                                        f"to {MAX_FILE_BYTES} bytes")])
        try:
            data = data.decode("utf-8")
        except UnicodeDecodeError as error:
            raise SystemFileError([Problem(source, "", f"is not UTF-8 text (byte {error.start})")]) from None
    elif len(data) > MAX_FILE_BYTES:
        raise SystemFileError([Problem(source, "", f"content is over {MAX_FILE_BYTES} characters; system files "
                                                    f"are limited to {MAX_FILE_BYTES} bytes")])
    if data.startswith("\ufeff"):  # a byte-order mark, which some editors write before UTF-8 text
        data = data[1:]
    if not data.strip():
        raise SystemFileError([Problem(source, "", "is empty")])
    try:
        doc = tomllib.loads(data)
    except ValueError as error:  # TOMLDecodeError, and the int-digit limit that tomllib lets through
        raise SystemFileError([Problem(source, "", f"is not valid TOML: {error}")]) from None
    except RecursionError:
        raise SystemFileError([Problem(source, "", "is not valid TOML: nested too deeply")]) from None
    return system_from_document(doc, source, notes)


def _quantity_out(body: _Body, key: str):
    value = getattr(body, key)
    spread, ref = body.uncertainty(key), body.refs.get(key)
    if spread is None and ref is None:
        return value
    table = {"value": value}
    if spread is not None:
        table.update(spread.to_file_fields())
    if ref is not None:
        table["ref"] = ref
    return table


def _body_out(body: _Body, with_name: bool = True) -> dict:
    out = {"name": body.name} if with_name else {}
    for key in body.UNITS:
        if getattr(body, key) is not None:
            out[key] = _quantity_out(body, key)
    for key in getattr(body, "POSITION_FIELDS", ()):
        if getattr(body, key) is not None:
            out[key] = getattr(body, key)
    return out


def system_to_document(system: System) -> dict:
    """The system-file document of ``system`` (values in the default units)."""
    assumptions = _body_out(system.assumptions, with_name=False)
    assumptions["heat_redistribution"] = system.assumptions.heat_redistribution
    free = {key: getattr(system.assumptions, field) for key, (field, _) in _FREE_ECCENTRICITY_KEYS.items()}
    if any(free.values()):   # written only when set, so that files without it stay as they were
        assumptions["free_eccentricity"] = free
    doc = {
        "format": FORMAT,
        "system": {"name": system.name, "notes": system.notes, "epoch": system.epoch},
        "assumptions": assumptions,
        "star": _body_out(system.star),
        "planets": [_body_out(p) for p in system.planets],
    }
    if system.sites:
        doc["sites"] = [{"name": s.name, "latitude": s.latitude, "longitude": s.longitude, "elevation": s.elevation}
                        for s in system.sites]
    return doc


def dumps_system(system: System) -> str:
    """The system file of ``system`` as TOML text."""
    doc = system_to_document(system)
    sites = doc.pop("sites", [])
    # each site as its own [[sites]] table, as the format shows it (tomli_w would write short ones inline)
    return tomli_w.dumps(doc) + "".join(f"\n[[sites]]\n{tomli_w.dumps(site)}" for site in sites)


def save_system(system: System, path, overwrite: bool = False) -> None:
    """Write ``system`` to ``path`` atomically (temporary file, then rename).

    Parameters
    ----------
    system : System
        The system to write.
    path : str or os.PathLike
        The file; see :func:`~orbitdeck.models.files.safe_io.atomic_write` for
        links, special files and attributes.
    overwrite : bool
        Also replace a read-only or hard-linked file.

    Raises
    ------
    SystemFileError
        When the file would not load back (too large, too many planets...),
        the target may not be replaced or the folder cannot be written; the
        existing file is untouched.
    """
    data = dumps_system(system).encode("utf-8")
    try:
        loads_system(data, str(path), notes=[])
    except SystemFileError as error:
        raise SystemFileError([Problem(str(path), "", "not written: the system file would not load back"),
                               *error.problems]) from None
    atomic_write(path, data, overwrite=overwrite)
