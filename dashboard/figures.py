"""Static figures of every view, for slides and papers: one file per plot, rendered through matplotlib.

The figures are the views' own HoloViews objects (``view.figure("matplotlib")``,
the elements the live Bokeh plots are made of, with their looks for
matplotlib), so they carry the same colours, labels and titles as the page.
Every view whose class has a ``figure`` method takes part; the others are
named as skipped. A plot becomes one file:

* PNG: 1600 pixels wide (:data:`SLIDE_WIDTH_PX`, the width of a full-HD
  slide), the height following the plot, on a white ground;
* SVG and PDF: vector drawings of the same size in inches (the habitable
  zone's graded band, an image, embedded at the PNG's resolution).

Each file carries its caption (the view, the plot's title, and that the
results are model estimates under the stated assumptions) in its own
metadata, and ``captions.txt`` beside the figures repeats the captions with
the provenance of the numbers (input, assumptions, draws and seed). The
command line (``orbitdeck figures``) and the page's download button both
call :func:`figure_files`; the button packs the files with
:func:`figures_archive`. No time of day is written into any file, so the same
state gives the same bytes.
"""

from __future__ import annotations

import io
import re
import unicodedata
import zipfile
from dataclasses import dataclass

# HoloViews, matplotlib and the models are imported where used: the command line reads FORMATS for its --help

#: the formats a figure can be written in
FORMATS = ("png", "svg", "pdf")
#: width of a PNG figure [px]: a full-HD slide
SLIDE_WIDTH_PX = 1600
#: white margin around a figure's drawing [in]
MARGIN_IN = 0.1
#: the file of captions written beside the figures
CAPTIONS_FILE = "captions.txt"
#: longest part of a file name taken from a plot's title [characters]
MAX_TITLE_PART = 48
_BACKEND = "matplotlib"
#: words a cut title does not end on
_LINKING_WORDS = {"a", "an", "and", "at", "by", "each", "for", "from", "in", "of", "on", "over", "the", "to",
                  "with"}
#: fixed settings of the rendering: names shown as typed (a "$" in a planet's name starts no formula; the
#: logarithmic axes, whose labels matplotlib writes as formulas, get plain numbers instead), SVG element ids
#: and PDF files that do not change from one run to the next
_RC = {"text.parse_math": False, "svg.hashsalt": "orbitdeck", "pdf.fonttype": 42}
#: the time stamp of every member of an archive (zip has no "none"): the earliest it can hold
_ZIP_TIME = (1980, 1, 1, 0, 0, 0)


@dataclass(frozen=True)
class Figure:
    """One plot of a view: its view's title, its own title ("" when it has none), its file name without
    extension, and the HoloViews object."""

    view: str
    title: str
    stem: str
    plot: object


@dataclass(frozen=True)
class FigureFile:
    """A figure rendered: its file name, content and caption."""

    name: str
    data: bytes
    caption: str


def slug(text: str, limit: int = MAX_TITLE_PART) -> str:
    """Lower-case ASCII letters, digits and hyphens from ``text`` (a safe part of a file name), cut at a
    hyphen to at most ``limit`` characters; "" when nothing is left."""
    plain = unicodedata.normalize("NFKD", str(text)).encode("ascii", "ignore").decode("ascii").lower()
    words = re.sub(r"[^a-z0-9]+", "-", plain).strip("-").split("-")
    kept, length = [], -1
    for word in words:
        if length + 1 + len(word) > limit:
            while len(kept) > 1 and kept[-1] in _LINKING_WORDS:   # a cut title ends on a word that says something
                kept.pop()
            break
        kept.append(word)
        length += 1 + len(word)
    return "-".join(kept or words[:1])[:limit].strip("-")


def _plots_of(obj) -> list:
    """The single plots of a view's figure: a Layout or a list is opened, an overlay or an element is one plot."""
    import holoviews as hv

    if isinstance(obj, (list, tuple)):
        return [plot for item in obj for plot in _plots_of(item)]
    if isinstance(obj, hv.Layout):
        return [plot for item in obj for plot in _plots_of(item)]
    return [obj] if obj is not None else []


def plot_title(plot, backend: str = _BACKEND) -> str:
    """The title a plot shows with ``backend``: its own, else the first one its elements carry ("" if none)."""
    import holoviews as hv

    candidates = [plot, *plot.traverse(lambda element: element, [hv.Element])]
    for item in candidates:
        title = hv.Store.lookup_options(backend, item, "plot").kwargs.get("title")
        if isinstance(title, str) and title.strip() and "{" not in title:
            return title.strip()
    return ""


