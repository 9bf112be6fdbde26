"""What is wrong with a file: problems naming the file, the field path and the reason.

A field of a planet is shown with the planet's name beside its index,
``planets[1] (c).period``, so that a reader need not count tables in the
file; :func:`planet_field` is the one place that writes it.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, replace

from .names import display_key

#: the index of the planet a field path starts with: ``planets[1]`` of ``planets[1].period.unit``
_PLANET_INDEX = re.compile(r"planets\[(\d+)\](?=\.|$)")


def planet_field(field: str, name: str | None) -> str:
    """``field`` as shown: ``planets[1] (c).period`` for the planet named ``c``.

    A path that does not start with a planet, or a planet without a valid
    name (``name`` None), is shown as it is.
    """
    match = _PLANET_INDEX.match(field)
    if match is None or name is None:
        return field
    return f"{match.group(0)} ({name}){field[match.end():]}"


def planet_index(field: str) -> int | None:
    """The index of the planet the path ``field`` starts with (None for any other path)."""
    match = _PLANET_INDEX.match(field)
    return None if match is None else int(match.group(1))


@dataclass(frozen=True)
class Problem:
    """One thing wrong with a system file.

    ``field`` is the path in the file (``planets[1].period``); ``planet``
    the name of the planet it belongs to, when that planet has a valid name.
    """

    file: str
    field: str
    reason: str
    planet: str | None = None

    @property
    def where(self) -> str:
        """The field as shown to people: ``planets[1] (c).period``."""
        return planet_field(self.field, self.planet)

    def __str__(self) -> str:
        where = f"{self.file}: {self.where}: " if self.field else f"{self.file}: "
        return where + self.reason


def with_planet_names(problems: list[Problem], names: dict[int, str]) -> list[Problem]:
    """``problems`` with each field of planet ``i`` naming ``names[i]`` (planets missing from ``names``
    have no valid name and are shown by index alone)."""
    named = []
    for problem in problems:
        index = planet_index(problem.field)
        named.append(problem if index not in names else replace(problem, planet=names[index]))
    return named


def valid_planet_names(raw_planets, problems: list[Problem]) -> dict[int, str]:
    """Index -> name of each planet of a file's ``planets`` array whose name is good: given, a string,
    named by none of ``problems`` (so not blank nor invisible) and the first to look as it does (a
    later planet whose name looks the same is a duplicate, even where a problem elsewhere in that
    planet kept the loader from saying so)."""
    if not isinstance(raw_planets, list):
        return {}
    refused = {p.field for p in problems}
    names, seen = {}, set()
    for i, raw in enumerate(raw_planets):
        name = raw.get("name") if isinstance(raw, dict) else None
        if not isinstance(name, str) or f"planets[{i}].name" in refused:
            continue
        if display_key(name) not in seen:
            names[i] = name
        seen.add(display_key(name))
    return names


class SystemFileError(ValueError):
    """A system file that cannot be read or written; ``problems`` lists why."""

    def __init__(self, problems: list[Problem]):
        self.problems = list(problems)
        super().__init__("\n".join(str(p) for p in self.problems))


class SystemFileWarning(UserWarning):
    """Something doubtful but usable in a system file (the message names the file and field)."""
