"""Static snapshots: every view of one state of a system in one self-contained HTML file.

The page holds every view (plots keep pan, zoom and hover) and table, the
comparison with a pinned reference state when there is one, a provenance
footer (orbitdeck version, export time, the input's name and SHA-256, every
assumption, draws and seed, the methods used) and the full input system as
system-file text, so ``orbitdeck snapshot --extract`` gives the system back.
It opens from disk with no network: every script, style sheet and font is
inlined (:mod:`orbitdeck.dashboard.offline`). Printed, it puts each view on
a page of its own. All user text is escaped.

The export time is the only thing in the page that is not determined by
its input: two exports of the same state differ only there
(:func:`without_export_time`). The JSON, ECSV, LaTeX and BibTeX exports
hold no time at all.
"""

from __future__ import annotations

import base64
import html
import re
from dataclasses import dataclass
from datetime import datetime, timezone

import panel as pn

from orbitdeck.models import System, derive, dumps_system, loads_system
from orbitdeck.models.files.provenance import provenance_of
from orbitdeck.models.files.system_file import Problem, SystemFileError, atomic_write
from orbitdeck.models.files.sources import SystemSource

from .offline import render_offline
from .views import look

#: name of the <meta> element that carries the input system (base64 of its TOML text)
SYSTEM_META = "orbitdeck-system"
_META_PATTERN = re.compile(r'<meta name="' + SYSTEM_META + r'" content="([^"]*)">')
#: the attribute that marks the tag; in a page of ours it stands once (names and notes are
#: written with their quotes escaped, as &quot; in the markup and \" in the Bokeh document)
_META_ATTRIBUTE = re.compile(r'name\s*=\s*"' + SYSTEM_META + '"', re.IGNORECASE)
#: largest snapshot page written or read back [bytes]
MAX_SNAPSHOT_BYTES = 64 * 1024 * 1024
_EXPORT_TIME_PATTERN = re.compile(r"exported \d{4}-\d\d-\d\dT\d\d:\d\d:\d\dZ")
#: one view per printed page (set inside each section's shadow root, where the page's own CSS cannot reach)
PRINT_SECTION_CSS = "@media print { :host { break-before: page; break-inside: avoid-page; } }"
#: the page printed: no fixed widths beyond the paper, no scroll boxes that would cut tables
PRINT_PAGE_CSS = ("<style>@media print { @page { size: A4 landscape; margin: 12mm; } "
                  "body { margin: 0; } }</style>")


@dataclass(frozen=True)
class Provenance:
    """Where a snapshot's numbers came from: the input and the choices of the export."""

    source: SystemSource
    exported_utc: str
    samples: int
    seed: int | None
    time: float


def _esc(text) -> str:
    return html.escape(str(text), quote=True)


def _edited_text(system: System, source: SystemSource) -> str | None:
    """The system text of ``system`` when it differs from what ``source`` holds (None when it is that state)."""
    text = dumps_system(system)
    try:
        read = dumps_system(source.system())
    except SystemFileError:
        return text
    return None if read == text else text


