"""What is wrong with a file: problems naming the file, the field path and the reason."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Problem:
    """One thing wrong with a system file."""

    file: str
    field: str
    reason: str

    def __str__(self) -> str:
        where = f"{self.file}: {self.field}: " if self.field else f"{self.file}: "
        return where + self.reason


class SystemFileError(ValueError):
    """A system file that cannot be read or written; ``problems`` lists why."""

    def __init__(self, problems: list[Problem]):
        self.problems = list(problems)
        super().__init__("\n".join(str(p) for p in self.problems))


class SystemFileWarning(UserWarning):
    """Something doubtful but usable in a system file (the message names the file and field)."""
