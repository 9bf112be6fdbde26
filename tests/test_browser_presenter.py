"""Presenter mode in headless Chromium: ``orbitdeck serve --present`` with one browser context per person.

The first page opened presents; a second page follows it, read-only: the
presenter's edit, planet, tab and uncertainty setting reach it within a
second; its own attempt to edit (sent past the disabled controls, straight
into its document) is taken back; the presenter hands over; a page opened
with the printed token takes over.
"""

from __future__ import annotations

import contextlib
import re
import time

import pytest

from browser_support import open_page, screenshot, served, wait_for

pytestmark = pytest.mark.browser

VIEWPORT = {"width": 1500, "height": 1000}


@contextlib.contextmanager
def person(browser, url):
    """One person's page (a browser context of its own), opened and rendered."""
    origin = url.split("/orbitdeck")[0]
    with open_page(browser, (origin,), VIEWPORT) as (page, log):
        page.goto(url)
        page.wait_for_selector(".bk-Canvas", timeout=60_000)
        yield page
        assert log.problems_on_server(origin) == []


def role(page) -> str | None:
    return page.evaluate("""() => {
        const doc = Bokeh.documents[0];
        // (Panel keeps an HTML pane's text escaped in its model)
        const div = [...doc._all_models.values()].find(m => typeof m.text === "string" && m.text.includes("data-role="));
        const match = div && div.text.match(/data-role=(?:"|&quot;)(\\w+)/);
        return match ? match[1] : null;
    }""")


def shows(page, text: str) -> bool:
    return page.get_by_text(text, exact=False).count() > 0


def enter(page, label: str, text: str) -> None:
    box = page.get_by_label(label, exact=True)
    box.fill(text)
    box.press("Enter")


def checkbox(page, text: str):
    """The check box named ``text`` (its input sits inside its label, which gives it that accessible name)."""
    return page.get_by_role("checkbox", name=text, exact=True)


def active_tab(page) -> str:
    return page.locator(".bk-tab.bk-active").first.inner_text()


def set_model_value(page, title: str, value: str) -> None:
    """Change a text box's value in the page's document directly, as a page that ignores ``disabled`` could."""
    page.evaluate("""([title, value]) => {
        const doc = Bokeh.documents[0];
        const box = [...doc._all_models.values()].find(m => m.type.endsWith("TextInput") && m.title == title);
        box.value = value;
    }""", [title, value])


@pytest.fixture(scope="module")
def presenting(tmp_path_factory):
    folder = tmp_path_factory.mktemp("present")
    with served(folder, "--present") as url:
        log = next(folder.glob("serve-*.log")).read_text()
        token = re.search(r"\?present=(\S+) ", log).group(1)
        yield url, token


def test_followers_follow_the_presenter_and_cannot_edit(browser, presenting):
    url, token = presenting
    with person(browser, url) as presenter:
        wait_for(lambda: role(presenter) == "presenter", what="the first page to present")
        with person(browser, url) as follower:
            wait_for(lambda: role(follower) == "follower", what="the second page to follow")
            assert shows(follower, "Session 1 presents")
            assert follower.get_by_label("Mass [Msun]", exact=True).is_disabled()
            assert follower.get_by_role("button", name="Pin this state as the reference").is_disabled()
            assert follower.get_by_role("button", name="Download the edited system file").is_enabled()
            assert not presenter.get_by_label("Mass [Msun]", exact=True).is_disabled()

            # an edit of the presenter reaches the follower within a second
            start = time.monotonic()
            enter(presenter, "Mass [Msun]", "0.125")
            wait_for(lambda: shows(follower, "M = 0.125 Msun"), timeout=10, what="the follower to show the edit")
            assert time.monotonic() - start < 1.0 + 0.5   # the target is a second; Playwright's polling adds a little

            # so do the tab, the planet and the uncertainty setting
            presenter.locator(".bk-tab", has_text="Flux & temperature").first.click()
            wait_for(lambda: active_tab(follower) == "Flux & temperature", what="the follower's tab")
            presenter.get_by_label("Planet (also picked by clicking it in a view)").select_option("e")
            wait_for(lambda: follower.get_by_label("Planet (also picked by clicking it in a view)")
                     .input_value() == "e", what="the follower's planet")
            checkbox(presenter, "Show Monte Carlo uncertainties (all views)").click()
            wait_for(lambda: shows(follower, "16th\u201384th percentiles of 4000 Monte Carlo draws"), timeout=30,
                     what="the follower's uncertainties")
            screenshot(follower, "presenter_follower.png")

            # the follower's own edit, sent past its disabled box, is taken back and said so
            set_model_value(follower, "Mass [Msun]", "0.3")
            wait_for(lambda: shows(follower, "read-only: this page follows the presenter"), what="the refusal")
            wait_for(lambda: shows(follower, "M = 0.125 Msun"), what="the follower back at the presenter's state")
            assert not shows(presenter, "M = 0.3 Msun") and not shows(follower, "M = 0.3 Msun")
            follower.locator(".bk-tab", has_text="Layout").first.click()
            wait_for(lambda: active_tab(follower) == "Flux & temperature", what="the follower's tab to be taken back")
            wait_for(lambda: shows(follower, "read-only: only Session 1 can change what is shown"),
                     what="the refusal of the tab")

            # the presenter hands over: roles swap, and the new presenter leads
            presenter.get_by_label("Hand over to").select_option(label="Session 2")
            presenter.get_by_role("button", name="Hand over").click()
            wait_for(lambda: role(follower) == "presenter" and role(presenter) == "follower", what="the hand-over")
            assert not follower.get_by_label("Mass [Msun]", exact=True).is_disabled()
            enter(follower, "Mass [Msun]", "0.13")
            wait_for(lambda: shows(presenter, "M = 0.13 Msun"), what="the old presenter to follow")

            # a page opened with the printed token presents at once
            with person(browser, f"{url}?present={token}") as third:
                wait_for(lambda: role(third) == "presenter", what="the token to give presenting")
                wait_for(lambda: role(follower) == "follower" and shows(follower, "Session 3 presents"),
                         what="the others to follow the token holder")
                assert shows(third, "M = 0.13 Msun")   # it joined showing the room's state


def test_a_wrong_token_does_not_give_presenting(browser, presenting):
    url, token = presenting
    # (the first page takes presenting with the token: sessions of the test before may still be closing)
    with person(browser, f"{url}?present={token}") as first, person(browser, url) as second:
        wait_for(lambda: role(first) == "presenter" and role(second) == "follower", what="a follower")
        second.get_by_label("Presenter token").fill("not-the-token")
        second.get_by_label("Presenter token").press("Enter")
        wait_for(lambda: shows(second, "that is not the presenter token"), what="the refusal of the token")
        assert role(second) == "follower" and role(first) == "presenter"