def provenance_html(provenance: dict, info: Provenance, system_text: str) -> str:
    """The provenance footer (from a provenance document), with the system file shown as text."""
    source = provenance["input"]
    assumptions = "; ".join(f"{k} = {v}" for k, v in provenance["assumptions"].items())
    sampling = (f"{provenance['samples']} Monte Carlo samples, seed {provenance['seed']}; intervals are "
                "16th-84th percentiles" if provenance["samples"] else "nominal values only (no Monte Carlo sampling)")
    rows = [
        ("orbitdeck", provenance["orbitdeck"]),
        ("export", f"exported {info.exported_utc}"),
        ("input file", source["name"]),
        ("input SHA-256", source["sha256"]),
    ]
    if source["edited"]:
        rows.append(("edited", f"the state shown was edited after reading; SHA-256 of its system text "
                               f"(below): {source['edited_sha256']}"))
    rows += [
        ("assumptions", f"{assumptions}; masses without a measurement from Chen & Kipping 2017"),
        ("uncertainties", sampling),
        ("time of positions", f"BJD_TDB {info.time:.5f}"),
        ("methods", ", ".join(provenance["methods"])),
    ]
    table = "".join(f'<tr><th style="text-align:left;padding-right:12px">{_esc(k)}</th><td>{_esc(v)}</td></tr>'
                    for k, v in rows)
    return (
        '<section id="orbitdeck-provenance" style="font-size:12px;color:#333;border-top:1px solid #bbb;'
        'margin-top:16px;padding-top:8px"><h3 style="margin:4px 0">Provenance</h3>'
        f"<table>{table}</table>"
        "<p>All values are model estimates under the stated assumptions, not measurements.</p>"
        "<details><summary>Input system (orbitdeck-system/1)</summary>"
        f'<pre id="orbitdeck-system-text" style="white-space:pre-wrap">{_esc(system_text)}</pre></details></section>')


def _section(title: str, body):
    """One view under its heading, starting a new page when printed."""
    return pn.Column(pn.pane.HTML(f'<h2 class="od-view-title">{_esc(title)}</h2>', margin=(0, 10),
                                  stylesheets=[look.SECTION_CSS]), body,
                     sizing_mode="stretch_width", stylesheets=[PRINT_SECTION_CSS])


def snapshot_layout(system: System, info: Provenance, pinned=None, pinned_label: str = "", pinned_elements=None,
                    ensemble=None, selected: str | None = None):
    """A plain Panel layout of every view of ``system`` (and the comparison with ``pinned``, whose Keplerian
    elements ``pinned_elements`` place its planets in Layout) for a static page.

    ``ensemble`` is an N-body ensemble run on this state or an earlier one (a
    :class:`~orbitdeck.dashboard.views.ensemble_run.FinishedEnsemble`); the
    Dynamics section shows it, marked when it belongs to an earlier state, or
    says that the snapshot holds none. ``selected`` is the planet highlighted (the
    first one if None or not in the system).
    """
    from .app import OrbitDeckApp
    from .views.dynamics import DynamicsView

    app = OrbitDeckApp(system, source=info.source)
    app.time = info.time
    if selected in system.planet_names:
        app.selected = selected
    if info.samples:
        app.derived = derive(system, samples=info.samples, seed=info.seed)
    if pinned is not None:
        app.param.update(pinned=pinned, pinned_label=pinned_label or "pinned reference",
                         pinned_elements=pinned_elements)
    app.views[DynamicsView.title].ensemble.show(ensemble, static=True)
    sections = [_section(title, view.panel()) for title, view in app.views.items()
                if pinned is not None or title != "Compare"]
    provenance = provenance_of(system, app.derived, info.source.name, info.source.sha256,
                               edited_text=_edited_text(system, info.source))
    footer = pn.pane.HTML(provenance_html(provenance, info, dumps_system(system)), sizing_mode="stretch_width",
                          margin=(0, 10))
    return pn.Column(app.header, app.alerts, app.caution, *sections, footer, sizing_mode="stretch_width",
                     styles=look.ROOT_STYLES)


