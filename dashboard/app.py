"""The dashboard of one system: the per-session app object and its layout.

:class:`OrbitDeckApp` holds one :class:`~orbitdeck.models.System`, watches
its ``revision`` and derives it once per change into ``derived`` (and the
Keplerian elements used for positions into ``elements``); every view reads
from those two parameters and patches its plots in place. ``selected`` is
the planet chosen anywhere (a click on a point or a bar, a table row, the
planet selector) and every view highlights it; ``selected_pair`` is the
adjacent pair chosen (the Period ladder highlights it), which follows its
two planets through edits; ``colours`` gives each planet its colour for the
session. An app object belongs to one browser
session or one notebook cell; nothing mutable is shared.

A view is a class in :data:`VIEW_CLASSES` built as ``cls(app)``, with a
``title`` (its tab), ``panel()`` (its Panel object) and, for HoloViews
views, ``figure(backend)`` (its plots as plain HoloViews objects).
"""

from __future__ import annotations

from collections.abc import Mapping

import panel as pn
import param

from orbitdeck.models import Derived, System, derive, dumps_system
from orbitdeck.models.motion import ephemeris
from orbitdeck.models.files.provenance import provenance_of
from orbitdeck.models.files.sources import SystemSource

from .cli import DEFAULT_SEED
from .history import EditHistory, SessionTools
from .serve import page_title
from .text_tables import unsigned_zeros
from .views import look
from .views.bulk import BulkView
from .views.common import escape, one_batch
from .views.compare import CompareView
from .views.controls import Controls
from .views.dynamics import DynamicsView
from .views.flux import FluxView
from .views.ladder import LadderView
from .views.layout import REFERENCE_ORBITS, LayoutView
from .views.observability import ObservabilityView
from .views.palette import ColourBook
from .views.pair_choice import pair_index_after, pair_or_none
from .views.pinned import elements_of_pin
from .views.skies import SkiesView
from .views.transits import TransitPlannerView

#: view classes in the order of the tabs
VIEW_CLASSES = (LayoutView, SkiesView, LadderView, FluxView, ObservabilityView, DynamicsView, BulkView,
                TransitPlannerView, CompareView)
SIDEBAR_WIDTH = 350
#: views built with the app: the first tab (shown when the page opens) and the planet table, the tab
#: opened most; every other view is built when its tab is first opened or the view is read from code
BUILT_AT_ONCE = (VIEW_CLASSES[0].title, FluxView.title)