def has_figures(view_class) -> bool:
    """Whether a view class gives static figures (a ``figure`` method of its own, not the base class's)."""
    from .views.common import View

    method = getattr(view_class, "figure", None)
    return callable(method) and method is not View.figure


def figures_of(app, backend: str = _BACKEND) -> tuple[list[Figure], list[str]]:
    """Every plot of every view of ``app`` with static figures, in the order of the tabs, named for files;
    and the titles of the views without static figures (skipped, not built)."""
    from .app import VIEW_CLASSES

    figures, skipped = [], []
    for view_class in VIEW_CLASSES:
        if not has_figures(view_class):
            skipped.append(view_class.title)
            continue
        view = app.views[view_class.title]
        for plot in _plots_of(view.figure(backend)):
            title = plot_title(plot, backend)
            view_part = slug(view_class.title) or "view"
            title_part = slug(title[len(view_class.title):] if title.startswith(view_class.title) else title)
            # the place in the page first: names are unique, and sort as the page shows them
            stem = f"{len(figures) + 1:02d}_{view_part}" + (f"_{title_part}" if title_part else "")
            figures.append(Figure(view_class.title, title, stem, plot))
    return figures, skipped


def caption_of(figure: Figure, system_name: str) -> str:
    """What a figure shows and what its numbers are, in one sentence or two."""
    from orbitdeck.models.files.provenance import CAUTION

    what = f"{figure.view}: {figure.title}" if figure.title else figure.view
    return f"{system_name} \u2013 {what}. {CAUTION}"


def _metadata(fmt: str, title: str, caption: str) -> dict:
    from orbitdeck import __version__

    creator = f"orbitdeck {__version__}"
    if fmt == "png":
        return {"Title": title, "Description": caption, "Software": creator}
    if fmt == "svg":
        return {"Title": title, "Description": caption, "Creator": creator, "Date": None}
    return {"Title": title, "Subject": caption, "Creator": creator, "CreationDate": None}


def render_figure(plot, fmt: str, title: str = "", caption: str = "", width_px: int = SLIDE_WIDTH_PX) -> bytes:
    """The bytes of ``plot`` drawn through matplotlib as ``fmt`` ("png", "svg" or "pdf").

    The drawing is cut to its content (legends outside the axes included)
    with a margin of :data:`MARGIN_IN`, and a PNG is ``width_px`` pixels
    wide; ``title`` and ``caption`` go into the file's metadata.
    """
    import holoviews as hv
    import matplotlib
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    from .views.plotting import plain_log_axes

    if fmt not in FORMATS:
        raise ValueError(f"unknown figure format {fmt!r}; one of {', '.join(FORMATS)}")
    with matplotlib.rc_context(_RC):
        renderer = hv.renderer(_BACKEND)
        drawn = renderer.get_plot(plot)
        figure = drawn.state
        for axes in figure.axes:
            plain_log_axes(axes)
            _texts_inside(axes)
        aspect = getattr(drawn, "aspect", None)
        if isinstance(aspect, (int, float)) and "axis" in drawn.handles:
            # the plot's width over height as asked: HoloViews sets it as a data aspect, which comes out wrong
            # by a factor ln 10 when one axis only is logarithmic; the box aspect is the shape itself
            drawn.handles["axis"].set_aspect("auto")
            drawn.handles["axis"].set_box_aspect(1.0 / aspect)
        canvas = FigureCanvasAgg(figure)
        extra = [artist for artists in drawn.traverse(lambda p: p.handles.get("bbox_extra_artists"))
                 if artists for artist in artists]
        figure.draw_without_rendering()
        box = figure.get_tightbbox(canvas.get_renderer(), bbox_extra_artists=extra).padded(MARGIN_IN)
        # the width in pixels is the box's width times the resolution, rounded down: aim at its middle
        dpi = (width_px + 0.5) / box.width
        out = io.BytesIO()
        figure.savefig(out, format=fmt, dpi=dpi, bbox_inches=box, facecolor="white",
                       metadata=_metadata(fmt, title, caption))
    return out.getvalue()


