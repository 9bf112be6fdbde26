"""Hypothesis strategy for the names a system file accepts."""

from __future__ import annotations

from hypothesis import strategies as st

from orbitdeck.models.files.names import name_problem

#: general categories a name may never hold (control, format, surrogate, private-use, unassigned,
#: line and paragraph separators), as orbitdeck.models.files.names refuses them
REFUSED_CATEGORIES = ("Cc", "Cf", "Cs", "Co", "Cn", "Zl", "Zp")


def names(max_size: int) -> st.SearchStrategy:
    """Names that show as themselves, of 1 to ``max_size`` characters.

    Drawn from the categories a name may hold, so that the filter (blank
    names, and the few default-ignorable code points of those categories)
    rarely refuses one: drawn from all of Unicode, most were refused and
    Hypothesis's filter-too-much health check failed now and then.
    """
    return (st.text(st.characters(blacklist_categories=REFUSED_CATEGORIES), min_size=1, max_size=max_size)
            .filter(lambda s: s.strip() != "" and name_problem(s) is None))