class OrbitDeckApp(param.Parameterized):
    """Linked views of one system, for one browser session or notebook cell."""

    system = param.ClassSelector(class_=System, instantiate=False, doc="The system shown and edited")
    derived = param.ClassSelector(class_=Derived, allow_None=True, instantiate=False,
                                  doc="derive(system), recomputed once per change of the system")
    elements = param.Parameter(default=None, doc="Keplerian elements (ephemeris.OrbitalElements) for positions")
    selected = param.String(default=None, allow_None=True, doc="Name of the selected planet")
    selected_pair = param.Integer(default=None, allow_None=True, bounds=(0, None),
                                  doc="Index of the highlighted adjacent pair in period order (the index of its "
                                      "inner planet); None for none. It follows the same two planets when planets "
                                      "are added, removed or reordered, and becomes None when they are no longer "
                                      "neighbours; an index beyond the pairs is taken as none")
    time = param.Number(default=2461000.0, doc="Time of the positions in Layout [BJD_TDB, d]")
    show_hill = param.Boolean(default=False, doc="Draw Hill spheres in Layout")
    reference = param.Selector(default="none", objects=list(REFERENCE_ORBITS),
                               doc="Solar System orbit drawn in Layout for scale")
    problem = param.String(default="", doc="Why the last change could not be derived (empty when it could)")
    uncertainty = param.Boolean(default=False, doc="Derive with Monte Carlo draws and show their intervals")
    samples = param.Integer(default=4000, bounds=(100, 20000), doc="Monte Carlo draws when uncertainty is on")
    seed = param.Integer(default=DEFAULT_SEED, constant=True, doc="Seed of the Monte Carlo draws (fixed)")
    pinned = param.ClassSelector(class_=Derived, allow_None=True, instantiate=False,
                                 doc="The derivation pinned as the reference that the Compare tab compares with")
    pinned_label = param.String(default="", doc="What the pinned reference was (for the Compare tab)")
    pinned_elements = param.Parameter(default=None, doc=(
        "Keplerian elements (ephemeris.OrbitalElements) of the pinned reference, kept with it when pinned, for "
        "the overlays in Layout; None without a reference. A reference pinned without them gets them made once "
        "from its derivation, without transit times (orbits, no positions)"))
    read_only = param.Boolean(default=False, doc="True while this session follows a presenter (no edits)")

    def __init__(self, system: System, source: SystemSource | None = None, colours: ColourBook | None = None,
                 **params):
        cls = type(self)
        draws = params.get("samples", cls.param.samples.default) if params.get("uncertainty") else 0
        derived, elements = _derive(system, draws, params.get("seed", cls.param.seed.default))
        names = derived.planet_names
        params.setdefault("selected", names[0] if names else None)
        params["selected_pair"] = pair_or_none(params.get("selected_pair"), derived)
        #: each planet's colour for the session, by first appearance (see palette.ColourBook); ``colours``
        #: carries another session's book on (static figures of that session's state)
        self.colours = colours if colours is not None else ColourBook()
        self.colours.note(names)
        super().__init__(system=system, derived=derived, elements=elements, time=system.epoch, **params)
        self._installing = False   # True while a state is shown as given (no derivation of its own)
        self._set_source(source)
        self._revision_watcher = system.param.watch(self._on_revision, "revision")
        self.param.watch(self._on_draws, ["uncertainty", "samples"])
        self.param.watch(self._pin_elements, ["pinned", "pinned_elements"])
        self.param.watch(self._check_pair, "selected_pair")
        if self.pinned is not None:
            self._pin_elements()
        #: True in a served page (see page()): views of hidden tabs wait until their tab is opened
        self.defer_hidden_tabs = False
        self.tabs = None
        self._stale: dict[str, dict] = {}  # tab title -> {(view, method): call waiting for the tab}
        #: the views by tab title, each built when first reached (its tab opened, or read from code)
        self.views = LazyViews(self, VIEW_CLASSES, built=self._view_built)
        self._tab_bodies = {title: pn.Column(sizing_mode="stretch_width") for title in self.views}
        for title in BUILT_AT_ONCE:
            self.views[title]
        self.controls = Controls(self)
        self.history = EditHistory(self)
        self.tools = SessionTools(self, self.history)
        self.header = pn.pane.HTML("", sizing_mode="stretch_width", margin=0, stylesheets=[look.HEADER_CSS])
        # the browser's document.title follows this hidden widget (set as text, never parsed as HTML)
        self._title_holder = pn.widgets.TextInput(value=self._document_title(), visible=False)
        self._title_holder.jscallback(value="document.title = cb_obj.value")
        self.alerts = pn.pane.HTML("", sizing_mode="stretch_width", margin=(4, 12), stylesheets=[look.ALERT_CSS])
        self.caution = pn.pane.HTML("", sizing_mode="stretch_width", margin=(0, 12), stylesheets=[look.ALERT_CSS])
        self.tabs = ViewTabs(*self._tab_bodies.items(), sizing_mode="stretch_width", dynamic=True,
                             before_show=self._build_tab, after_show=self._catch_up, stylesheets=[look.TABS_CSS],
                             margin=(4, 8))
        self.main = pn.Column(self.alerts, self.caution, self.tabs, sizing_mode="stretch_width")
        self.sidebar = pn.Column(self.tools.panel(), self.controls.panel(), width=SIDEBAR_WIDTH)
        self.param.watch(lambda event: self.controls.lock(event.new), "read_only")
        self.layout = pn.Column(self.header, self._title_holder, pn.Row(self.sidebar, self.main,
                                                                       sizing_mode="stretch_width"),
                                sizing_mode="stretch_width", styles=look.ROOT_STYLES)
        self.param.watch(self._texts, ["derived", "problem", "elements"])
        self._texts()

    # -- state -----------------------------------------------------------------
    @property
    def draws(self) -> int:
        """Monte Carlo draws of the next derivation: ``samples`` when ``uncertainty`` is on, else 0."""
        return int(self.samples) if self.uncertainty else 0

    def _on_draws(self, *events):
        """Derive again when the switch changes, or the sample count while the switch is on."""
        if self._installing:
            return
        if any(e.name == "uncertainty" for e in events) or self.uncertainty:
            self._on_revision()

    def _on_revision(self, *_):
        """Derive the system once for a change of anything in it."""
        if self._installing:
            return
        found = self._derive_or_say(self.system)
        if found is not None:
            self.install(self.system, *found)

    def replace_system(self, system: System, source: SystemSource | None = None) -> None:
        """Show ``system`` (read from ``source``) instead of the current one: a new file, with a fresh
        edit history (the current one is kept if it cannot be derived)."""
        found = self._derive_or_say(system)
        if found is None:
            return
        names = found[0].planet_names
        self._set_source(source, system)
        self.install(system, *found, time=system.epoch, selected=names[0] if names else None)
        self.history.reset()

    def restore_system(self, system: System) -> bool:
        """Show ``system``, an earlier or later state of the same one (undo, redo), keeping the time and,
        where it still exists, the selected planet. False (and ``problem`` says why) if it cannot be derived."""
        found = self._derive_or_say(system)
        if found is not None:
            self.install(system, *found)
        return found is not None

    def _derive_or_say(self, system: System):
        """(derived, elements) of ``system`` with the app's draws; None, with ``problem`` saying why, when it
        cannot be derived (a valid but underivable state: the views keep the last one)."""
        try:
            return _derive(system, self.draws, self.seed)
        except Exception as error:
            self.problem = f"{type(error).__name__}: {error}"
            return None

    def install(self, system: System, derived: Derived, elements, **shown) -> None:
        """Show ``system`` with its ``derived`` and ``elements`` as given (nothing is derived), and set the
        app parameters in ``shown`` (time, selected, uncertainty...) in the same update; only what
        differs is set, so watchers of what stays run not at all."""
        names = derived.planet_names
        self.colours.note(names)
        selected = shown.pop("selected", self.selected)
        shown["selected"] = selected if selected in names else (names[0] if names else None)
        shown["selected_pair"] = pair_or_none(
            shown.pop("selected_pair", pair_index_after(self.derived, derived, self.selected_pair)), derived)
        wanted = dict(system=system, derived=derived, elements=elements, problem="", **shown)
        changed = {name: value for name, value in wanted.items() if not _same_value(getattr(self, name), value)}
        if not changed:
            return
        self._installing = True
        try:
            if system is not self.system:
                self.system.param.unwatch(self._revision_watcher)
                self._revision_watcher = system.param.watch(self._on_revision, "revision")
            with one_batch():
                self.param.update(**changed)
        finally:
            self._installing = False

    # -- where the numbers came from, and the pinned reference --------------------------
    def _set_source(self, source: SystemSource | None, system: System | None = None) -> None:
        """Remember what the system was read from (for the provenance of exports)."""
        text = dumps_system(system or self.system)
        self.source = source or SystemSource("a System object made in Python", text.encode("utf-8"))
        self._source_text = text

    def provenance(self) -> dict:
        """The provenance of the state shown: the input read, whether (and to what) it was edited since,
        the assumptions, the draws and seed, the methods used."""
        text = dumps_system(self.system)
        return provenance_of(self.system, self.derived, self.source.name, self.source.sha256,
                             edited_text=None if text == self._source_text else text)

    def pin_reference(self) -> None:
        """Pin the state shown as the reference that the Compare tab compares with (not while read-only)."""
        if self.read_only:
            return
        derived = self.derived
        if derived.intervals:
            derived.intervals["skies"]   # worked out now: the pinned state outlives its draws
        draws = f"{derived.samples} Monte Carlo draws" if derived.samples else "nominal values only"
        # the elements shown with this state go with it: the overlays need no derivation of their own
        self.param.update(pinned=derived, pinned_elements=self.elements,
                          pinned_label=f"{self.system.name}, edit {self.history.position} ({draws})")

    def clear_reference(self) -> None:
        """Forget the pinned reference (not while read-only)."""
        if not self.read_only:
            self.param.update(pinned=None, pinned_elements=None, pinned_label="")

    def _pin_elements(self, *events):
        """Keep ``pinned_elements`` the elements of ``pinned`` (see :func:`.views.pinned.elements_of_pin`)."""
        changed = {event.name for event in events}
        wanted = elements_of_pin(self.pinned, self.pinned_elements,
                                 set_with_it="pinned_elements" in changed or "pinned" not in changed)
        if self.pinned_elements is not wanted:
            self.pinned_elements = wanted

    def _check_pair(self, *_):
        """An index beyond the adjacent pairs highlights none."""
        self.selected_pair = pair_or_none(self.selected_pair, self.derived)

    # -- text around the views ----------------------------------------------------
    def _texts(self, *_):
        d, system = self.derived, self.system
        star = d.star
        lum = (d.intervals or {}).get("star", {}).get("luminosity_lsun")
        luminosity_range = (f" (16th\u201384th percentiles {lum[0]:.4g}\u2013{lum[1]:.4g} of {d.samples} "
                            "Monte Carlo draws)" if lum else "")
        self._title_holder.value = self._document_title()
        self.header.object = look.header_html(escape(system.name), (
            f'star {escape(star["name"])}: M = {star["mass_msun"]:.4g} Msun, R = {star["radius_rsun"]:.4g} Rsun, '
            f'Teff = {star["teff_k"]:.0f} K, L = {star["luminosity_lsun"]:.4g} Lsun{luminosity_range}; '
            f'{len(d.planet_names)} planets' + (f'; {escape(system.notes)}' if system.notes else "")))
        notes = list(d.warnings)
        phaseless = [n for n, given in zip(self.elements.names, self.elements.tref_is_transit) if not given]
        if phaseless:
            notes.append(f"no transit_time for {', '.join(map(str, phaseless))}: the system epoch is taken as "
                         "the mid-transit time, so the orbital phase shown in Layout is arbitrary.")
        if self.problem:
            notes.insert(0, f"the last change could not be derived and was not applied to the views: {self.problem}")
        self.alerts.object = ("" if not notes else
                              '<div role="alert" class="od-alert"><b>Warnings</b><ul>'
                              + "".join(f"<li>{escape(unsigned_zeros(n))}</li>" for n in notes) + "</ul></div>")
        a = system.assumptions
        self.caution.object = (
            '<div class="od-caution">All values are model estimates under the stated '
            f'assumptions (Bond albedo A = {a.bond_albedo:.2f}, heat redistribution "{escape(a.heat_redistribution)}", '
            "masses from Chen &amp; Kipping 2017 where none is measured, fixed Keplerian orbits for positions), "
            "not measurements.</div>")

    def _document_title(self) -> str:
        return page_title(self.system)

    # -- tabs ----------------------------------------------------------------------
    @property
    def shown_tab(self) -> str | None:
        """Title of the tab shown (None before the tabs exist or when none is active)."""
        if self.tabs is None or not 0 <= self.tabs.active < len(self.views):
            return None
        return list(self.views)[self.tabs.active]

    def tab_hidden(self, title: str) -> bool:
        """True when the views of tab ``title`` may wait: a served page with another tab shown."""
        return self.defer_hidden_tabs and self.tabs is not None and self.shown_tab != title

    def mark_stale(self, title: str, key, call) -> None:
        """Keep ``call`` (a view's update, no arguments) to run when tab ``title`` is opened."""
        self._stale.setdefault(title, {})[key] = call

    def stale_tabs(self) -> list[str]:
        """Titles of the tabs whose views have updates waiting."""
        return [t for t, calls in self._stale.items() if calls]

    def _view_built(self, title: str, view) -> None:
        """Put a view just built into its tab."""
        self._tab_bodies[title].objects = [view.panel()]

    def _build_tab(self, index: int) -> None:
        """Build the views of tab ``index`` if they are not yet (from the current state, before the tab renders)."""
        titles = list(self.views)
        if 0 <= index < len(titles):
            self.views[titles[index]]

    def _catch_up(self, index: int) -> None:
        """Run the waiting updates of the views of tab ``index``."""
        titles = list(self.views)
        if not 0 <= index < len(titles):
            return
        calls = self._stale.pop(titles[index], {})
        if calls:
            with pn.io.hold(freeze=True):
                for call in calls.values():
                    call()

    def catch_up_all(self) -> None:
        """Bring every view built so far up to date now, shown or not (the others are built current)."""
        deferring, self.defer_hidden_tabs = self.defer_hidden_tabs, False
        try:
            for index in range(len(self.views)):
                self._catch_up(index)
        finally:
            self.defer_hidden_tabs = deferring

    # -- pages -------------------------------------------------------------------
    def page(self) -> pn.viewable.Viewable:
        """The served page: the app's own layout (header band, side cards, tabs), every resource local.

        Only the shown tab's views follow each change at once; the views of the
        other tabs catch up when their tab is opened (:class:`ViewTabs`), which
        keeps a change cheap on a server holding many sessions.
        """
        self.defer_hidden_tabs = True
        page = self.layout
        page.orbitdeck_app = self  # the session's state, for tests and benchmarks
        return page


