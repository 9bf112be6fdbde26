"""Invalid entries in the served dashboard are explained inline and change nothing.

Letters, a decimal comma, zero, negative numbers, ``nan``, a number beyond
the floating-point range (``1e999``) and a blank box are typed into the
star's mass and the selected planet's period and applied with Enter. Each
must show an inline message naming the field and the reason while the
values the views show (the Flux & temperature table, the data of the
insolation plot) stay as they were; a valid entry afterwards applies and
clears the message. The expected semi-major axis after a valid period is
computed here from Kepler's third law with astropy's constants, not with
the project's code. (That an edit in one session leaves another unchanged
is checked in test_browser_dashboard.py; here, that a rejected entry and
its message stay in their own session.)
"""

from __future__ import annotations

import math

import astropy.constants as const
import astropy.units as u
import pytest

from orbitdeck.demo_systems import demo_path
from orbitdeck.models import load_system
from test_browser_hostile import dashboard, show, wait_for

pytestmark = pytest.mark.browser

MASS, PERIOD = "Mass [Msun]", "Period [d]"
#: text typed -> words the message must contain (beside the field's name)
INVALID = {
    "abc": "is not a number",
    "1,5": "is not a number",
    "0x1A": "is not a number",
    "nan": "must be a finite number",
    "1e999": "must be a finite number",
    "-inf": "must be a finite number",
    "-2": "must be >",
    "0": "must be >",
    "": "a value is needed",
}


#: the columns of the Flux & temperature tables (by the registry's keys)
A, P, TEQ = "semi_major_axis_au", "period_d", "teq_k"


def cells(page, field: str) -> list[str]:
    """The texts of one column of the Flux & temperature tables."""
    return page.locator(f'.tabulator-row .tabulator-cell[tabulator-field="{field}"]').all_inner_texts()


def plotted(page) -> dict:
    """The insolation plot's data as the browser holds it (the source with a ``teq`` column)."""
    return page.evaluate("""() => {
        const s = [...Bokeh.documents[0]._all_models.values()].find(m => m.type == "ColumnDataSource"
                                                                     && m.data.teq !== undefined);
        return {S: Array.from(s.data.S), a: Array.from(s.data.a), teq: Array.from(s.data.teq)};
    }""")


def shown_state(page) -> tuple:
    return cells(page, A), cells(page, P), cells(page, TEQ), plotted(page)


def enter(page, label: str, text: str) -> None:
    box = page.get_by_label(label, exact=True)
    box.fill(text)
    box.press("Enter")


def try_invalid_entries(page, label: str, field_words: str) -> None:
    show(page, "Flux & temperature")
    before = shown_state(page)
    for text, reason in INVALID.items():
        enter(page, label, text)
        # the message names the field, the reason and (but for a blank) what was typed
        message = page.get_by_text(f"{field_words}: ", exact=False).filter(has_text=reason)
        if text:
            message = message.filter(has_text=repr(text) if "number" in reason else f"not {text}")
        wait_for(lambda: message.count() > 0, what=f"the message about {text!r} in {label}")
        page.wait_for_timeout(300)  # a wrongly applied entry would have reached the page by now
        assert shown_state(page) == before, f"{label} = {text!r} changed the views"


def test_invalid_star_masses_are_refused_inline_and_a_valid_one_applies(browser, demo_url):
    system = load_system(demo_path())
    with dashboard(browser, demo_url) as (page, _, _):
        try_invalid_entries(page, MASS, "Mass [Msun]")
        before = cells(page, A)
        enter(page, MASS, "0.2")
        wait_for(lambda: cells(page, A) != before, what="the new semi-major axes")
        assert page.get_by_text("Mass [Msun]: ", exact=False).count() == 0  # the message is cleared
        # a scales as M^(1/3) at fixed periods (Kepler's third law; planet masses are ~1e-5 of the star's)
        ratio = (0.2 / system.star.mass) ** (1 / 3)
        for new, old in zip(cells(page, A), before):
            # four significant digits shown (the registry's format of a)
            assert float(new) == pytest.approx(float(old) * ratio, rel=1e-3)


def test_invalid_periods_are_refused_inline_and_a_valid_one_applies(browser, demo_url):
    system = load_system(demo_path())
    first = system.planets[0]
    with dashboard(browser, demo_url) as (page, _, _):
        assert page.get_by_label(PERIOD, exact=True).input_value() == f"{first.period:.10g}"
        try_invalid_entries(page, PERIOD, f"planet {first.name}: Period [d]")
        enter(page, PERIOD, "1e9")
        wait_for(lambda: page.get_by_text("must be <= 1e+08 d", exact=False).count() > 0, what="the upper bound")
        enter(page, PERIOD, "2.5")
        wait_for(lambda: cells(page, P)[0] == "2.5", what="the new period")
        assert page.get_by_text(f"planet {first.name}: Period [d]: ", exact=False).count() == 0
        # Kepler's third law, a^3 = G (M* + Mp) P^2 / (4 pi^2), with astropy's IAU 2015 constants
        total = system.star.mass * const.M_sun + first.mass * const.M_earth
        a = ((const.G * total * (2.5 * u.day) ** 2 / (4 * math.pi**2)) ** (1 / 3)).to(u.au).value
        assert float(cells(page, A)[0]) == pytest.approx(a, rel=1e-3)


def test_a_refused_entry_and_its_message_stay_in_their_own_session(browser, demo_url):
    with dashboard(browser, demo_url) as (one, _, _), dashboard(browser, demo_url) as (two, _, _):
        show(one, "Flux & temperature")
        show(two, "Flux & temperature")
        original = shown_state(two)
        enter(one, PERIOD, "nan")
        wait_for(lambda: one.get_by_text("must be a finite number", exact=False).count() > 0, what="the message")
        enter(two, MASS, "0.15")
        wait_for(lambda: cells(two, A) != original[0], what="the edit in the second page")
        one.wait_for_timeout(1000)
        assert two.get_by_text("must be a finite number", exact=False).count() == 0
        assert one.get_by_text("must be a finite number", exact=False).count() > 0
        assert cells(one, A) == original[0]
