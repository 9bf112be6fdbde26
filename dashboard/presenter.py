"""Presenter mode (``orbitdeck serve --present``): one session presents, every other one follows, read-only.

:class:`PresenterChannel` is the one object the sessions of a presenting
server share, and the only state shared between sessions. It knows the
sessions that joined (their names, in order of joining), which one
presents, and the last state the presenter published: a frozen copy of
the system and its derivation (both read, never written, by the
followers: a read-only page refuses every edit before it reaches the
system), the selected planet, the tab, the time, the uncertainty setting
and the pinned reference. It never touches a session's models: it wakes each
session, and the session brings itself up to date on its own document
through ``Document.add_next_tick_callback`` (the one thread-safe way into
a Bokeh document), holding that document's lock, with Panel's current
document set to it. A session woken again before it caught up catches up
once, to the latest state.

:class:`PresenterLink` ties one session's app to the channel: as
presenter it publishes every change of the app; as follower it shows each
published state (without deriving anything itself), disables the
controls that edit, and takes back any change that reaches the server
anyway. The first session to join presents, or one that gives the token
printed in the terminal (``?present=TOKEN`` in its address, or typed into
the page), carrying on from the state the room shows; the presenter can
hand over to any other session; when the presenting session ends, the next
session to ask presents.
"""

from __future__ import annotations

import itertools
import secrets
import threading
from dataclasses import dataclass

import panel as pn
import param
from panel.io.state import set_curdoc

from .views.common import escape, one_batch

#: app parameters a follower takes from the presenter (besides the system, its derivation and the tab)
SHARED_PARAMETERS = ("selected", "selected_pair", "time", "uncertainty", "samples", "show_hill", "reference",
                     "pinned", "pinned_label", "pinned_elements")
QUERY_ARGUMENT = "present"


@dataclass(frozen=True)
class SharedState:
    """What the presenter shows, as published: never changed after publishing."""

    version: int
    system: object          # a System nobody edits (followers show it; a new presenter edits a copy)
    derived: object
    elements: object
    tab: int
    shown: dict             # SHARED_PARAMETERS -> value


@dataclass(frozen=True)
class Roster:
    """Who is in the room: (id, name) in order of joining, and the presenter's id (None when nobody presents)."""

    members: tuple
    presenter: int | None

    def name_of(self, member_id) -> str | None:
        return next((name for i, name in self.members if i == member_id), None)


class PresenterChannel:
    """The state the sessions of a presenting server share (see the module docstring)."""

    def __init__(self, token: str | None = None):
        self.token = token or secrets.token_urlsafe(12)
        self._lock = threading.Lock()
        self._members: dict[int, PresenterLink] = {}
        self._names: dict[int, str] = {}
        self._presenter: int | None = None
        self._state: SharedState | None = None
        self._ids = itertools.count(1)
        self._versions = itertools.count(1)

    # -- reading ----------------------------------------------------------------------
    def snapshot(self) -> tuple[Roster, SharedState | None]:
        """The roster and the last published state, read together."""
        with self._lock:
            return Roster(tuple(self._names.items()), self._presenter), self._state

    def token_matches(self, token) -> bool:
        return bool(token) and secrets.compare_digest(str(token).encode(), self.token.encode())

    # -- changes (each wakes every session) --------------------------------------------
    def join(self, link: "PresenterLink", token=None) -> int:
        """Add a session; it presents if nobody does or it gives the token. Returns its id."""
        with self._lock:
            member = next(self._ids)
            self._members[member] = link
            self._names[member] = f"Session {member}"
            if self._presenter is None or self.token_matches(token):
                self._presenter = member
        self._wake_all()
        return member

    def leave(self, member: int) -> None:
        """Remove a session (its page was closed); if it presented, nobody presents until one asks."""
        with self._lock:
            self._members.pop(member, None)
            self._names.pop(member, None)
            if self._presenter == member:
                self._presenter = None
        self._wake_all()

    def rename(self, member: int, name: str) -> None:
        """Show ``member`` as ``name`` (free text, escaped wherever shown)."""
        name = " ".join(str(name).split())[:40] or f"Session {member}"
        with self._lock:
            if member not in self._names or self._names[member] == name:
                return
            self._names[member] = name
        self._wake_all()

    def claim(self, member: int, token=None) -> bool:
        """Let ``member`` present: with the token, or without one while nobody presents."""
        with self._lock:
            if member not in self._members:
                return False
            if not (self._presenter is None or self.token_matches(token)):
                return False
            self._presenter = member
        self._wake_all()
        return True

    def hand_over(self, member: int, to: int) -> bool:
        """The presenter ``member`` hands presenting to session ``to``."""
        with self._lock:
            if self._presenter != member or to not in self._members:
                return False
            self._presenter = to
        self._wake_all()
        return True

    def publish(self, member: int, system, derived, elements, tab: int, shown: dict) -> bool:
        """The presenter's new state (refused, False, from anyone else)."""
        with self._lock:
            if self._presenter != member:
                return False
            self._state = SharedState(next(self._versions), system, derived, elements, tab, dict(shown))
            followers = [link for m, link in self._members.items() if m != member]
        for link in followers:
            link.wake()
        return True

    def _wake_all(self) -> None:
        with self._lock:
            links = list(self._members.values())
        for link in links:
            link.wake()


