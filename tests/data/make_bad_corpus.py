"""(Re)generate the members of the bad-file corpus that are not plain text.

The text members of ``tests/data/bad`` are ordinary files, readable and
edited by hand. The members below are bytes no editor should be trusted
with (binary garbage, other encodings, control characters, raw invisible
and bidirectional characters, byte-order marks, empty files) or too long to
write by hand (more planets than a system may hold), so they are written by
this script, deterministically:

    python tests/data/make_bad_corpus.py            # rewrite them in tests/data/bad
    python tests/data/make_bad_corpus.py --check    # exit 1 if any differs

The oversized member (20 MB) is never committed: tests call
:func:`write_oversized` into a temporary folder.
"""

from __future__ import annotations

import argparse
import random
import sys
from pathlib import Path

MAX_PLANETS = 100  # orbitdeck.models.files.system.MAX_PLANETS, restated so that this script imports nothing of ours

BAD = Path(__file__).resolve().parent / "bad"

#: a small valid document (invented), the body of the encoded and oversized members
VALID_DOCUMENT = """\
format = "orbitdeck-system/1"

[system]
name = "Corpus Base"
notes = "Invented three-planet system; each corpus file breaks it in one place."
epoch = 2461000.0

[star]
name = "Base"
mass = { value = 0.142, sigma = 0.004 }
radius = { value = 0.171, plus = 0.005, minus = 0.004 }
teff = 2990

[[planets]]
name = "b"
period = { value = 2.134, sigma = 1e-4 }
radius = 1.08

[[planets]]
name = "c"
period = 4.51
radius = 0.95
"""


def binary_members() -> dict[str, bytes]:
    """File name -> exact content of every generated corpus member."""
    rng = random.Random(20261201)
    garbage = b"\x89PNG\r\n\x1a\n" + bytes(rng.randrange(256) for _ in range(600))
    latin1 = ("# Not UTF-8: the star's name is written in Latin-1 (byte 0xE9).\n"
              + VALID_DOCUMENT.replace('name = "Base"', 'name = "Ren\u00e9e"')).encode("latin-1")
    utf16 = ("# Not UTF-8: the whole file is UTF-16 with a byte-order mark.\n"
             + VALID_DOCUMENT).encode("utf-16")
    control = ("# Control characters: a NUL and an ESC inside the system name.\n"
               + VALID_DOCUMENT.replace('name = "Corpus Base"', 'name = "Corpus\x00Base\x1b"')).encode("utf-8")
    rlo = ("# A raw right-to-left override (U+202E) in the second planet's name: it reorders what follows.\n"
           + VALID_DOCUMENT.replace('name = "c"', 'name = "\u202ec"')).encode("utf-8")
    zero_width = ("# A raw zero-width space after the first planet's letter: it prints as b.\n"
                  + VALID_DOCUMENT.replace('name = "b"', 'name = "b\u200b"')).encode("utf-8")
    bom = "\ufeff".encode("utf-8")
    bom_then_zero = bom + ("# A byte-order mark is accepted; the content after it is checked as usual.\n"
                           + VALID_DOCUMENT.replace("period = 4.51", "period = 0")).encode("utf-8")
    double_bom = bom + bom + ("# Two byte-order marks: only one is taken for a mark.\n" + VALID_DOCUMENT).encode("utf-8")
    head, planet = VALID_DOCUMENT.split("[[planets]]", 1)
    many = ("# One planet more than a system may hold.\n" + head + "".join(
        f'[[planets]]\nname = "p{i}"\nperiod = {1.0 + 0.25 * i}\nradius = 1.0\n\n' for i in range(MAX_PLANETS + 1)))
    return {
        "raw_right_to_left_override.toml": rlo,
        "raw_zero_width_space.toml": zero_width,
        "bom_then_zero_period.toml": bom_then_zero,
        "double_byte_order_mark.toml": double_bom,
        "too_many_planets.toml": many.encode("utf-8"),
        "binary_garbage.bin": garbage,
        "not_utf8.toml": latin1,
        "utf16.toml": utf16,
        "control_characters.toml": control,
        "empty.toml": b"",
        "whitespace_only.toml": b"  \n\t\n\r\n   ",
    }


def write_binary_members(folder: Path = BAD) -> list[Path]:
    """Write :func:`binary_members` into ``folder``; the paths written."""
    folder.mkdir(parents=True, exist_ok=True)
    written = []
    for name, content in binary_members().items():
        path = folder / name
        path.write_bytes(content)
        written.append(path)
    return written


def write_oversized(path: Path, size: int = 20 * 1024 * 1024) -> Path:
    """A file of exactly ``size`` bytes: a valid document padded with comment lines.

    Were it parsed, it would load; a refusal therefore comes from the size alone.
    """
    head = VALID_DOCUMENT.encode("utf-8")
    line = b"# padding: a system file this large is refused before it is read\n"
    with open(path, "wb") as stream:
        stream.write(head)
        remaining = size - len(head)
        block = line * 1024
        while remaining >= len(block):
            stream.write(block)
            remaining -= len(block)
        while remaining >= len(line):
            stream.write(line)
            remaining -= len(line)
        if remaining:
            stream.write(b"#" * (remaining - 1) + b"\n")
    return Path(path)


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--check", action="store_true", help="only compare; exit 1 when a member differs")
    args = parser.parse_args(argv)
    if args.check:
        stale = [n for n, c in binary_members().items()
                 if not (BAD / n).is_file() or (BAD / n).read_bytes() != c]
        for name in stale:
            print(f"differs: {BAD / name}")
        return 1 if stale else 0
    for path in write_binary_members():
        print(f"wrote {path}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
