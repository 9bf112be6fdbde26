"""The ``orbitdeck`` command line."""

from __future__ import annotations

import argparse
import io
import json
import math
import os
import sys

from orbitdeck import __version__

EXIT_BAD_INPUT = 2
#: ``check``: the file is valid but has warnings (a status of its own, so scripts can tell it from ok and from bad)
EXIT_WARNINGS = 3
DEFAULT_SAMPLES = 4000
DEFAULT_SEED = 20261201
#: most Monte Carlo samples a command draws (100 planets with 20000 draws: about 7 s and 0.7 GB)
MAX_SAMPLES = 20000
#: seeds of the random generator: 0 to 2**32 - 1
MAX_SEED = 2**32 - 1


def say(text: str, stream=None) -> None:
    """Print one message line to stderr (or ``stream``), every unprintable character escaped."""
    from orbitdeck.dashboard.text_tables import terminal_safe

    print(terminal_safe(text, keep=""), file=stream or sys.stderr)


def _source(path):
    """The bytes of the system file ``path`` (the bundled demo when None), with their name and SHA-256."""
    from orbitdeck.models.files.sources import demo_source, read_source

    return read_source(path) if path else demo_source()


def _system(source):
    """The system of a :class:`~orbitdeck.models.files.sources.SystemSource`; notes on it are printed to stderr."""
    notes = []
    system = source.system(notes)
    for note in notes:
        say(f"warning: {note}")
    return system


def _load(path):
    """The system of ``path`` (the default demo when None); notes on it are printed to stderr."""
    return _system(_source(path))


def bounded(low, high, whole: bool = False):
    """An ``argparse`` type: a finite number (a whole one with ``whole``) from ``low`` to ``high``."""
    def parse(text: str):
        try:
            value = int(text) if whole else float(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"{text!r} is not a {'whole ' if whole else ''}number") from None
        if not math.isfinite(value):
            raise argparse.ArgumentTypeError(f"must be a finite number, not {text!r}")
        if not low <= value <= high:
            shown = (f"{low}", f"{high}") if whole else (f"{low:g}", f"{high:g}")
            raise argparse.ArgumentTypeError(f"must be from {shown[0]} to {shown[1]}, not {text}")
        return value

    parse.__name__ = "whole number" if whole else "number"
    return parse


def time_value(text: str) -> float:
    """The ``argparse`` type of a time option: BJD_TDB within the time range of system files."""
    from orbitdeck.models.files.system import TIME_BOUNDS  # imported when an option is given, not for --help

    return bounded(*TIME_BOUNDS)(text)


time_value.__name__ = "time"


def _derive(args):
    """Derive the system of ``args.file`` with the draws asked for; the provenance attached."""
    from orbitdeck.models import derive
    from orbitdeck.models.files.provenance import provenance_of

    source = _source(args.file)
    system = _system(source)
    derived = derive(system, samples=args.samples, seed=args.seed)
    derived.provenance = provenance_of(system, derived, source.name, source.sha256)
    return system, derived


def _write(path, text: str, overwrite: bool = False) -> None:
    from orbitdeck.models.files.system_file import atomic_write

    atomic_write(path, text.encode("utf-8"), overwrite=overwrite)
    say(f"wrote {path}")


def _columns(text):
    """The keys of ``--columns a,b,c`` (None when not given)."""
    return [key.strip() for key in text.split(",") if key.strip()] if text else None


