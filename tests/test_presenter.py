"""Presenter mode without a browser: the channel's rules, and that it never updates a session itself.

Each session's document here queues its next-tick callbacks instead of
running them, so a test can see that a presenter's change reaches a
follower only through the follower's own document, and when.
"""

from __future__ import annotations

import threading

import pytest
from bokeh.document import Document

from orbitdeck.dashboard.presenter import PresenterChannel, PresenterLink
from orbitdeck.models import load_demo


class _Session:
    """Stands in for a server session of a document (the link only asks whether there is one)."""

    id = "test"


class QueuedDocument(Document):
    """A document whose next-tick callbacks wait in a list until :meth:`run` (as a server would run them)."""

    def __init__(self):
        super().__init__()
        self.queued, self.destroyed = [], []

    @property
    def session_context(self):
        return _Session()

    def add_next_tick_callback(self, callback):
        self.queued.append(callback)

    def on_session_destroyed(self, *callbacks):
        self.destroyed.extend(callbacks)

    def run(self) -> int:
        ran = 0
        while self.queued:
            self.queued.pop(0)()
            ran += 1
        return ran


def session(channel, token=None):
    from orbitdeck.dashboard.app import OrbitDeckApp

    app, doc = OrbitDeckApp(load_demo("skew_trio")), QueuedDocument()
    link = PresenterLink(app, channel, doc, token)
    doc.run()
    return app, link, doc


@pytest.fixture()
def room():
    channel = PresenterChannel(token="secret-token")
    sessions = [session(channel) for _ in range(3)]
    for _, _, doc in sessions:
        doc.run()
    return channel, sessions


def test_the_first_session_presents_and_the_others_follow_read_only(room):
    channel, [(a, la, _), (b, lb, _), (c, lc, _)] = room
    assert (la.role, lb.role, lc.role) == ("presenter", "follower", "follower")
    assert not a.read_only and b.read_only and c.read_only
    assert lb.presenter_name == "Session 1"
    assert channel.snapshot()[0].members == ((1, "Session 1"), (2, "Session 2"), (3, "Session 3"))


def test_a_change_reaches_a_follower_only_through_its_own_document(room):
    _, [(a, _, _), (b, _, doc_b), (c, _, doc_c)] = room
    a.system.star.mass = 0.9
    a.selected = a.system.planets[2].name
    # nothing of the followers changed yet: their documents hold the update, once each, however many changes
    assert b.system.star.mass != 0.9 and b.selected != a.selected
    assert len(doc_b.queued) == 1 and len(doc_c.queued) == 1
    assert doc_b.run() == 1 and doc_c.run() == 1
    for follower in (b, c):
        assert follower.system.star.mass == 0.9 and follower.selected == a.selected
        assert follower.derived is a.derived          # shown as derived by the presenter, not derived again
    a.tabs.active = 3
    a.uncertainty = True
    doc_b.run()
    assert b.tabs.active == 3 and b.uncertainty and b.derived is a.derived and b.derived.samples == a.samples


def test_only_the_presenter_publishes_and_edits_of_followers_are_refused(room):
    channel, [(a, la, _), (b, lb, doc_b), _] = room
    assert not channel.publish(lb.id, b.system, b.derived, b.elements, 0, {})
    shown = b.system.star.mass
    b.controls.star_entries["mass"].value = "0.5"             # as a page sending past its disabled box would
    assert b.system.star.mass == shown and a.system.star.mass == shown
    assert "read-only" in b.controls.star_message.object
    b.selected = b.system.planets[-1].name                     # a click in a view
    doc_b.run()
    assert b.selected == a.selected and "read-only" in lb.notice.object
    assert not b.history.undo() and b.pinned is None
    b.pin_reference()
    assert b.pinned is None


def test_hand_over_token_and_leaving(room):
    channel, [(a, la, doc_a), (b, lb, doc_b), (c, lc, doc_c)] = room
    assert not channel.hand_over(lb.id, lc.id)                 # only the presenter hands over
    assert channel.hand_over(la.id, lb.id)
    for doc in (doc_a, doc_b, doc_c):
        doc.run()
    assert (la.role, lb.role) == ("follower", "presenter") and a.read_only and not b.read_only
    b.system.star.teff = 5000.0                                # the new presenter edits its own copy
    doc_a.run()
    assert a.system.star.teff == 5000.0 and a.system is not b.system
    assert not channel.claim(lc.id, "wrong") and channel.claim(lc.id, "secret-token")
    for doc in (doc_a, doc_b, doc_c):
        doc.run()
    assert lc.role == "presenter" and c.system.star.teff == 5000.0   # it carries on from the room's state
    lc.close()
    for doc in (doc_a, doc_b):
        doc.run()
    assert channel.snapshot()[0].presenter is None and "Nobody presents" in la.banner.object
    assert channel.claim(la.id)                                # while nobody presents, asking is enough
    doc_a.run()
    assert la.role == "presenter"


def test_a_token_in_the_address_presents_at_once():
    channel = PresenterChannel(token="tok")
    first = session(channel)
    second = session(channel, token="tok")
    first[2].run()
    assert second[1].role == "presenter" and first[1].role == "follower"


def test_waking_from_many_threads_schedules_one_update_per_session(room):
    _, [(a, _, _), (b, lb, doc_b), _] = room
    threads = [threading.Thread(target=lb.wake) for _ in range(20)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join()
    assert len(doc_b.queued) == 1