def _texts_inside(axes) -> None:
    """Cut the labels of ``axes`` at its frame, as the page does, and leave out those placed far beyond it
    (a rung of the period ladder millions of axis spans away): they would take room in the figure, and
    matplotlib's font rasteriser refuses positions that far out."""
    frame = axes.get_window_extent()
    low_x, high_x = frame.x0 - frame.width, frame.x1 + frame.width
    low_y, high_y = frame.y0 - frame.height, frame.y1 + frame.height
    for text in axes.texts:
        text.set_clip_on(True)
        x, y = text.get_transform().transform(text.get_position())
        if not (low_x <= x <= high_x and low_y <= y <= high_y):
            text.set_visible(False)


def captions_text(files: list[FigureFile], provenance: dict, system_name: str, notes: list[str]) -> str:
    """The captions file: what the figures are, the provenance of their numbers, one caption per file."""
    from orbitdeck.models.files.provenance import provenance_lines

    lines = [f"Figures of {system_name}, drawn by orbitdeck through matplotlib "
             f"(PNG {SLIDE_WIDTH_PX} px wide; SVG and PDF as vector drawings).",
             *provenance_lines(provenance), *notes, ""]
    for file in files:
        lines += [file.name, f"  {file.caption}"]
    return "\n".join(lines) + "\n"


def figure_files(app, fmt: str = "png", provenance: dict | None = None,
                 figures: list[Figure] | None = None) -> list[FigureFile]:
    """Every figure of ``app`` rendered as ``fmt``, and last the captions file.

    ``provenance`` describes the numbers (default ``app.provenance()``);
    ``figures`` are those of :func:`figures_of`, when already listed.
    """
    if figures is None:
        figures, _ = figures_of(app)
    name = app.system.name
    files = []
    for figure in figures:
        caption = caption_of(figure, name)
        data = render_figure(figure.plot, fmt, figure.title or figure.view, caption)
        files.append(FigureFile(f"{figure.stem}.{fmt}", data, caption))
    notes = [f"time of the positions: BJD_TDB {app.time:.5f}"]
    if app.selected:
        notes.append(f"highlighted (and the sky shown from): planet {app.selected}")
    text = captions_text(files, provenance or app.provenance(), name, notes)
    return files + [FigureFile(CAPTIONS_FILE, text.encode("utf-8"), "")]


def session_copy(app):
    """A new app showing the state that ``app`` (a served session, say) shows, with every view built current.

    It shows a copy of the system with the same derivation (a ``Derived`` is
    never written after it is made), time, selected planet, display switches
    and planet colours, and carries over the settings of the views built in
    ``app`` that shape their figures: the parameters a view class names in
    ``figure_parameters`` (a dotted name reaches into a part of the view,
    ``"sky_from.window"``). Nothing of ``app`` is changed, and no view of a
    hidden tab of a served page is touched.
    """
    from .app import OrbitDeckApp

    system = app.system.copy()
    copy = OrbitDeckApp(system, source=app.source, colours=app.colours.copy())
    copy.install(system, app.derived, app.elements, time=app.time, selected=app.selected, show_hill=app.show_hill,
                 reference=app.reference, uncertainty=app.uncertainty, samples=app.samples)
    for title in app.views.built():
        settings: dict = {}
        for dotted in getattr(type(app.views[title]), "figure_parameters", ()):
            *path, name = dotted.split(".")
            settings.setdefault(tuple(path), {})[name] = getattr(_reach(app.views[title], path), name)
        for path, values in settings.items():   # each part's settings at once: it updates once
            _reach(copy.views[title], path).param.update(**values)
    return copy


def _reach(obj, path):
    """The part of ``obj`` at the attribute names ``path``."""
    for name in path:
        obj = getattr(obj, name)
    return obj


def session_figure_files(app, fmt: str = "png") -> list[FigureFile]:
    """The figure files of the state a session shows (see :func:`session_copy`), with its provenance
    (its input file, and whether it was edited since)."""
    return figure_files(session_copy(app), fmt, provenance=app.provenance())


def figures_archive(files: list[FigureFile]) -> bytes:
    """The files as one zip archive (stored as they are: PNG, SVG and PDF are compressed or small)."""
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w") as archive:
        for file in files:
            member = zipfile.ZipInfo(file.name, date_time=_ZIP_TIME)
            member.compress_type = zipfile.ZIP_DEFLATED if file.name.endswith((".txt", ".svg")) else zipfile.ZIP_STORED
            member.external_attr = 0o644 << 16
            archive.writestr(member, file.data)
    return out.getvalue()
