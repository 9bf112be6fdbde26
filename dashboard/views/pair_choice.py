"""The adjacent pair chosen in a session, ``app.selected_pair``: which pair it is, and a table of the pairs
whose selected row and the chosen pair follow each other.

Pair i joins planets i and i + 1 in period order. The app keeps the choice
on the same two planets through edits (:func:`pair_index_after`); a view
reads it through :func:`chosen_pair`, which also guards against an index
beyond the pairs it shows.
"""

from __future__ import annotations


def pair_names(derived) -> list[tuple[str, str]]:
    """(inner, outer) names of each adjacent pair of ``derived``."""
    return [(str(a), str(b)) for a, b in zip(derived.pairs["inner"], derived.pairs["outer"])]


def pair_or_none(index, derived):
    """``index`` when ``derived`` has such an adjacent pair, else None."""
    return index if index is not None and 0 <= index < len(derived.pairs["inner"]) else None


def pair_index_after(old, new, index):
    """Where the adjacent pair ``index`` of derivation ``old`` is in ``new``, by its planets' names (None when
    those two planets are no longer neighbours, or there was no such pair)."""
    if index is None or old is None or new is None:
        return None
    before = pair_names(old)
    if not 0 <= index < len(before):
        return None
    after = pair_names(new)
    return after.index(before[index]) if before[index] in after else None


def chosen_pair(app):
    """The index of the chosen pair, None when none is chosen (or the index lies beyond the pairs)."""
    return pair_or_none(app.selected_pair, app.derived)


class PairRows:
    """A table whose row i is adjacent pair i: picking a row chooses its pair, unpicking it chooses none,
    and the chosen pair's row is selected whoever chose it.

    Panel drops a selection that falls outside new rows; :meth:`fill`
    replaces the rows without taking that for a choice.
    """

    def __init__(self, table, app):
        self.table, self.app = table, app
        self._following = False   # True while the table is set from the app (its selection events are ours)
        table.param.watch(self._picked, "selection")

    def fill(self, frame) -> None:
        """Show the rows of ``frame`` and select the chosen pair's row."""
        self._following = True
        try:
            self.table.value = frame
        finally:
            self._following = False
        self.show()

    def show(self) -> None:
        """Select the chosen pair's row (none without a chosen pair)."""
        chosen = chosen_pair(self.app)
        wanted = [] if chosen is None else [chosen]
        if self.table.selection != wanted:
            self._following = True
            try:
                self.table.selection = wanted
            finally:
                self._following = False

    def _picked(self, event) -> None:
        if self._following:
            return
        rows = [row for row in event.new if 0 <= row < len(self.app.derived.pairs["inner"])]
        self.app.selected_pair = rows[0] if rows else None