def render_snapshot(system: System, source_name: str, source_bytes: bytes, *, time: float | None = None,
                    samples: int = 0, seed: int | None = None, exported: datetime | None = None,
                    pinned=None, pinned_label: str = "", pinned_elements=None, ensemble=None,
                    selected: str | None = None) -> str:
    """The snapshot page of ``system`` as HTML text.

    Parameters
    ----------
    system : System
        The state to show (it is copied, never edited).
    source_name, source_bytes : str, bytes
        Name and content of the input file it was read from, for the
        provenance (SHA-256); a state edited since is marked as such, with
        the SHA-256 of its own system text.
    time : float, optional
        Time of the positions [BJD_TDB]; default the system epoch.
    samples, seed : int
        Monte Carlo samples (0: nominal only) and seed.
    exported : datetime, optional
        Export time (default now, UTC).
    pinned : Derived, optional
        A reference state to compare with (a section "Compare"), described by ``pinned_label``; Layout
        and the Period ladder draw it beside the state shown.
    pinned_elements : ephemeris.OrbitalElements, optional
        The Keplerian elements of ``pinned`` (its planets' positions in Layout; without them only its
        orbits are drawn).
    ensemble : FinishedEnsemble, optional
        An N-body ensemble run in the dashboard, shown in the Dynamics section.
    selected : str, optional
        The planet highlighted in every view (the first one by default).
    """
    moment = (exported or datetime.now(timezone.utc)).astimezone(timezone.utc).replace(microsecond=0)
    info = Provenance(SystemSource(source_name, bytes(source_bytes)), moment.strftime("%Y-%m-%dT%H:%M:%SZ"),
                      samples, seed if samples else None, system.epoch if time is None else float(time))
    text = dumps_system(system)
    meta = (f'<meta name="{SYSTEM_META}" content="{base64.b64encode(text.encode("utf-8")).decode("ascii")}">'
            f"<style>{look.PAGE_CSS}</style>")
    page, _ = render_offline(snapshot_layout(system.copy(), info, pinned, pinned_label, pinned_elements, ensemble,
                                             selected),
                             f"{system.name} \u2013 orbitdeck snapshot", extra_head=meta + PRINT_PAGE_CSS)
    return page


def write_snapshot(path, system: System, source_name: str, source_bytes: bytes, overwrite: bool = False,
                   **options) -> int:
    """Write the snapshot atomically to ``path``; returns its size in bytes.

    Raises :class:`SystemFileError` when the page would be larger than
    :data:`MAX_SNAPSHOT_BYTES` (which ``--extract`` would refuse to read) or
    cannot be written (see :func:`~orbitdeck.models.files.system_file.atomic_write`,
    which ``overwrite`` is passed to).
    """
    data = render_snapshot(system, source_name, source_bytes, **options).encode("utf-8")
    if len(data) > MAX_SNAPSHOT_BYTES:
        raise SystemFileError([Problem(str(path), "", f"not written: the page would be {len(data)} bytes; "
                                                      f"snapshot pages are limited to {MAX_SNAPSHOT_BYTES} bytes")])
    atomic_write(path, data, overwrite=overwrite)
    return len(data)


def extract_system_text(page: str, source: str = "<snapshot>") -> str:
    """The system file embedded in a snapshot page, checked by the loader.

    Raises
    ------
    SystemFileError
        "is not an orbitdeck snapshot" for a page without the embedded
        system; "has been altered" for one with more than one; "damaged"
        (with the loader's problems, each naming the field) for one whose
        embedded system cannot be decoded or is not a valid system file.
    """
    marks = len(_META_ATTRIBUTE.findall(page))
    if not marks:
        raise SystemFileError([Problem(source, "", "is not an orbitdeck snapshot (no embedded system file)")])
    if marks > 1:
        raise SystemFileError([Problem(source, "", f"has been altered: it holds {marks} embedded system files "
                                                   "where a snapshot holds one")])

    def damaged(reason: str, more=()) -> SystemFileError:
        return SystemFileError([Problem(source, "", f"is an orbitdeck snapshot whose embedded system file is "
                                                    f"damaged: {reason}"), *more])

    match = _META_PATTERN.search(page)
    if not match:
        raise damaged("its tag is malformed")
    try:
        text = base64.b64decode(match.group(1), validate=True).decode("utf-8")
    except ValueError:  # binascii.Error and UnicodeDecodeError are ValueErrors
        raise damaged("it is not base64-encoded UTF-8 text") from None
    try:
        loads_system(text, f"{source} (embedded system file)", notes=[])
    except SystemFileError as error:
        raise damaged("it is not a valid system file", error.problems) from None
    return text


def without_export_time(page: str) -> str:
    """The page with its export time blanked, for comparing two exports."""
    return _EXPORT_TIME_PATTERN.sub("exported -", page)
