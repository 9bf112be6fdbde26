"""The ``transits`` subcommand: forecast transits, and which of them a site can observe."""

from __future__ import annotations

import csv
import io
import json
import re
import sys
from datetime import datetime, timezone

from orbitdeck.dashboard.text_tables import format_number, render

#: words of every output: what the numbers are
CAUTION = ("predictions from a linear ephemeris (T0 + n P; transit-timing variations not modelled): "
           "model estimates, not observations")
#: the name of a site given on the command line as LAT,LON,ELEV_M
_COMMAND_LINE_SITE = "site"
_SITE_TRIPLE = re.compile(r"\s*([^,]+),([^,]+),([^,]+)\s*")


def _problem(source: str, field: str, reason: str):
    from orbitdeck.models import SystemFileError
    from orbitdeck.models.files.system_file import Problem

    return SystemFileError([Problem(source, field, reason)])


def resolve_site(text: str, system, source: str):
    """The site of ``--site``: "LAT,LON,ELEV_M" (degrees, east positive; metres) or a name of the file's [[sites]]."""
    from orbitdeck.models.files.system import Site

    match = _SITE_TRIPLE.fullmatch(text)
    if match:
        try:
            latitude, longitude, elevation = (float(part) for part in match.groups())
        except ValueError:
            raise _problem(source, "--site", f"{text!r}: LAT,LON,ELEV_M must be three numbers (degrees, degrees "
                                             "east, metres)") from None
        site = Site(_COMMAND_LINE_SITE, latitude, longitude, elevation)
        problems = site.problems()
        if problems:
            field, reason = problems[0]
            raise _problem(source, "--site", f"{field} {reason}")
        return site
    try:
        return system.site(text.strip())
    except KeyError:
        names = ", ".join(repr(s.name) for s in system.sites)
        known = f"the file's sites are {names}" if names else "the file has no [[sites]]"
        raise _problem(source, "--site", f"no site named {text.strip()!r} ({known}); or give LAT,LON,ELEV_M") from None


def site_text(site) -> str:
    """A site for people: its name (when it has its own) and coordinates."""
    where = f"latitude {site.latitude:g} deg, longitude {site.longitude:g} deg east, {site.elevation:g} m"
    return where if site.name == _COMMAND_LINE_SITE else f"{site.name} ({where})"


def _bjd(text: str, field: str, source: str, coord, location):
    from orbitdeck.models.motion.sites import parse_time

    try:
        return parse_time(text, coord, location)
    except ValueError as error:
        raise _problem(source, field, str(error)) from None


def _text_table(rows: list[dict], with_sky: bool) -> str:
    if not with_sky:
        head = ["planet", "epoch", "mid [BJD_TDB]", "+-1 sigma [min]", "ingress [BJD_TDB]", "egress [BJD_TDB]",
                "overlaps"]
        body = [[r["planet"], str(r["epoch"]), f"{r['mid_bjd_tdb']:.5f}", format_number(r["sigma_min"]),
                 "-" if r["ingress_bjd_tdb"] is None else f"{r['ingress_bjd_tdb']:.5f}",
                 "-" if r["egress_bjd_tdb"] is None else f"{r['egress_bjd_tdb']:.5f}",
                 " ".join(r["overlaps"]) or "-"] for r in rows]
        return render(head, body)
    head = ["planet", "epoch", "mid [UTC]", "+-1 sigma [min]", "ingress", "egress", "altitude [deg]",
            "airmass", "Sun [deg]", "Moon sep. [deg]", "Moon lit", "observable", "overlaps"]
    body = []
    for r in rows:
        state = "yes" if r["observable"] else "partial" if r["partial"] else "no"
        body.append([r["planet"], str(r["epoch"]), r["mid_utc"][:16].replace("T", " "), format_number(r["sigma_min"]),
                     (r["ingress_utc"] or "-")[11:16] or "-", (r["egress_utc"] or "-")[11:16] or "-",
                     format_number(r["altitude_deg"]), format_number(r["airmass"]), format_number(r["sun_altitude_deg"]),
                     format_number(r["moon_separation_deg"]), format_number(r["moon_illuminated_fraction"]), state,
                     " ".join(r["overlaps"]) or "-"])
    return render(head, body)


def csv_text(rows: list[dict]) -> str:
    """The rows as CSV (overlaps separated by spaces, unknown values empty)."""
    buffer = io.StringIO()
    if rows:
        writer = csv.DictWriter(buffer, fieldnames=list(rows[0]), lineterminator="\n")
        writer.writeheader()
        for row in rows:
            writer.writerow({k: (" ".join(v) if isinstance(v, list) else "" if v is None else v)
                             for k, v in row.items()})
    return buffer.getvalue()


