"""The ``snapshot`` subcommand: one self-contained HTML page of every view."""

from __future__ import annotations

import sys
import time
from pathlib import Path

from orbitdeck.models.files import MAX_FILE_BYTES, read_regular_file

#: snapshots are larger than system files: refuse pages above this when extracting [bytes]
MAX_SNAPSHOT_BYTES = 64 * 1024 * 1024


def cmd_snapshot(args) -> int:
    from orbitdeck.dashboard.cli import EXIT_BAD_INPUT
    from orbitdeck.dashboard.snapshot import extract_system_text, write_snapshot

    if args.extract:
        page = read_regular_file(args.extract, MAX_SNAPSHOT_BYTES, "snapshot pages").decode("utf-8", errors="replace")
        sys.stdout.write(extract_system_text(page, args.extract))
        return 0
    if not args.output:
        print("orbitdeck snapshot: -o OUT.html is required (or --extract PAGE)", file=sys.stderr)
        return EXIT_BAD_INPUT
    from orbitdeck.demo_systems import demo_path
    from orbitdeck.models import loads_system

    source = args.file or str(demo_path())
    data = read_regular_file(source, MAX_FILE_BYTES)
    system = loads_system(data, source)
    start = time.perf_counter()
    size = write_snapshot(args.output, system, Path(source).name, data, time=args.time,
                          samples=args.samples, seed=args.seed)
    print(f"wrote {args.output} ({size / 1e6:.1f} MB in {time.perf_counter() - start:.1f} s)", file=sys.stderr)
    return 0


def register(commands) -> None:
    """Add the ``snapshot`` subcommand."""
    from orbitdeck.dashboard.cli import DEFAULT_SEED, _add_file

    snapshot = commands.add_parser(
        "snapshot", help="write every view to one self-contained HTML file",
        description="Write every view and table of a system to one HTML file that opens offline, "
                    "with its provenance and the input system embedded; or, with --extract, print "
                    "the system file embedded in such a page.")
    _add_file(snapshot)
    snapshot.add_argument("-o", "--output", metavar="OUT.html", help="the page to write")
    snapshot.add_argument("--time", type=float, metavar="BJD", help="time of the positions [BJD_TDB]; "
                                                                    "default: the system epoch")
    snapshot.add_argument("--samples", type=int, default=0, metavar="N",
                          help="Monte Carlo samples for intervals (default 0: nominal values only)")
    snapshot.add_argument("--seed", type=int, default=DEFAULT_SEED, metavar="S",
                          help=f"seed of the random generator (default {DEFAULT_SEED})")
    snapshot.add_argument("--extract", metavar="PAGE", help="print the system file embedded in a snapshot page")
    snapshot.set_defaults(run=cmd_snapshot)