class LazyViews(Mapping):
    """The views of one app by tab title, each built on first access.

    Building a view makes its Bokeh figures, sources and tables, and its
    watchers on the app; a served page builds a view when its tab is first
    opened, so a session that only ever shows the first tab holds only that
    view. Reading ``views[title]`` (a snapshot, a notebook, a test) builds
    the view from the app's current state. Iterating over the titles or
    asking ``len`` builds nothing; ``values()`` and ``items()`` build every view.
    """

    def __init__(self, app, classes, built=None):
        self._app, self._classes, self._on_built = app, {cls.title: cls for cls in classes}, built
        self._views: dict = {}

    def __getitem__(self, title: str):
        view = self._views.get(title)
        if view is None:
            app = self._app
            # a view is built current, even for a tab not shown (its later changes may wait)
            deferring, app.defer_hidden_tabs = app.defer_hidden_tabs, False
            try:
                view = self._views[title] = self._classes[title](app)
            finally:
                app.defer_hidden_tabs = deferring
            if self._on_built is not None:
                self._on_built(title, view)
        return view

    def __iter__(self):
        return iter(self._classes)

    def __len__(self) -> int:
        return len(self._classes)

    def built(self) -> list[str]:
        """Titles of the views built so far, in tab order."""
        return [title for title in self._classes if title in self._views]