def ics_bytes(rows: list[dict], sky, system) -> bytes:
    """An iCalendar file with one event per observable transit: its window, baselines included."""
    import astropy.units as u
    from astropy.time import Time
    from icalendar import Calendar, Event

    from orbitdeck.models.motion.earth_orientation import offline_astropy

    baseline = sky.conditions.baseline_h * u.hour
    calendar = Calendar()
    calendar.add("prodid", "-//orbitdeck//transit forecasts//EN")
    calendar.add("version", "2.0")
    stamp = datetime.now(timezone.utc).replace(microsecond=0)
    slug = re.sub(r"[^A-Za-z0-9]+", "-", system.name).strip("-").lower() or "system"
    for k, row in enumerate(rows):
        if not row["observable"]:
            continue
        known = row["ingress_utc"] is not None
        with offline_astropy():   # quiet about years beyond the leap-second list (the notes say it)
            first = (Time(sky.ingress_utc[k] if known else sky.mid_utc[k]) - baseline).to_datetime(timezone.utc)
            last = (Time(sky.egress_utc[k] if known else sky.mid_utc[k]) + baseline).to_datetime(timezone.utc)
        event = Event()
        event.add("uid", f"{slug}-{row['planet']}-{row['epoch']}@orbitdeck")
        event.add("dtstamp", stamp)
        event.add("dtstart", first.replace(microsecond=0))
        event.add("dtend", last.replace(microsecond=0))
        event.add("summary", f"Transit of {system.star.name} {row['planet']} (epoch {row['epoch']})")
        event.add("location", site_text(sky.site))
        event.add("description", "\n".join([
            f"mid-transit {row['mid_utc']} (BJD_TDB {row['mid_bjd_tdb']:.5f}), "
            f"1 sigma {row['sigma_min']:.1f} min",
            f"ingress {row['ingress_utc'] or 'unknown'}, egress {row['egress_utc'] or 'unknown'}; "
            f"the event includes {sky.conditions.baseline_h:g} h of baseline each side",
            f"star altitude {row['altitude_deg']:.1f} deg at mid-transit, Sun {row['sun_altitude_deg']:.1f} deg, "
            f"Moon {row['moon_separation_deg']:.0f} deg away and {row['moon_illuminated_fraction']:.0%} lit",
            f"overlapping transits: {', '.join(row['overlaps']) or 'none'}",
            f"orbitdeck: {CAUTION}"]))
        calendar.add_component(event)
    return calendar.to_ical()


def cmd_transits(args) -> int:
    from orbitdeck.dashboard.cli import _load
    from orbitdeck.models.files.system_file import atomic_write
    from orbitdeck.models.motion.forecast import Conditions, ForecastInputError, forecast_transits
    from orbitdeck.models.motion.sites import earth_location, star_coordinate
    from orbitdeck.models.motion.visibility import forecast_rows, transit_sky

    source = args.file or "demo"
    system = _load(args.file)
    site = resolve_site(args.site, system, source) if args.site is not None else None
    conditions = Conditions(args.min_altitude, args.max_sun_altitude, args.baseline)
    if conditions.problems():
        from orbitdeck.models import SystemFileError
        from orbitdeck.models.files.system_file import Problem

        raise SystemFileError([Problem(source, "--" + field.replace("_", "-"), reason)
                               for field, reason in conditions.problems()])
    notes = []
    positioned = system.star.has_position
    if site is not None and not positioned:
        if args.ics:
            raise _problem(source, "star.ra", "the file gives no ra and dec for the star, which --ics needs")
        notes.append("the file gives no star.ra and star.dec: no sky columns at the site")
    coord = star_coordinate(system.star) if positioned else None
    location = earth_location(site) if site is not None else None
    start, start_note = _bjd(args.start, "--start", source, coord, location)
    end, end_note = _bjd(args.end, "--end", source, coord, location)
    notes += [n for n in (start_note, end_note) if n]
    if args.ics and site is None:
        raise _problem(source, "--ics", "needs --site: observability is decided at a site")
    try:
        forecast = forecast_transits(system, start, end)
    except ForecastInputError as error:
        from orbitdeck.models import SystemFileError
        from orbitdeck.models.files.system_file import Problem

        raise SystemFileError([Problem(source, f"--{field}" if field in ("start", "end") else field, reason)
                               for field, reason in error.problems]) from None
    notes += list(forecast.notes)
    sky = transit_sky(forecast, system.star, site, conditions) if site is not None and positioned else None
    if sky is not None:
        notes += list(sky.notes)
    rows = forecast_rows(forecast, sky)

    if args.json:
        json.dump(rows, sys.stdout, indent=1, allow_nan=False)
        sys.stdout.write("\n")
    elif args.csv:
        atomic_write(args.csv, csv_text(rows).encode("utf-8"))
        print(f"wrote {len(rows)} transits to {args.csv}", file=sys.stderr)
    elif args.ics:
        atomic_write(args.ics, ics_bytes(rows, sky, system))
        print(f"wrote {sum(r['observable'] for r in rows)} observable transits to {args.ics}", file=sys.stderr)
    else:
        lines = [f"transits of {system.name}, BJD_TDB {start:.5f} to {end:.5f}", CAUTION]
        if sky is not None:
            lines.append(f"site: {site_text(site)}; observable: the star at or above "
                         f"{conditions.min_altitude_deg:g} deg and the Sun at or below "
                         f"{conditions.max_sun_altitude_deg:g} deg from {conditions.baseline_h:g} h before ingress "
                         f"to {conditions.baseline_h:g} h after egress (geometric altitudes); times in UTC")
        sys.stdout.write("\n".join(lines) + "\n" + _text_table(rows, sky is not None) + "\n")
        if sky is not None:
            sys.stdout.write(f"{int(sky.observable.sum())} observable, {int(sky.partial.sum())} partial, "
                             f"of {len(rows)} transits\n")
    out = sys.stdout if not (args.json or args.csv or args.ics) else sys.stderr
    if args.json or args.csv or args.ics:
        notes.insert(0, CAUTION)
    for note in notes:
        out.write(f"{'note' if note == CAUTION else 'warning'}: {note}\n")
    return 0


