"""The ``orbitdeck`` command line."""

from __future__ import annotations

import argparse
import io
import json
import os
import sys

from orbitdeck import __version__

EXIT_BAD_INPUT = 2
DEFAULT_SAMPLES = 4000
DEFAULT_SEED = 20261201


def _load(path):
    from orbitdeck.demo_systems import demo_path
    from orbitdeck.models import load_system

    return load_system(path if path else demo_path())


def _derive(args):
    from orbitdeck.models import derive

    return derive(_load(args.file), samples=args.samples, seed=args.seed)


def cmd_table(args) -> int:
    from orbitdeck.dashboard.text_tables import document_text

    derived = _derive(args)
    if args.ecsv:
        from orbitdeck.models.export import planet_table
        from orbitdeck.models.files import atomic_write

        buffer = io.StringIO()
        planet_table(derived).write(buffer, format="ascii.ecsv")
        atomic_write(args.ecsv, buffer.getvalue().encode("utf-8"))
        print(f"wrote {args.ecsv}", file=sys.stderr)
    if args.json:
        json.dump(derived.to_dict(), sys.stdout, indent=1, allow_nan=False)
        sys.stdout.write("\n")
    elif not args.ecsv:
        sys.stdout.write(document_text(derived.to_dict()))
    return 0


def cmd_check(args) -> int:
    _load(args.file)
    print("ok")
    return 0


def _add_file(parser, required=False):
    parser.add_argument("file", nargs=None if required else "?", metavar="FILE",
                        help="system file (orbitdeck-system/1 TOML)" + ("" if required else
                                                                         "; default: the bundled demo system"))


def _add_sampling(parser, default_samples):
    parser.add_argument("--samples", type=int, default=default_samples, metavar="N",
                        help=f"Monte Carlo samples for 16th-84th percentile intervals; 0 for nominal values only "
                             f"(default {default_samples})")
    parser.add_argument("--seed", type=int, default=DEFAULT_SEED, metavar="S",
                        help=f"seed of the random generator (default {DEFAULT_SEED})")


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(prog="orbitdeck", description="Derived views of compact exoplanet systems.")
    parser.add_argument("--version", action="version", version=f"orbitdeck {__version__}")
    commands = parser.add_subparsers(dest="command", metavar="COMMAND", required=True)

    table = commands.add_parser("table", help="print the derived tables of a system",
                                description="Print the derived tables of a system (planets, pairs, triples, skies).")
    _add_file(table)
    table.add_argument("--json", action="store_true", help="print the orbitdeck-derived/1 JSON document instead")
    table.add_argument("--ecsv", metavar="OUT", help="write the planet table, units attached, as ECSV to OUT")
    _add_sampling(table, DEFAULT_SAMPLES)
    table.set_defaults(run=cmd_table)

    check = commands.add_parser("check", help="check a system file",
                                description="Check a system file: print 'ok' and exit 0, or one line per problem "
                                            "and exit 2.")
    _add_file(check, required=True)
    check.set_defaults(run=cmd_check)

    for register in _EXTRA_COMMANDS:
        register(commands)
    return parser


def _register_sky(commands):
    from orbitdeck.dashboard.cli_sky import register

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


#: functions that add further subcommands (kept in their own modules so heavy imports stay lazy)
_EXTRA_COMMANDS: list = [_register_sky, _register_serve, _register_snapshot, _register_evolve]


def main(argv=None) -> int:
    from orbitdeck.models import SystemFileError

    args = build_parser().parse_args(argv)
    if getattr(args, "samples", 0) < 0:
        print("orbitdeck: --samples must be >= 0", file=sys.stderr)
        return EXIT_BAD_INPUT
    try:
        return args.run(args)
    except SystemFileError as error:
        for problem in error.problems:
            print(problem, file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        return 130
    except BrokenPipeError:
        return 0
    except Exception as error:  # a bug of ours: say so briefly, traceback only on request
        if os.environ.get("ORBITDECK_DEBUG"):
            raise
        print(f"orbitdeck: internal error: {type(error).__name__}: {error} "
              "(set ORBITDECK_DEBUG=1 for the traceback)", file=sys.stderr)
        return 1


if __name__ == "__main__":
    sys.exit(main())
