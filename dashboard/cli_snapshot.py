"""The ``snapshot`` subcommand: one self-contained HTML page of every view."""

from __future__ import annotations

import sys
import time
from pathlib import Path

from orbitdeck.models.files import Problem, SystemFileError

#: snapshots are larger than system files: refuse pages above this when extracting [bytes]
MAX_SNAPSHOT_BYTES = 64 * 1024 * 1024


def _read(path, limit: int) -> bytes:
    try:
        size = Path(path).stat().st_size
        if size > limit:
            raise SystemFileError([Problem(str(path), "", f"file is {size} bytes; the limit is {limit} bytes")])
        return Path(path).read_bytes()
    except OSError as error:
        raise SystemFileError([Problem(str(path), "", f"cannot be read: {error.strerror or error}")]) from None


def cmd_snapshot(args) -> int:
    from orbitdeck.dashboard.cli import EXIT_BAD_INPUT
    from orbitdeck.dashboard.snapshot import extract_system_text, write_snapshot

    if args.extract:
        page = _read(args.extract, MAX_SNAPSHOT_BYTES).decode("utf-8", errors="replace")
        sys.stdout.write(extract_system_text(page, args.extract))
        return 0
    if not args.output:
        print("orbitdeck snapshot: -o OUT.html is required (or --extract PAGE)", file=sys.stderr)
        return EXIT_BAD_INPUT
    from orbitdeck.dashboard.cli import _source

    source = _source(args.file)
    system = source.system()
    start = time.perf_counter()
    size = write_snapshot(args.output, system, source.name, source.data, time=args.time,
                          samples=args.samples, seed=args.seed)
    print(f"wrote {args.output} ({size / 1e6:.1f} MB in {time.perf_counter() - start:.1f} s)", file=sys.stderr)
    return 0


def register(commands) -> None:
    """Add the ``snapshot`` subcommand."""
    from orbitdeck.dashboard.cli import DEFAULT_SAMPLES, DEFAULT_SEED, _add_file

    snapshot = commands.add_parser(
        "snapshot", help="write every view to one self-contained HTML file",
        description="Write every view and table of a system to one HTML file that opens offline, "
                    "with its provenance and the input system embedded; or, with --extract, print "
                    "the system file embedded in such a page.")
    _add_file(snapshot)
    snapshot.add_argument("-o", "--output", metavar="OUT.html", help="the page to write")
    snapshot.add_argument("--time", type=float, metavar="BJD", help="time of the positions [BJD_TDB]; "
                                                                    "default: the system epoch")
    snapshot.add_argument("--samples", type=int, default=DEFAULT_SAMPLES, metavar="N",
                          help=f"Monte Carlo samples for 16th-84th percentile intervals; 0 for nominal values only "
                               f"(default {DEFAULT_SAMPLES}, as for table)")
    snapshot.add_argument("--seed", type=int, default=DEFAULT_SEED, metavar="S",
                          help=f"seed of the random generator (default {DEFAULT_SEED})")
    snapshot.add_argument("--extract", metavar="PAGE", help="print the system file embedded in a snapshot page")
    snapshot.set_defaults(run=cmd_snapshot)
