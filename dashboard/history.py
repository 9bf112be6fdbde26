"""Undo and redo of the edits of one session, and pinning a state as the reference to compare with.

:class:`EditHistory` keeps the states of the session's system as
system-file text (``dumps_system``): one entry for every change that could
be derived (a change that could not is taken back by the controls and
leaves no entry). Undo and redo read an entry back (``loads_system``) and
show it; an edit after an undo drops the states that could have been
redone, as editors do. The text is what a downloaded system file holds,
so an undone state is exactly a state the session had.

:class:`SessionTools` holds the buttons of the side area: undo, redo, pin
the current state as the reference, and clear the reference.
"""

from __future__ import annotations

import panel as pn
import param

from orbitdeck.models import dumps_system, loads_system

from .views.common import escape

#: states kept per session (about 1-2 kB each for a demo system)
MAX_STATES = 200


class EditHistory(param.Parameterized):
    """The states of one app's system, with undo and redo."""

    can_undo = param.Boolean(default=False, constant=True, doc="Whether there is an earlier state")
    can_redo = param.Boolean(default=False, constant=True, doc="Whether there is a later state (after an undo)")

    def __init__(self, app, **params):
        super().__init__(**params)
        self.app = app
        self._states = [dumps_system(app.system)]
        self._at = 0
        self._restoring = False
        app.param.watch(self._record, "derived")
        app.param.watch(self._read_only, "read_only")

    @property
    def position(self) -> int:
        """Which state is shown: 0 for the state read, then one more for each edit (less after an undo)."""
        return self._at

    @property
    def states(self) -> int:
        """How many states are kept."""
        return len(self._states)

    def reset(self) -> None:
        """Forget every state but the current one (a new file was loaded, say)."""
        self._states, self._at = [dumps_system(self.app.system)], 0
        self._flags()

    def _read_only(self, event):
        """A page that follows a presenter keeps no history; when it may edit again, it starts afresh."""
        if not event.new:
            self.reset()

    def _record(self, *_):
        if self._restoring or self.app.read_only:
            return
        text = dumps_system(self.app.system)
        if text == self._states[self._at]:
            return   # the draws changed, or an edit was taken back: no new state
        self._states = self._states[: self._at + 1] + [text]
        if len(self._states) > MAX_STATES:
            self._states = self._states[-MAX_STATES:]
        self._at = len(self._states) - 1
        self._flags()

    def _flags(self):
        with param.edit_constant(self):
            self.param.update(can_undo=self._at > 0, can_redo=self._at < len(self._states) - 1)

    def _go(self, index: int) -> bool:
        if self.app.read_only or not 0 <= index < len(self._states) or index == self._at:
            return False
        self._restoring = True
        try:
            restored = self.app.restore_system(loads_system(self._states[index], "the edit history"))
        finally:
            self._restoring = False
        if restored:
            self._at = index
            self._flags()
        return restored

    def undo(self) -> bool:
        """Show the state before the last edit; False when there is none (or it cannot be shown)."""
        return self._go(self._at - 1)

    def redo(self) -> bool:
        """Show the state an undo left; False when there is none."""
        return self._go(self._at + 1)


class SessionTools:
    """Undo, redo and the pinned reference: the buttons of the side area, for one session."""

    def __init__(self, app, history: EditHistory, width: int = 290):
        self.app, self.history = app, history
        half = (width - 10) // 2
        self.undo = pn.widgets.Button(label="\u21b6 Undo", width=half, disabled=True)
        self.redo = pn.widgets.Button(label="Redo \u21b7", width=half, disabled=True)
        self.pin = pn.widgets.Button(label="Pin this state as the reference", width=width, color="primary")
        self.unpin = pn.widgets.Button(label="Clear the reference", width=width, disabled=True)
        self.note = pn.pane.HTML("", width=width)
        self.undo.on_click(lambda _: self.history.undo())
        self.redo.on_click(lambda _: self.history.redo())
        self.pin.on_click(lambda _: self.app.pin_reference())
        self.unpin.on_click(lambda _: self.app.clear_reference())
        history.param.watch(self._buttons, ["can_undo", "can_redo"])
        app.param.watch(self._buttons, ["pinned", "read_only"])
        self._buttons()

    def _buttons(self, *_):
        locked = self.app.read_only
        self.undo.disabled = locked or not self.history.can_undo
        self.redo.disabled = locked or not self.history.can_redo
        self.pin.disabled = locked
        self.unpin.disabled = locked or self.app.pinned is None
        self.note.object = ('<div style="font-size:12px;color:#444">'
                            + (f"reference pinned: {escape(self.app.pinned_label)} (see the Compare tab)"
                               if self.app.pinned is not None else
                               "no reference pinned: pin a state, edit, and the Compare tab lists what "
                               "changed") + "</div>")

    def widgets(self) -> list:
        """The widgets of these tools (they follow ``read_only`` themselves)."""
        return [self.undo, self.redo, self.pin, self.unpin]

    def panel(self):
        return pn.Card(pn.Row(self.undo, self.redo), self.pin, self.unpin, self.note, title="Edits and reference",
                       width=320, margin=(4, 4))