class ViewTabs(pn.Tabs):
    """Dynamic tabs that build a tab's views before Panel renders the tab, and bring them up to date after.

    Panel's dynamic tabs render the models of a tab again when its ``active``
    index changes. ``before_show(index)`` runs first, in the same watcher, so
    that a view seen for the first time is in its tab when the tab is
    rendered; ``after_show(index)`` runs once the tab's models are back in
    the page's document, so that the waiting updates patch models the
    document holds (Panel gives a pane changed while it is out of the
    document style sheets from its CDN, which a local page cannot load).
    Everything happens in one event, so the browser gets it in one message.
    """

    def __init__(self, *objects, before_show=None, after_show=None, **params):
        super().__init__(*objects, **params)
        self._before_show, self._after_show = before_show, after_show

    # Panel's own handler of ``active`` (private): the hooks must run around it, in the same watcher
    def _update_active(self, *events):
        opened = any(e.name == "active" for e in events)
        # one batch of changes, whose later values replace earlier ones of the same property: see below
        with pn.io.hold():
            if opened and self._before_show is not None:
                self._before_show(self.active)
            super()._update_active(*events)
            if opened and self._after_show is not None:
                self._after_show(self.active)
            self._local_style_sheets()

    def _local_style_sheets(self) -> None:
        """Point every style sheet of the page at the serving page's own copy again.

        A pane updated while its tab is hidden has no document, and Panel then
        resolves its style sheets to its CDN, also changing the style sheet
        objects it shares with the shown components; a local page must not
        reach out (and fails offline). Set back within the same batch, the
        browser only receives the local addresses.
        """
        from bokeh.models import ImportedStyleSheet
        from panel.io.resources import patch_stylesheet

        for root, _ in list(self._models.values()):
            document = root.document
            dist_url = document._template_variables.get("dist_url") if document is not None else None
            if dist_url:
                for sheet in document.select({"type": ImportedStyleSheet}):
                    patch_stylesheet(sheet, dist_url)


