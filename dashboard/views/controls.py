"""Controls of the side area: the system file, the star, the assumptions, one planet, time and display.

Entries are text boxes that apply on Enter (or leaving the box) only after
their text has been checked against the parameter's own bounds; an invalid
entry shows an inline message and leaves the system unchanged. Sliders
apply on release (``value_throttled``). After every change the widgets are
refreshed from the model, so they always show what the views show, and the
messages of earlier actions are cleared: their cause (a refused text, a
name already taken, a file not loaded) is gone once the model has moved on.
Every switch and button carries an accessible name.
"""

from __future__ import annotations

import io
import re
from functools import partial

import panel as pn

from orbitdeck.models import Planet, System, SystemFileError, dumps_system, loads_system
from orbitdeck.models.files.system_file import MAX_FILE_BYTES
from orbitdeck.models.files.names import display_key, name_problem
from orbitdeck.models.files.system import MAX_PLANETS, TIME_BOUNDS
from orbitdeck.models.files.sources import SystemSource

from . import look
from .common import batched, escape
from .entries import Entry, Picker, Rejected, entry_text, parse_entry  # noqa: F401  (parse_entry: part of the API)
from .sky_from import TimePlayer
from .upload import SystemFileUpload

#: star entries: field, label, unit, optional (blank allowed)
STAR_ENTRIES = (("mass", "Mass [Msun]", "Msun", False), ("radius", "Radius [Rsun]", "Rsun", False),
                ("teff", "Teff [K]", "K", False),
                ("luminosity", "Luminosity [Lsun] (blank: 4 pi R^2 sigma Teff^4)", "Lsun", True))
#: planet entries (eccentricity has a slider)
PLANET_ENTRIES = (("period", "Period [d]", "d", False), ("radius", "Radius [Rearth]", "Rearth", False),
                  ("mass", "Mass [Mearth] (blank: estimated from radius)", "Mearth", True),
                  ("inclination", "Inclination [deg]", "deg", False),
                  ("omega", "Argument of periastron omega [deg]", "deg", False))
REDISTRIBUTION_CHOICES = {"full (f = 1/4)": "full", "dayside only (f = 1/2)": "dayside", "none (f = 2/3)": "none"}
MAX_NAME_LENGTH = 40
#: what a page that follows a presenter says when a change reaches it anyway
READ_ONLY = "read-only: this page follows the presenter; the change was not applied"
WIDGET_WIDTH = 290


def switch(owner, name: str, label: str) -> pn.widgets.CheckBoxGroup:
    """A checkbox bound both ways to the boolean parameter ``name`` of ``owner``.

    Made as a group of one so that the input sits inside its ``<label>`` and
    carries the label as its accessible name (a single Bokeh checkbox draws
    its label beside the input, where assistive technology does not find it).
    """
    box = pn.widgets.CheckBoxGroup(options=[label], value=[label] if getattr(owner, name) else [],
                                   width=WIDGET_WIDTH, margin=(4, 10))
    box.param.watch(lambda event: setattr(owner, name, label in event.new), "value")
    owner.param.watch(lambda event: setattr(box, "value", [label] if event.new else []), name)
    return box


def file_name_for(system_name: str) -> str:
    """A safe file name for the download of a system called ``system_name``."""
    stem = re.sub(r"[^A-Za-z0-9._-]+", "_", system_name).strip("._") or "system"
    return stem[:60] + ".toml"


def _message(pane, text: str = "", ok: bool = False) -> None:
    colour = "#1d6b1d" if ok else "#a11a1a"
    role = "status" if ok else "alert"
    pane.object = (f'<div role="{role}" style="color:{colour};font-size:12px">{escape(text)}</div>'
                   if text else "")