def cmd_table(args) -> int:
    from orbitdeck.dashboard.text_tables import document_text

    columns = _columns(args.columns)
    if columns is not None:
        from orbitdeck.models.engine.registry import by_key

        unknown = [key for key in columns if key not in by_key("planets")]
        if unknown:
            print(f"orbitdeck table: --columns: not a planet quantity: {', '.join(unknown)} (the keys are: "
                  f"{', '.join(by_key('planets'))})", file=sys.stderr)
            return EXIT_BAD_INPUT
    system, derived = _derive(args)
    for out, table in ((args.ecsv, "planets"), (args.pairs_ecsv, "pairs")):
        if out:
            from orbitdeck.models.files.export import derived_table

            buffer = io.StringIO()
            derived_table(derived, table).write(buffer, format="ascii.ecsv")
            _write(out, buffer.getvalue(), args.overwrite)
    for style in ("latex", "aastex"):
        if getattr(args, style):
            from orbitdeck.models.files.paper_table import write_paper_table

            _write(getattr(args, style), write_paper_table(derived, style, columns), args.overwrite)
    if args.bibtex:
        from orbitdeck.models.engine.methods import bibtex
        from orbitdeck.models.files.provenance import provenance_lines

        keys = None if columns is None else [f"planets.{key}" for key in columns]
        _write(args.bibtex, bibtex(system, derived, keys, provenance_lines(derived.provenance)), args.overwrite)
    if args.json:
        json.dump(derived.to_dict(), sys.stdout, indent=1, allow_nan=False)
        sys.stdout.write("\n")
    elif not any((args.ecsv, args.pairs_ecsv, args.latex, args.aastex, args.bibtex)):
        sys.stdout.write(document_text(derived.to_dict()))
    return 0


def cmd_cite(args) -> int:
    from orbitdeck.models import derive
    from orbitdeck.models.engine.methods import bibtex
    from orbitdeck.models.files.provenance import provenance_lines, provenance_of

    source = _source(args.file)
    system = _system(source)
    derived = derive(system)
    provenance = provenance_of(system, derived, source.name, source.sha256)
    text = bibtex(system, derived, None, provenance_lines(provenance, sampling=False))
    if args.output:
        _write(args.output, text, args.overwrite)
    else:
        sys.stdout.write(text)
    return 0


def cmd_check(args) -> int:
    """Errors (status 2), else every warning of the file and of its nominal derivation (status 3), else ok (0)."""
    from orbitdeck.dashboard.text_tables import unsigned_zeros
    from orbitdeck.models import derive
    from orbitdeck.models.engine.checks import system_warnings

    source = _source(args.file)
    notes = []
    system = source.system(notes)
    model = system_warnings(system, derive(system, samples=0))
    warnings = [str(note) for note in notes] + [f"{source.name}: {unsigned_zeros(text)}" for text in model]
    for warning in warnings:
        say(f"warning: {warning}")
    if not warnings:
        print("ok")
        return 0
    print(f"valid, with {len(warnings)} warning{'' if len(warnings) == 1 else 's'}"
          + ("; those of the derivation rest on its nominal values, model estimates under the file's assumptions"
             if model else ""))
    return EXIT_WARNINGS


def _add_file(parser, required=False):
    parser.add_argument("file", nargs=None if required else "?", metavar="FILE",
                        help="system file (orbitdeck-system/1 TOML)" + ("" if required else
                                                                         "; default: the bundled demo system"))


def _add_sampling(parser, default_samples):
    parser.add_argument("--samples", type=bounded(0, MAX_SAMPLES, whole=True), default=default_samples, metavar="N",
                        help=f"Monte Carlo samples for 16th-84th percentile intervals, 0 to {MAX_SAMPLES}; 0 for "
                             f"nominal values only (default {default_samples})")
    parser.add_argument("--seed", type=bounded(0, MAX_SEED, whole=True), default=DEFAULT_SEED, metavar="S",
                        help=f"seed of the random generator, 0 to {MAX_SEED} (default {DEFAULT_SEED})")


