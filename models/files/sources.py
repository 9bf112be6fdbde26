"""Where a system came from: the bytes read, their name and SHA-256, and the bundled demos by name.

Every export states the SHA-256 of the bytes a system was read from (for a
bundled demo too), so a reader can tell which file the numbers belong to.
:func:`load_demo` loads a bundled demo by name from any working directory.
"""

from __future__ import annotations

import hashlib
from dataclasses import dataclass
from functools import cached_property

from .system_file import Problem, SystemFileError, loads_system, read_system_bytes
from .system import System


@dataclass(frozen=True)
class SystemSource:
    """The content of a system file and the name it goes by (a path, or ``demo:NAME``)."""

    name: str
    data: bytes

    @cached_property
    def sha256(self) -> str:
        """SHA-256 of the bytes, as hexadecimal text."""
        return hashlib.sha256(self.data).hexdigest()

    def system(self, notes: list | None = None) -> System:
        """A new :class:`System` read from the bytes (SystemFileError naming the source if they are bad);
        notes on usable oddities go to ``notes`` (see :func:`~orbitdeck.models.files.system_file.loads_system`)."""
        return loads_system(self.data, self.name, notes)


def read_source(path) -> SystemSource:
    """The :class:`SystemSource` of a system file on disk."""
    return SystemSource(str(path), read_system_bytes(path))


def demo_names() -> list[str]:
    """Names of the bundled demo systems."""
    from orbitdeck.demo_systems import demo_names as names

    return names()


def demo_source(name: str | None = None) -> SystemSource:
    """The :class:`SystemSource` of a bundled demo (the default demo for None).

    Raises
    ------
    SystemFileError
        For an unknown name, listing the names there are.
    """
    from orbitdeck.demo_systems import DEFAULT_DEMO, demo_path

    name = DEFAULT_DEMO if name is None else str(name)
    if name not in demo_names():
        raise SystemFileError([Problem(f"demo:{name}", "", "there is no bundled demo of that name; the demos are "
                                                            + ", ".join(demo_names()))])
    return SystemSource(f"demo:{name}", demo_path(name).read_bytes())


def load_demo(name: str | None = None) -> System:
    """A bundled demo system by name (``"ossery_loom"``, ``"amber_pair"``, ``"skew_trio"``), from any directory.

    Without a name, the default demo. The system is a new object each call:
    edit it freely.
    """
    return demo_source(name).system()