def _same_value(old, new) -> bool:
    """Plain values by equality, objects (a System, a Derived) by identity."""
    if isinstance(new, (str, int, float, bool, type(None))) and isinstance(old, (str, int, float, bool, type(None))):
        return old == new and type(old) is type(new)
    return old is new


def _derive(system: System, samples: int = 0, seed: int | None = None):
    derived = derive(system, samples=samples, seed=seed) if samples else derive(system)
    elements = ephemeris.orbital_elements(system, a_au=derived.planets["semi_major_axis_au"])
    return derived, elements


def load_plotting() -> None:
    """Load HoloViews' Bokeh plotting classes (done by the first view otherwise; a server does it at start)."""
    from .views.plotting import load_backend

    load_backend("bokeh")


def build_app(system: System) -> pn.layout.Column:
    """The dashboard of ``system`` as a plain Panel layout (for a notebook cell or ``.servable()``).

    The dashboard edits ``system`` in place; pass ``system.copy()`` to keep
    the original. Use :class:`OrbitDeckApp` directly to reach the state
    (``app.derived``, ``app.selected``) from code; its ``layout`` is what this
    function returns. Panel's extension is loaded here only when it is not
    yet (with ``inline=True``: every resource inside the notebook, which then
    needs no network); loading it again would put its resources into the
    notebook a second time.
    """
    if not (pn.extension._loaded and "tabulator" in pn.extension._loaded_extensions):
        pn.extension("tabulator", inline=True)
    return OrbitDeckApp(system).layout