def add_overwrite(parser, target: str) -> None:
    """The ``--overwrite`` switch of a command that writes ``target``."""
    parser.add_argument("--overwrite", action="store_true",
                        help=f"replace {target} even when it is read-only or has other hard links (a link "
                             "then keeps the old content)")


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="orbitdeck", description="Derived views of compact exoplanet systems.")
    parser.add_argument("--version", action="version", version=f"orbitdeck {__version__}")
    commands = parser.add_subparsers(dest="command", metavar="COMMAND", required=True)

    table = commands.add_parser("table", help="print the derived tables of a system",
                                description="Print the derived tables of a system (planets, pairs, triples, skies).")
    _add_file(table)
    table.add_argument("--json", action="store_true", help="print the orbitdeck-derived/1 JSON document instead")
    table.add_argument("--ecsv", metavar="OUT", help="write the planet table, units attached, as ECSV to OUT")
    table.add_argument("--pairs-ecsv", metavar="OUT",
                       help="write the table of adjacent pairs (period ratios, TTV amplitudes, AMD and Hill "
                            "stability), units attached, as ECSV to OUT")
    table.add_argument("--latex", metavar="OUT", help="write the planet table as a LaTeX table to OUT (values "
                                                      "with intervals as x^{+a}_{-b}, rounded by the PDG rule)")
    table.add_argument("--aastex", metavar="OUT", help="write the planet table as an AASTeX deluxetable to OUT")
    table.add_argument("--columns", metavar="KEY[,KEY...]",
                       help="the planet quantities of the LaTeX/AASTeX table, by document key (default: those "
                            "of the text tables); --bibtex then cites the methods of these only")
    table.add_argument("--bibtex", metavar="OUT", help="write BibTeX of the methods the numbers used to OUT")
    add_overwrite(table, "OUT")
    _add_sampling(table, DEFAULT_SAMPLES)
    table.set_defaults(run=cmd_table)

    cite = commands.add_parser("cite", help="print BibTeX of the methods a system's numbers use",
                               description="Print (or write with -o) BibTeX entries of exactly the published "
                                           "methods behind the derived quantities of a system, each entry "
                                           "preceded by a comment naming the quantities that use it.")
    _add_file(cite)
    cite.add_argument("-o", "--output", metavar="OUT", help="write the BibTeX to OUT instead of printing it")
    add_overwrite(cite, "OUT")
    cite.set_defaults(run=cmd_cite)

    check = commands.add_parser(
        "check", help="check a system file, and warn of doubtful systems",
        description="Check a system file, then derive its nominal values and look for what is doubtful in the "
                    "system (orbits that cross, planets closer than the Hill-stability limits, a star outside "
                    "the habitable-zone fit's range, a unit string astropy remarks on...). Exit statuses: 0 and "
                    "'ok' when the file is valid and nothing is doubtful; 3 when it is valid but has warnings, "
                    "each printed on its own line to stderr ('warning: FILE: ...', naming the planets), then "
                    "'valid, with N warnings'; 2 when it is not valid, with one line per problem on stderr "
                    "('FILE: planets[1] (c).period: reason'). Warnings of the derivation rest on model "
                    "estimates under the file's assumptions. Masses estimated from radii are normal and no "
                    "warning here ('orbitdeck table' notes them).",
        epilog="In a script: 'orbitdeck check F || [ $? -eq 3 ]' accepts a valid file with warnings.")
    _add_file(check, required=True)
    check.set_defaults(run=cmd_check)

    for register in _EXTRA_COMMANDS:
        register(commands)
    return parser


def _register_sky(commands):
    from orbitdeck.dashboard.cli_sky import register

    register(commands)


def _register_transits(commands):
    from orbitdeck.dashboard.cli_transits import register

    register(commands)


def _register_serve(commands):
    from orbitdeck.dashboard.serve import register_serve

    register_serve(commands)


def _register_snapshot(commands):
    from orbitdeck.dashboard.cli_snapshot import register

    register(commands)


def _register_evolve(commands):
    from orbitdeck.dashboard.cli_evolve import register

    register(commands)


def _register_figures(commands):
    from orbitdeck.dashboard.cli_figures import register

    register(commands)


#: functions that add further subcommands (kept in their own modules so heavy imports stay lazy)
_EXTRA_COMMANDS: list = [_register_sky, _register_transits, _register_serve, _register_snapshot, _register_evolve,
                         _register_figures]


def main(argv=None) -> int:
    from orbitdeck.models import SystemFileError

    args = build_parser().parse_args(argv)
    try:
        return args.run(args)
    except SystemFileError as error:
        for problem in error.problems:
            say(str(problem))
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        return 130
    except BrokenPipeError:
        return 0
    except Exception as error:  # a bug of ours: say so briefly, traceback only on request
        if os.environ.get("ORBITDECK_DEBUG"):
            raise
        say(f"orbitdeck: internal error: {type(error).__name__}: {error} (set ORBITDECK_DEBUG=1 for the traceback)")
        return 1


if __name__ == "__main__":
    sys.exit(main())
