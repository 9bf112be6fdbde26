"""The ``evolve`` subcommand: an N-body ensemble over the system's Monte Carlo draws."""

from __future__ import annotations

import argparse
import json
import sys
import time

from orbitdeck.dashboard.text_tables import format_number, render

DEFAULT_DRAWS = 100
DEFAULT_ORBITS = 1000
#: below this many draws the run stays in this process (starting worker processes costs seconds)
LOCAL_PROCESSES_MIN_DRAWS = 64


def _whole_number():
    """An argparse type: a whole number >= 1 (argparse names the option in its error)."""
    def parse(text: str) -> int:
        try:
            value = int(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"expected a whole number, got {text!r}") from None
        if value < 1:
            raise argparse.ArgumentTypeError(f"must be at least 1, got {value}")
        return value

    return parse


def _seed(text: str) -> int:
    try:
        value = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a whole number, got {text!r}") from None
    if value < 0:
        raise argparse.ArgumentTypeError(f"must be 0 or more, got {value}")
    return value


def _address(text: str) -> str:
    host, _, port = text.rpartition("://")[2].rpartition(":")
    if not host or not port.isdigit():
        raise argparse.ArgumentTypeError(f"expected a dask scheduler address such as tcp://host:8786, got {text!r}")
    return text


class Progress:
    """A bar on a terminal, otherwise a plain line at each quarter; both on stderr."""

    WIDTH = 30

    def __init__(self, stream=None):
        self.stream = stream or sys.stderr
        self.terminal = self.stream.isatty()
        self.start = time.perf_counter()
        self.quarter = -1

    def __call__(self, done: int, total: int) -> None:
        elapsed = time.perf_counter() - self.start
        if self.terminal:
            filled = self.WIDTH * done // total
            self.stream.write(f"\revolve [{'#' * filled}{'.' * (self.WIDTH - filled)}] "
                              f"{done}/{total} orbits {elapsed:.0f} s")
            if done == total:
                self.stream.write("\n")
        else:
            quarter = 4 * done // total
            if quarter > self.quarter:
                self.quarter = quarter
                self.stream.write(f"evolve: {25 * quarter} % of {total} orbits ({elapsed:.1f} s)\n")
        self.stream.flush()


def ensemble_text(doc: dict) -> str:
    """A plain-text summary of an orbitdeck-ensemble/1 document."""
    low, high = doc["stable_interval"]
    lines = [f"{doc['system']}: N-body ensemble of {doc['draws']} draws over {doc['orbits']} orbits of the "
             f"innermost planet (seed {doc['seed']})",
             f"stable to the end: {100 * doc['stable_fraction']:.1f} % "
             f"({doc['stable_interval_method']}: {100 * low:.1f}-{100 * high:.1f} %)"]
    stopped = {name: count for name, count in doc["outcomes"].items() if name != "survived" and count}
    if stopped:
        survival = sorted(s for s in doc["survival_orbits"] if s < doc["orbits"])
        when = (f"after {format_number(survival[0])} orbits" if len(survival) == 1 else
                f"after {format_number(survival[0])} to {format_number(survival[-1])} orbits "
                f"(median {format_number(survival[len(survival) // 2])})")
        lines.append("stopped: " + ", ".join(f"{count} by {name}" for name, count in stopped.items()) + "; " + when)
    if doc["megno_median_stable"] is not None:
        lines.append(f"chaos indicator: median MEGNO <Y> of the stable draws {doc['megno_median_stable']:.3g} "
                     "(about 2: quasi-periodic; larger: chaotic)")
    rows = [[p["name"], format_number(p["ttv_amplitude_min"]),
             "-".join(format_number(x) for x in p["ttv_amplitude_interval_min"]),
             "estimated from radius" if p["mass_estimated"] else "given"] for p in doc["planets"]]
    lines += ["", "TTV amplitude: half the range of the transit times' residuals from a straight line, "
                  "median over the stable draws (a lower bound when the integration is shorter than the "
                  "TTV super-period)",
              render(["planet", "TTV [min]", "16-84 %", "mass"], rows), "", doc["assumptions"]]
    lines += [f"warning: {w}" for w in doc["warnings"]]
    return "\n".join(lines) + "\n"


def cmd_evolve(args) -> int:
    from orbitdeck.dashboard.cli import EXIT_BAD_INPUT, _load
    from orbitdeck.models.nbody import run_ensemble

    system = _load(args.file)
    if not system.planets:
        print(f"orbitdeck evolve: {args.file or 'the demo system'} has no planets to integrate", file=sys.stderr)
        return EXIT_BAD_INPUT
    scheduler = args.scheduler or ("processes" if args.draws >= LOCAL_PROCESSES_MIN_DRAWS else "synchronous")
    try:
        result = run_ensemble(system, draws=args.draws, orbits=args.orbits, seed=args.seed, scheduler=scheduler,
                              progress=Progress())
    except ValueError as error:
        if args.scheduler and str(error).startswith("scheduler:"):
            print(f"orbitdeck evolve: --scheduler: {str(error)[len('scheduler: '):]}", file=sys.stderr)
            return EXIT_BAD_INPUT
        raise
    doc = result.to_dict()
    if args.json:
        json.dump(doc, sys.stdout, indent=1, allow_nan=False)
        sys.stdout.write("\n")
    else:
        sys.stdout.write(ensemble_text(doc))
    return 0


def register(commands) -> None:
    """Add the ``evolve`` subcommand."""
    from orbitdeck.dashboard.cli import DEFAULT_SEED, _add_file

    evolve = commands.add_parser(
        "evolve", help="integrate the system's Monte Carlo draws (N-body ensemble)",
        description="Integrate every Monte Carlo draw of the system as point masses (Wisdom-Holman map, "
                    "fixed step of 1/20 of the innermost period) and report the fraction that stays stable, "
                    "when the others stop, a chaos indicator and the transit-timing variations. Results are "
                    "model estimates.")
    _add_file(evolve)
    evolve.add_argument("--orbits", type=_whole_number(), default=DEFAULT_ORBITS, metavar="N",
                        help=f"length of the integration in orbits of the innermost planet (default {DEFAULT_ORBITS})")
    evolve.add_argument("--draws", type=_whole_number(), default=DEFAULT_DRAWS, metavar="D",
                        help=f"number of Monte Carlo draws (default {DEFAULT_DRAWS})")
    evolve.add_argument("--seed", type=_seed, default=DEFAULT_SEED, metavar="S",
                        help=f"seed of the random generator (default {DEFAULT_SEED})")
    evolve.add_argument("--json", action="store_true", help="print the orbitdeck-ensemble/1 JSON document")
    evolve.add_argument("--scheduler", type=_address, metavar="ADDRESS",
                        help="address of a dask.distributed scheduler (tcp://host:port) to run the draws on; "
                             "default: worker processes on this machine")
    evolve.set_defaults(run=cmd_evolve)
