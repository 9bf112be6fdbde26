"""The ``snapshot`` subcommand: one self-contained HTML page of every view."""

from __future__ import annotations

import sys
import time

from orbitdeck.models.files.system_file import read_regular_file


def cmd_snapshot(args) -> int:
    from orbitdeck.dashboard.cli import EXIT_BAD_INPUT, say
    from orbitdeck.dashboard.snapshot import MAX_SNAPSHOT_BYTES, extract_system_text, write_snapshot

    if args.extract:
        page = read_regular_file(args.extract, MAX_SNAPSHOT_BYTES, "snapshot pages").decode("utf-8", errors="replace")
        text = extract_system_text(page, args.extract)
        if sys.stdout.isatty():  # for reading: a right-to-left override in the notes must not reorder the screen
            from orbitdeck.dashboard.text_tables import terminal_safe

            text = terminal_safe(text, keep="\n\t")
        sys.stdout.write(text)
        return 0
    if not args.output:
        say("orbitdeck snapshot: -o OUT.html is required (or --extract PAGE)")
        return EXIT_BAD_INPUT
    from orbitdeck.dashboard.cli import _source, _system

    source = _source(args.file)
    system = _system(source)
    start = time.perf_counter()
    size = write_snapshot(args.output, system, source.name, source.data, time=args.time,
                          samples=args.samples, seed=args.seed, overwrite=args.overwrite)
    say(f"wrote {args.output} ({size / 1e6:.1f} MB in {time.perf_counter() - start:.1f} s)")
    return 0


def register(commands) -> None:
    """Add the ``snapshot`` subcommand."""
    from orbitdeck.dashboard.cli import (DEFAULT_SAMPLES, DEFAULT_SEED, MAX_SAMPLES, MAX_SEED, _add_file,
                                         add_overwrite, bounded, time_value)

    snapshot = commands.add_parser(
        "snapshot", help="write every view to one self-contained HTML file",
        description="Write every view and table of a system to one HTML file that opens offline, "
                    "with its provenance and the input system embedded; or, with --extract, print "
                    "the system file embedded in such a page.")
    _add_file(snapshot)
    snapshot.add_argument("-o", "--output", metavar="OUT.html", help="the page to write")
    add_overwrite(snapshot, "OUT.html")
    snapshot.add_argument("--time", type=time_value, metavar="BJD", help="time of the positions [BJD_TDB]; "
                                                                         "default: the system epoch")
    snapshot.add_argument("--samples", type=bounded(0, MAX_SAMPLES, whole=True), default=DEFAULT_SAMPLES, metavar="N",
                          help=f"Monte Carlo samples for 16th-84th percentile intervals, 0 to {MAX_SAMPLES}; 0 for "
                               f"nominal values only (default {DEFAULT_SAMPLES}, as for table)")
    snapshot.add_argument("--seed", type=bounded(0, MAX_SEED, whole=True), default=DEFAULT_SEED, metavar="S",
                          help=f"seed of the random generator, 0 to {MAX_SEED} (default {DEFAULT_SEED})")
    snapshot.add_argument("--extract", metavar="PAGE", help="print the system file embedded in a snapshot page")
    snapshot.set_defaults(run=cmd_snapshot)