class Controls:
    """The side area of one app; every widget belongs to this session only."""

    def __init__(self, app):
        self.app = app
        self._quiet = False
        self._locked: list = []   # widgets lock() disabled
        entry = partial(Entry, width=WIDGET_WIDTH)
        self.file_input = SystemFileUpload(accept=".toml", max_bytes=MAX_FILE_BYTES, width=WIDGET_WIDTH)
        self.file_message = pn.pane.HTML("", width=WIDGET_WIDTH)
        self.download = pn.widgets.FileDownload(callback=self._download, filename="system.toml",
                                                label="Download the edited system file", color="primary",
                                                width=WIDGET_WIDTH)
        self.snapshot = pn.widgets.FileDownload(callback=self._snapshot, filename="snapshot.html",
                                                label="Download a snapshot of this state (HTML)",
                                                width=WIDGET_WIDTH)
        self.figures = pn.widgets.FileDownload(callback=self._figures, filename="figures.zip",
                                               label="Download every figure (PNG for slides, zip)",
                                               width=WIDGET_WIDTH)
        self.star_entries = {f: entry(label=label) for f, label, _, _ in STAR_ENTRIES}
        self.star_message = pn.pane.HTML("", width=WIDGET_WIDTH)
        self.albedo = pn.widgets.FloatSlider(label="Bond albedo A", start=0.0, end=0.99, step=0.01,
                                             width=WIDGET_WIDTH)
        self.redistribution = pn.widgets.Select(label="Heat redistribution", options=REDISTRIBUTION_CHOICES,
                                                width=WIDGET_WIDTH)
        self.assumption_message = pn.pane.HTML("", width=WIDGET_WIDTH)
        self.planet_select = Picker(label="Planet (also picked by clicking it in a view)",
                                    width=WIDGET_WIDTH)
        self.planet_entries = {f: entry(label=label) for f, label, _, _ in PLANET_ENTRIES}
        self.eccentricity = pn.widgets.FloatSlider(label="Eccentricity e", start=0.0, end=0.99, step=0.005,
                                                   width=WIDGET_WIDTH)
        self.planet_message = pn.pane.HTML("", width=WIDGET_WIDTH)
        self.remove_button = pn.widgets.Button(label="Remove this planet", color="danger", width=WIDGET_WIDTH)
        self.new_name = entry(label="New planet: name", placeholder="e.g. i")
        self.new_period = entry(label="New planet: period [d]")
        self.new_radius = entry(label="New planet: radius [Rearth]", value="1.0")
        self.add_button = pn.widgets.Button(label="Add the planet", width=WIDGET_WIDTH)
        self.add_message = pn.pane.HTML("", width=WIDGET_WIDTH)
        self.time_entry = entry(label="Time of the positions [BJD_TDB]")
        self.time_slider = pn.widgets.FloatSlider(label="Days after the epoch", start=0.0, end=10.0, step=0.01,
                                                  width=WIDGET_WIDTH)
        self.epoch_button = pn.widgets.Button(label="Back to the system epoch", width=WIDGET_WIDTH)
        self.time_message = pn.pane.HTML("", width=WIDGET_WIDTH)
        self.hill = switch(app, "show_hill", "Show Hill spheres (Layout)")
        self.reference = pn.widgets.Select.from_param(app.param.reference, label="Scale reference (Layout)",
                                                      width=WIDGET_WIDTH)
        self.uncertainty = switch(app, "uncertainty", "Show Monte Carlo uncertainties (all views)")
        lo, hi = app.param.samples.bounds
        self.samples = entry(label=f"Monte Carlo draws ({lo} to {hi})")
        self.uncertainty_message = pn.pane.HTML("", width=WIDGET_WIDTH)
        self.samples_message = pn.pane.HTML("", width=WIDGET_WIDTH)

        self.file_input.param.watch(self._load, "upload")
        self.file_input.param.watch(self._too_large, "oversize")
        for field, widget in self.star_entries.items():
            widget.param.watch(partial(self._star_entry, field), "value")
        self.albedo.param.watch(self._albedo, "value_throttled")
        self.redistribution.param.watch(self._redistribution, "value")
        self.planet_select.param.watch(self._pick, "value")
        for field, widget in self.planet_entries.items():
            widget.param.watch(partial(self._planet_entry, field), "value")
        self.eccentricity.param.watch(self._eccentricity, "value_throttled")
        self.remove_button.on_click(self._remove)
        self.add_button.on_click(self._add)
        self.time_entry.param.watch(self._time_entry, "value")
        self.samples.param.watch(self._samples, "value")
        self.time_slider.param.watch(self._time_slider, "value_throttled")
        self.epoch_button.on_click(lambda _: self._set_time(self.app.system.epoch))
        self.player = TimePlayer(app)
        #: the panes that show the outcome of an action (cleared when the model changes again)
        self.messages = (self.file_message, self.star_message, self.assumption_message, self.planet_message,
                         self.add_message, self.time_message, self.samples_message)
        app.param.watch(self._changed, ["derived", "selected", "time"])
        app.param.watch(self._uncertainty_note, "derived")
        self._uncertainty_note()
        self.sync()

    # -- model -> widgets ------------------------------------------------------
    def _changed(self, *_):
        """The model moved on: earlier messages lost their cause (an action sets its own afterwards)."""
        for pane in self.messages:
            if pane.object:
                pane.object = ""
        self.sync()

    def sync(self, *_):
        """Show the model's current values in every widget (without applying them back)."""
        app, system = self.app, self.app.system
        self._quiet = True
        try:
            for field, widget in self.star_entries.items():
                widget.value = entry_text(getattr(system.star, field))
            self.albedo.value = min(system.assumptions.bond_albedo, self.albedo.end)
            self.redistribution.value = system.assumptions.heat_redistribution
            names = system.planet_names
            self.planet_select.options = names
            if app.selected in names:
                self.planet_select.value = app.selected
                planet = system.planet(app.selected)
                for field, widget in self.planet_entries.items():
                    widget.value = entry_text(getattr(planet, field))
                self.eccentricity.value = min(planet.eccentricity, self.eccentricity.end)
            longest = max((p.period for p in system.planets), default=10.0)
            self.time_slider.end = round(max(min(longest, TIME_BOUNDS[1] - system.epoch), 1.0), 2)
            self.time_slider.value = min(max(app.time - system.epoch, 0.0), self.time_slider.end)
            self.time_entry.value = entry_text(app.time)
            self.samples.value = str(app.samples)
            self.download.filename = file_name_for(system.name)
            self.snapshot.filename = file_name_for(system.name)[:-5] + "_snapshot.html"
            self.figures.filename = file_name_for(system.name)[:-5] + "_figures.zip"
        finally:
            self._quiet = False

    def _uncertainty_note(self, *_):
        d = self.app.derived
        self.uncertainty_message.object = (
            f'<div style="font-size:12px;color:#444">shown: 16th\u201384th percentiles of {d.samples} Monte Carlo '
            f'draws of the inputs with uncertainties (seed {d.seed})</div>' if d is not None and d.intervals else
            '<div style="font-size:12px;color:#444">nominal values only</div>')

    # -- widgets -> model ------------------------------------------------------
    # (each handler is batched: the model's change, the views' updates and the handler's message reach the
    # browser as one message)
    def _refused(self, pane=None) -> bool:
        """True (and the widgets shown as they were) when the page is read-only: it follows a presenter."""
        if not self.app.read_only:
            return False
        if pane is not None:
            _message(pane, READ_ONLY)
        self.sync()
        return True

    def _apply(self, obj, field: str, value, label: str, pane) -> bool:
        """Set ``obj.field``; undo it when the system cannot be derived with it."""
        if self._refused(pane):
            return False
        old = getattr(obj, field)
        if value == old:
            _message(pane)
            return True
        try:
            setattr(obj, field, value)
        except ValueError as error:
            _message(pane, f"{label}: {error}")
            return False
        if self.app.problem:
            problem = self.app.problem
            setattr(obj, field, old)
            self.sync()
            _message(pane, f"{label}: {entry_text(value) or 'blank'} cannot be used: {problem}")
            return False
        _message(pane)
        return True

    @batched
    def _star_entry(self, field, event):
        if self._quiet:
            return
        _, label, unit, optional = next(e for e in STAR_ENTRIES if e[0] == field)
        star = self.app.system.star
        try:
            value = parse_entry(event.new, star.param[field], label.split(" (")[0], unit, optional)
        except Rejected as error:
            _message(self.star_message, str(error))
            return
        self._apply(star, field, value, label.split(" (")[0], self.star_message)

    @batched
    def _albedo(self, event):
        if not self._quiet and event.new is not None:
            self._apply(self.app.system.assumptions, "bond_albedo", float(event.new), "Bond albedo",
                        self.assumption_message)

    @batched
    def _redistribution(self, event):
        if not self._quiet:
            self._apply(self.app.system.assumptions, "heat_redistribution", event.new, "Heat redistribution",
                        self.assumption_message)

    @batched
    def _pick(self, event):
        if not self._quiet and event.new and not self._refused():
            self.app.selected = event.new

    def _current_planet(self) -> Planet | None:
        names = self.app.system.planet_names
        return self.app.system.planet(self.app.selected) if self.app.selected in names else None

    @batched
    def _planet_entry(self, field, event):
        planet = self._current_planet()
        if self._quiet or planet is None:
            return
        _, label, unit, optional = next(e for e in PLANET_ENTRIES if e[0] == field)
        short = f"planet {planet.name}: {label.split(' (')[0]}"
        try:
            value = parse_entry(event.new, planet.param[field], short, unit, optional)
        except Rejected as error:
            _message(self.planet_message, str(error))
            return
        self._apply(planet, field, value, short, self.planet_message)

    @batched
    def _eccentricity(self, event):
        planet = self._current_planet()
        if not self._quiet and planet is not None and event.new is not None:
            self._apply(planet, "eccentricity", float(event.new), f"planet {planet.name}: eccentricity",
                        self.planet_message)

    @batched
    def _remove(self, _):
        if self._refused(self.planet_message):
            return
        system, planet = self.app.system, self._current_planet()
        if planet is None:
            return
        if len(system.planets) == 1:
            _message(self.planet_message, "a system needs at least one planet; add another before removing this one")
            return
        system.remove_planet(planet.name)
        _message(self.planet_message, f"removed planet {planet.name}", ok=True)

    @batched
    def _add(self, _):
        if self._refused(self.add_message):
            return
        name = (self.new_name.value_input or self.new_name.value or "").strip()
        try:
            if len(self.app.system.planets) >= MAX_PLANETS:
                raise Rejected(f"new planet: a system holds at most {MAX_PLANETS} planets; remove one first")
            if not name:
                raise Rejected("new planet: a name is needed")
            if len(name) > MAX_NAME_LENGTH:
                raise Rejected(f"new planet: the name is longer than {MAX_NAME_LENGTH} characters")
            if name_problem(name):
                raise Rejected(f"new planet: the name {name!r} {name_problem(name)}")
            twins = [n for n in self.app.system.planet_names if display_key(n) == display_key(name)]
            if twins:
                raise Rejected(f"new planet: a planet named {twins[0]!r} already exists"
                               + ("" if twins[0] == name else f" (it looks the same as {name!r})"))
            period = parse_entry(self.new_period.value_input or self.new_period.value, Planet.param.period,
                                 "new planet: period", "d")
            radius = parse_entry(self.new_radius.value_input or self.new_radius.value, Planet.param.radius,
                                 "new planet: radius", "Rearth")
        except Rejected as error:
            _message(self.add_message, str(error))
            return
        planet = Planet(name=name, period=period, radius=radius)
        self.app.system.add_planet(planet)
        if self.app.problem:
            problem = self.app.problem
            self.app.system.remove_planet(name)
            _message(self.add_message, f"new planet {name}: cannot be used: {problem}")
            return
        self.app.selected = name
        self.new_name.value = ""
        _message(self.add_message, f"added planet {name} (no transit time: its phase is arbitrary)", ok=True)

    def _set_time(self, value: float) -> None:
        if self._refused(self.time_message):
            return
        self.app.time = float(value)
        _message(self.time_message)

    @batched
    def _time_entry(self, event):
        if self._quiet:
            return
        try:
            value = parse_entry(event.new, System.param.epoch, "time", "d (BJD_TDB)")
        except Rejected as error:
            _message(self.time_message, str(error))
            return
        self._set_time(value)

    @batched
    def _samples(self, event):
        if self._quiet or self._refused(self.samples_message):
            return
        label = self.samples.label
        try:
            value = parse_entry(event.new, self.app.param.samples, label.split(" (")[0], "draws")
            if value != int(value):
                raise Rejected(f"{label.split(' (')[0]}: a whole number is needed, not {event.new.strip()!r}")
        except Rejected as error:
            _message(self.samples_message, str(error))
            return
        self.app.samples = int(value)

    @batched
    def _time_slider(self, event):
        if not self._quiet and event.new is not None:
            self._set_time(self.app.system.epoch + float(event.new))

    @batched
    def _too_large(self, event):
        if event.new is None:
            return
        name, size = event.new
        _message(self.file_message, f"not loaded, the current system is kept: {name or 'the file'}: file is {size} "
                                    f"bytes; system files are limited to {MAX_FILE_BYTES} bytes")

    @batched
    def _load(self, event):
        if event.new is None or self._refused(self.file_message):
            return
        name, data = event.new
        source = name or "uploaded file"
        notes = []
        try:
            system = loads_system(data, source, notes)
        except SystemFileError as error:
            shown = error.problems[:12]
            more = len(error.problems) - len(shown)
            text = "; ".join(str(p) for p in shown) + (f"; and {more} more" if more > 0 else "")
            _message(self.file_message, f"not loaded, the current system is kept: {text}")
            return
        self.app.replace_system(system, SystemSource(source, bytes(data)))
        remarks = "".join(f"; {note}" for note in notes)
        if self.app.problem:
            _message(self.file_message, f"loaded {source}, but: {self.app.problem}{remarks}")
        else:
            _message(self.file_message, f"loaded {source}: {len(system.planets)} planets{remarks}", ok=True)

    def _download(self):
        return io.BytesIO(dumps_system(self.app.system).encode("utf-8"))

    def _snapshot(self):
        """The offline snapshot of the session's current state (edits, time, draws, the selected planet and a
        finished N-body ensemble included)."""
        from orbitdeck.dashboard.snapshot import render_snapshot

        from .dynamics import finished_ensemble

        app = self.app
        page = render_snapshot(app.system, app.source.name, app.source.data, time=app.time,
                               samples=app.draws, seed=app.seed if app.draws else None,
                               pinned=app.pinned, pinned_label=app.pinned_label,
                               pinned_elements=app.pinned_elements, ensemble=finished_ensemble(app),
                               selected=app.selected)
        return io.BytesIO(page.encode("utf-8"))

    def _figures(self):
        """Every figure of the session's current state (edits, time, draws, planet colours, the settings of
        its views) as PNG files at slide resolution with their captions, in one zip archive: the files
        ``orbitdeck figures`` writes."""
        from orbitdeck.dashboard.figures import figures_archive, session_figure_files

        return io.BytesIO(figures_archive(session_figure_files(self.app, "png")))

    def lock(self, locked: bool) -> None:
        """Disable every control that edits (downloads stay), or enable again those this disabled."""
        if locked:
            for widget in self._panel.select(pn.widgets.Widget):
                if not (isinstance(widget, pn.widgets.FileDownload) or widget.disabled):
                    self._locked.append(widget)
                    widget.disabled = True
        else:
            for widget in self._locked:
                widget.disabled = False
            self._locked = []

    # -- layout ------------------------------------------------------------------
    def panel(self):
        def card(*objects, title: str):
            # the title is a pane of our own: Panel draws a card's own title in a shadow root no style sheet of
            # the card reaches
            header = pn.pane.HTML(f'<span class="od-card-title">{escape(title)}</span>', margin=(4, 0),
                                  stylesheets=[look.CARD_TITLE_CSS])
            return pn.Card(*objects, header=header, width=WIDGET_WIDTH + 24, margin=(6, 4),
                           stylesheets=[look.CARD_CSS])

        self._panel = pn.Column(
            card(pn.pane.HTML(f"<small>Load an orbitdeck-system/1 TOML file (at most "
                              f"{MAX_FILE_BYTES // 2**20} MiB)</small>"), self.file_input,
                 self.file_message, self.download, self.snapshot, self.figures, title="System file"),
            card(*self.star_entries.values(), self.star_message, title="Star"),
            card(self.albedo, self.redistribution, self.assumption_message, title="Assumptions"),
            card(self.planet_select, *self.planet_entries.values(), self.eccentricity, self.planet_message,
                 self.remove_button, pn.layout.Divider(), self.new_name, self.new_period, self.new_radius,
                 self.add_button, self.add_message, title="Planet"),
            card(self.time_entry, self.time_slider, self.player.panel(), self.epoch_button, self.time_message,
                 self.hill, self.reference, title="Time and display"),
            card(self.uncertainty, self.samples, self.samples_message, self.uncertainty_message,
                 title="Uncertainties"),
            width=WIDGET_WIDTH + 40)
        return self._panel
