"""The ``figures`` subcommand: every view's plots as files for slides and papers."""

from __future__ import annotations

import os
import time
from pathlib import Path

from orbitdeck.models.files.problems import Problem, SystemFileError


def _refuse(path, reason: str) -> SystemFileError:
    return SystemFileError([Problem(str(path), "", reason)])


def _folder(path: str) -> Path:
    """The output folder, made if missing; an error naming it when it cannot be."""
    folder = Path(path)
    if os.path.lexists(folder) and not folder.is_dir():
        raise _refuse(path, "is not a folder; figures are written into a folder (-o DIR)")
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as error:
        raise _refuse(path, f"cannot be made: {error.strerror or error}") from None
    return folder


def figures_app(source, system, samples: int, seed: int, when: float | None):
    """The app of the figures: ``system`` read from ``source`` at time ``when`` (default its epoch), with
    ``samples`` Monte Carlo draws (0: nominal values only), every view built current."""
    from orbitdeck.models import derive

    from .app import OrbitDeckApp

    low, high = OrbitDeckApp.param.samples.bounds
    if low <= samples <= high:   # derived once, with the draws, as the page does with its switch on
        app = OrbitDeckApp(system, source=source, uncertainty=True, samples=samples, seed=seed)
    else:
        app = OrbitDeckApp(system, source=source)
        if samples:   # fewer draws than the page offers
            app.derived = derive(system, samples=samples, seed=seed)
    if when is not None:
        app.time = float(when)
    return app


def cmd_figures(args) -> int:
    from orbitdeck.dashboard.cli import _source, _system, say
    from orbitdeck.models.files.system_file import atomic_write

    from .figures import CAPTIONS_FILE, SLIDE_WIDTH_PX, figure_files, figures_of

    start = time.perf_counter()
    source = _source(args.file)
    system = _system(source)
    folder = _folder(args.output)
    app = figures_app(source, system, args.samples, args.seed, args.time)
    figures, skipped = figures_of(app)
    names = [f"{figure.stem}.{args.format}" for figure in figures] + [CAPTIONS_FILE]
    existing = [folder / name for name in names if os.path.lexists(folder / name)]
    if existing and not args.overwrite:
        more = f" and {len(existing) - 1} more of the files to write" if len(existing) > 1 else ""
        raise _refuse(existing[0], f"exists{more}; nothing was written (give --overwrite to replace them)")
    files = figure_files(app, args.format, figures=figures)
    for file in files:
        atomic_write(folder / file.name, file.data, overwrite=args.overwrite)
        say(f"wrote {folder / file.name}")
    size = f"{SLIDE_WIDTH_PX} px wide" if args.format == "png" else "vector drawings"
    say(f"{len(files) - 1} figures of {system.name} ({args.format.upper()}, {size}) and {CAPTIONS_FILE} in "
        f"{time.perf_counter() - start:.1f} s; the numbers are model estimates under the stated assumptions, "
        "not measurements")
    if skipped:
        say(f"note: no static figures of {', '.join(skipped)} (skipped)")
    return 0


def register(commands) -> None:
    """Add the ``figures`` subcommand."""
    from orbitdeck.dashboard.cli import (DEFAULT_SAMPLES, DEFAULT_SEED, MAX_SAMPLES, MAX_SEED, _add_file, bounded,
                                         time_value)

    from .figures import FORMATS, SLIDE_WIDTH_PX

    figures = commands.add_parser(
        "figures", help="write every view's plots as image files for slides and papers",
        description="Write every plot of every view of a system as a file of its own, drawn through "
                    f"matplotlib from the same elements as the dashboard, with the same colours and labels "
                    f"(PNG {SLIDE_WIDTH_PX} px wide, or SVG or PDF as vector drawings), and captions.txt with "
                    "each figure's caption and the provenance of its numbers. Existing files are left alone "
                    "unless --overwrite is given.")
    _add_file(figures)
    figures.add_argument("-o", "--output", metavar="DIR", required=True,
                         help="folder to write the figures into (made if missing)")
    figures.add_argument("--format", choices=FORMATS, default="png",
                         help=f"file format: png ({SLIDE_WIDTH_PX} px wide), svg or pdf (default png)")
    figures.add_argument("--overwrite", action="store_true",
                         help="replace figures (and captions.txt) already in DIR, also read-only ones or ones "
                              "with other hard links (a link then keeps the old content); without it an existing "
                              "file stops the command before anything is written")
    figures.add_argument("--time", type=time_value, metavar="BJD",
                         help="time of the positions and of the sky [BJD_TDB]; default: the system epoch")
    figures.add_argument("--samples", type=bounded(0, MAX_SAMPLES, whole=True), default=DEFAULT_SAMPLES,
                         metavar="N", help=f"Monte Carlo samples for the error bars (16th-84th percentiles), 0 to "
                                           f"{MAX_SAMPLES}; 0 for nominal values only (default {DEFAULT_SAMPLES}, "
                                           "as for table)")
    figures.add_argument("--seed", type=bounded(0, MAX_SEED, whole=True), default=DEFAULT_SEED, metavar="S",
                         help=f"seed of the random generator, 0 to {MAX_SEED} (default {DEFAULT_SEED})")
    figures.set_defaults(run=cmd_figures)