class PresenterLink(param.Parameterized):
    """One session's part in presenter mode (see the module docstring)."""

    role = param.Selector(default="follower", objects=["presenter", "follower"], constant=True)
    presenter_name = param.String(default="", constant=True, doc="Who presents ('' when nobody does)")

    def __init__(self, app, channel: PresenterChannel, doc=None, token=None, **params):
        super().__init__(**params)
        self.app, self.channel = app, channel
        self.doc = doc if doc is not None else pn.state.curdoc
        self._wake_lock = threading.Lock()
        self._scheduled = self._closed = False
        self._applying = self._refused = False
        self._applied_version = 0
        self._published_derived = None
        self._frozen_system = None
        self._build_widgets()
        self.id = None   # until joined: a wake before that waits for the _sync below
        self.id = channel.join(self, token)
        app.presenter = self
        app.param.watch(self._on_app_change, ["derived", *SHARED_PARAMETERS])
        app.tabs.param.watch(self._on_app_change, "active")
        if self.doc is not None and self.doc.session_context is not None:
            self.doc.on_session_destroyed(lambda _context: self.close())
        self._sync()

    # -- waking: the channel calls wake() from any session; _sync runs on this session's own document ---
    def wake(self) -> None:
        """Bring this session up to date with the channel soon, on its own document (thread-safe)."""
        with self._wake_lock:
            if self._scheduled or self._closed:
                return
            self._scheduled = True
        if self.doc is None or self.doc.session_context is None:   # no server (a test): at once
            self._run_sync()
            return
        try:
            self.doc.add_next_tick_callback(self._run_sync)
        except Exception:   # the session is gone
            self.close()

    def _run_sync(self) -> None:
        with self._wake_lock:
            self._scheduled = False
            if self._closed:
                return
        if self.doc is not None:
            with set_curdoc(self.doc):
                self._sync()
        else:
            self._sync()

    def close(self) -> None:
        """Leave the channel (the session ended)."""
        with self._wake_lock:
            if self._closed:
                return
            self._closed = True
        self.channel.leave(self.id)

    def _sync(self) -> None:
        if self.id is None:
            return
        roster, state = self.channel.snapshot()
        role = "presenter" if roster.presenter == self.id else "follower"
        became_presenter = role == "presenter" and self.role != "presenter"
        with param.edit_constant(self):
            self.param.update(role=role, presenter_name=roster.name_of(roster.presenter) or "")
        with one_batch(self.doc):   # one message, the plots held while it is applied
            # a follower shows each new state; a session that starts presenting carries on from the room's
            if state is not None and state.version != self._applied_version and (role == "follower"
                                                                                  or became_presenter):
                self._apply(state)
            if became_presenter:   # the room's frozen system, which nobody edits, becomes a copy to edit
                self._applying = True
                try:
                    self.app.install(self.app.system.copy(), self.app.derived, self.app.elements)
                finally:
                    self._applying = False
            self.app.read_only = role == "follower"
            self._show_roster(roster)
        if became_presenter:
            self._publish()

    # -- presenter: publish every change ------------------------------------------------------------
    def _on_app_change(self, *_):
        if self._applying:
            return
        if self.role == "presenter":
            self._publish()
        else:
            self._refuse()

    def _publish(self) -> None:
        app = self.app
        if app.derived is not self._published_derived:   # a new state of the system: freeze a copy
            self._frozen_system, self._published_derived = app.system.copy(), app.derived
        shown = {name: getattr(app, name) for name in SHARED_PARAMETERS}
        self.channel.publish(self.id, self._frozen_system, app.derived, app.elements, app.tabs.active, shown)

    # -- follower: show the presenter's state, take back anything else ----------------------------------
    def _apply(self, state: SharedState) -> None:
        app = self.app
        self._applying = True
        try:
            # the room's frozen system itself: the controls of a read-only page refuse every edit before it
            # reaches the system (Controls._refused), so no follower ever changes it
            app.install(state.system, state.derived, state.elements, **state.shown)
            if app.tabs.active != state.tab:
                app.tabs.active = state.tab
            self._applied_version = state.version
        finally:
            self._applying = False
        if self._refused:
            self._refused = False   # the notice stays until the presenter's next change
        else:
            self.notice.object = ""

    def _refuse(self) -> None:
        """A follower's own change (which the disabled controls should never send): shown back as it was."""
        self._applied_version, self._refused = 0, True
        self.notice.object = (f'<span style="color:#a11a1a">read-only: only {escape(self.presenter_name or "the presenter")}'
                              " can change what is shown</span>")
        self.wake()

    # -- the strip at the top of the page -------------------------------------------------------------
    def _build_widgets(self) -> None:
        self.banner = pn.pane.HTML("", margin=(6, 10), sizing_mode="stretch_width")
        self.notice = pn.pane.HTML("", margin=(6, 10))
        self.name_entry = pn.widgets.TextInput(label="Your name in the room", width=200, max_length=40)
        self.hand_to = pn.widgets.Select(label="Hand over to", options={}, width=200)
        self.hand_button = pn.widgets.Button(label="Hand over", width=110, align="end")
        self.token_entry = pn.widgets.PasswordInput(label="Presenter token", width=200)
        self.claim_button = pn.widgets.Button(label="Present", width=110, align="end", color="primary")
        self.name_entry.param.watch(lambda e: self.channel.rename(self.id, e.new), "value")
        self.hand_button.on_click(self._hand_over)
        self.claim_button.on_click(self._claim)
        self.token_entry.param.watch(lambda _: self._claim(None), "value")
        self.strip = pn.Row(self.banner, self.name_entry, self.hand_to, self.hand_button, self.token_entry,
                            self.claim_button, self.notice, sizing_mode="stretch_width",
                            styles={"background": "#e8eef6", "border-bottom": "2px solid #2d3a4a"})

    def _show_roster(self, roster: Roster) -> None:
        presenting = self.role == "presenter"
        names = [name for _, name in roster.members]
        # (a name two pages share is told apart by the page's number)
        others = {(name if names.count(name) == 1 else f"{name} (#{member})"): member
                  for member, name in roster.members if member != self.id}
        own = roster.name_of(self.id) or ""
        if self.name_entry.value != own:
            self.name_entry.value = own
        if presenting:
            text = (f"<b>You present</b> ({escape(own)}); {len(others)} "
                    f"{'page follows' if len(others) == 1 else 'pages follow'} what you show.")
        elif roster.presenter is None:
            text = "<b>Nobody presents now.</b> This page is read-only; <i>Present</i> takes over."
        else:
            text = (f"<b>{escape(self.presenter_name)} presents.</b> This page follows, read-only "
                    "(downloads still work).")
        self.banner.object = f'<div style="font-size:14px" data-role="{self.role}">{text}</div>'
        self.hand_to.options = others
        self.hand_to.visible = self.hand_button.visible = presenting
        self.hand_button.disabled = not others
        self.token_entry.visible = self.claim_button.visible = not presenting

    def _hand_over(self, _):
        if self.hand_to.value is not None:
            self.channel.hand_over(self.id, self.hand_to.value)

    def _claim(self, _):
        token = self.token_entry.value
        if self.channel.claim(self.id, token):
            self.notice.object = ""
        elif token:
            self.notice.object = '<span style="color:#a11a1a">that is not the presenter token</span>'


def session_token() -> str | None:
    """The token in this session's address (``?present=TOKEN``), if any."""
    values = (pn.state.session_args or {}).get(QUERY_ARGUMENT) or []
    return values[0].decode("utf-8", errors="replace") if values else None
