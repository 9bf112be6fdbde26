"""The ``positions`` and ``sky`` subcommands of the command line."""

from __future__ import annotations

import json
import sys

from orbitdeck.dashboard.text_tables import format_number, render, terminal_safe, unsigned_zeros

#: most close approaches listed per planet by ``sky --events``
MAX_EVENTS = 100
#: range of the geometric albedo of ``sky --albedo`` (bright icy bodies exceed 1)
ALBEDO_BOUNDS = (0.0, 2.0)


def _system_and_a(args):
    from orbitdeck.dashboard.cli import _load
    from orbitdeck.models import derive

    system = _load(args.file)
    return system, derive(system).planets["semi_major_axis_au"]


def _emit(doc: dict, as_json: bool, text: str) -> None:
    if as_json:
        json.dump(doc, sys.stdout, indent=1, allow_nan=False)
        sys.stdout.write("\n")
    else:
        sys.stdout.write(terminal_safe(text))
        for warning in doc.get("warnings", []):
            sys.stdout.write(f"warning: {terminal_safe(unsigned_zeros(warning), keep='')}\n")


def cmd_positions(args) -> int:
    from orbitdeck.models.motion.ephemeris import positions_document

    system, a_au = _system_and_a(args)
    doc = positions_document(system, args.time, a_au=a_au)
    rows = [[p["name"], *(format_number(p[k]) for k in ("x_au", "y_au", "z_au", "true_anomaly_deg"))]
            for p in doc["planets"]]
    text = (f"positions at BJD_TDB {doc['time']} (star at the origin, observer on +Z)\n"
            + render(["planet", "x [au]", "y [au]", "z [au]", "true anomaly [deg]"], rows) + "\n")
    _emit(doc, args.json, text)
    return 0


def cmd_sky(args) -> int:
    from orbitdeck.models import SystemFileError
    from orbitdeck.models.files.system_file import Problem
    from orbitdeck.models.motion.sky_view import close_approaches, sky_document

    system, a_au = _system_and_a(args)
    if args.observer not in system.planet_names:
        raise SystemFileError([Problem(args.file or "demo", "--observer",
                                       f"no planet named {args.observer!r}; planets: {', '.join(system.planet_names)}")])
    doc = sky_document(system, args.observer, args.time, a_au=a_au, geometric_albedo=args.albedo)
    if args.events:
        events = close_approaches(system, args.observer, after=doc["time"], count=args.events, a_au=a_au)
        doc["close_approaches"] = events["bodies"]
        # both lists start with the same notes on the system (missing transit times): each once
        doc["warnings"] = list(dict.fromkeys(doc.get("warnings", []) + events.get("warnings", [])))
    keys = ("distance_au", "angular_diameter_arcsec", "elongation_deg", "phase_angle_deg",
            "illuminated_fraction", "brightness_moon_ratio")
    rows = [[b["body"], *(format_number(b.get(k)) for k in keys)] for b in doc["bodies"]]
    text = (f"sky from {doc['observer']} at BJD_TDB {doc['time']} (geometric albedo {args.albedo:g} assumed "
            "for brightness; a model estimate)\n"
            + render(["body", "distance [au]", "diameter [arcsec]", "elongation [deg]", "phase [deg]",
                      "illuminated", "x full Moon brightness"], rows) + "\n")
    for body in doc.get("close_approaches", []):
        text += f"\nnext close approaches of {body['body']} (synodic period {format_number(body['synodic_period_d'])} d)\n"
        text += render(["time [BJD_TDB]", "distance [au]", "diameter [arcsec]"],
                       [[f"{e['time']:.4f}", format_number(e["distance_au"]), format_number(e["angular_diameter_arcsec"])]
                        for e in body["approaches"]]) + "\n"
    _emit(doc, args.json, text)
    return 0


def register(commands) -> None:
    """Add the ``positions`` and ``sky`` subcommands."""
    from orbitdeck.dashboard.cli import _add_file, bounded, time_value

    positions = commands.add_parser("positions", help="planet positions at a time",
                                    description="Planet positions at a time, star at the origin, observer on +Z.")
    _add_file(positions)
    positions.add_argument("--time", type=time_value, metavar="T", help="BJD_TDB [d]; default: the system epoch")
    positions.add_argument("--json", action="store_true", help="print JSON instead of a table")
    positions.set_defaults(run=cmd_positions)

    sky = commands.add_parser("sky", help="the sky seen from one planet",
                              description="Sizes, elongations, phases and brightness of the star and the other "
                                          "planets seen from one planet at a time.")
    _add_file(sky)
    sky.add_argument("--observer", required=True, metavar="NAME", help="the planet whose sky is shown")
    sky.add_argument("--time", type=time_value, metavar="T", help="BJD_TDB [d]; default: the system epoch")
    sky.add_argument("--events", type=bounded(0, MAX_EVENTS, whole=True), default=0, metavar="N",
                     help=f"also list the next N (0 to {MAX_EVENTS}) closest approaches of each other planet")
    sky.add_argument("--albedo", type=bounded(*ALBEDO_BOUNDS), default=0.3, metavar="A",
                     help=f"geometric albedo assumed for planets' brightness, {ALBEDO_BOUNDS[0]:g} to "
                          f"{ALBEDO_BOUNDS[1]:g} (default 0.3)")
    sky.add_argument("--json", action="store_true", help="print JSON instead of a table")
    sky.set_defaults(run=cmd_sky)