def register(commands) -> None:
    """Add the ``transits`` subcommand."""
    from orbitdeck.dashboard.cli import _add_file
    from orbitdeck.models.motion.forecast import (DEFAULT_BASELINE_H, DEFAULT_MAX_SUN_ALTITUDE_DEG,
                                                  DEFAULT_MIN_ALTITUDE_DEG, MAX_RANGE_DAYS)

    parser = commands.add_parser(
        "transits", help="forecast transits and their visibility from a site",
        description="Forecast every transit between two times from each planet's transit_time and period, with "
                    "the timing uncertainty grown over the epochs, ingress and egress, overlaps of planets and, "
                    "from a site, the star's and the Sun's altitude, the Moon and whether the transit can be "
                    f"observed. The range spans at most 5 years ({MAX_RANGE_DAYS:g} d). Predictions from a linear "
                    "ephemeris: model estimates.")
    _add_file(parser)
    parser.add_argument("--start", required=True, metavar="TIME",
                        help="start of the range: BJD_TDB (e.g. 2461041.5) or an ISO date/time in UTC "
                             "(2026-01-01, 2026-01-01T18:00)")
    parser.add_argument("--end", required=True, metavar="TIME", help="end of the range, as --start")
    parser.add_argument("--site", metavar="SITE",
                        help="LAT,LON,ELEV_M (degrees, degrees east, metres; write --site=-30.2,-70.8,2200 when it "
                             "starts with a minus) or the name of a [[sites]] entry of the file")
    parser.add_argument("--min-altitude", type=float, default=DEFAULT_MIN_ALTITUDE_DEG, metavar="DEG",
                        help=f"lowest altitude of the star over the window (default {DEFAULT_MIN_ALTITUDE_DEG:g})")
    parser.add_argument("--max-sun-altitude", type=float, default=DEFAULT_MAX_SUN_ALTITUDE_DEG, metavar="DEG",
                        help=f"highest altitude of the Sun over the window (default {DEFAULT_MAX_SUN_ALTITUDE_DEG:g})")
    parser.add_argument("--baseline", type=float, default=DEFAULT_BASELINE_H, metavar="H",
                        help=f"hours before ingress and after egress the window includes "
                             f"(default {DEFAULT_BASELINE_H:g})")
    output = parser.add_mutually_exclusive_group()
    output.add_argument("--json", action="store_true", help="print a JSON list of transits instead of a table")
    output.add_argument("--csv", metavar="F", help="write the transits as CSV to F")
    output.add_argument("--ics", metavar="F", help="write an iCalendar file to F: one event per observable transit "
                                                  "(needs --site)")
    parser.set_defaults(run=cmd_transits)
