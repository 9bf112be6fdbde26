"""Served pages: views of hidden tabs wait for their tab and are correct when it opens.

In a served page (``OrbitDeckApp.page()``) only the shown tab's views follow
each change at once; the others are marked stale and catch up when their tab
is opened, before Panel builds the tab. The values a view shows after it has
caught up are checked against derive() of the edited system, computed here
on its own copy, and against an app that followed every change at once.
"""

from __future__ import annotations

import gc
import os
import signal
import subprocess
import sys
from pathlib import Path

import panel as pn
import pytest
from bokeh.document import Document

from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.dashboard.serve import server_settings, warm_up
from orbitdeck.dashboard.views import plotting
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import derive, load_system

pytestmark = pytest.mark.filterwarnings("ignore:The inplace keyword in DataFrame.reset_index")

TITLES = ("Layout", "Neighbour skies", "Period ladder", "Flux & temperature", "Observability")


def served_app():
    """An app whose page is attached to a document, as in a served session (Layout shown)."""
    app = OrbitDeckApp(load_system(demo_path()))
    app.page().server_doc(Document())
    return app


def flux_axes(app) -> list[float]:
    return list(app.views["Flux & temperature"].plot.data["planets"]["a"])


def layers_of(view) -> dict:
    """Every layer's data of every plot of a view, by plot and layer name."""
    plots = {name: getattr(view, name) for name in ("plot", "matrix", "bars", "sky", "tracks", "elongation")
             if hasattr(view, name) and hasattr(getattr(view, name), "data")}
    return {(p, layer): data for p, plot in plots.items() for layer, data in plot.data.items()}


def open_tab(app, title: str) -> None:
    app.tabs.active = TITLES.index(title)


def test_hidden_views_wait_and_catch_up_when_their_tab_opens():
    app = served_app()
    before = flux_axes(app)
    app.system.star.mass = 0.2
    expected = load_system(demo_path())
    expected.star.mass = 0.2
    a = derive(expected).planets["semi_major_axis_au"]
    # the shown tab follows at once
    assert list(app.views["Layout"].plot.data["planets"]["a"]) == pytest.approx(a, rel=1e-12)
    # a hidden view built before the change waits; the others are not built by it
    assert app.stale_tabs() == ["Flux & temperature"]
    assert app.views.built() == ["Layout", "Flux & temperature"]
    assert flux_axes(app) == before
    open_tab(app, "Flux & temperature")
    assert flux_axes(app) == pytest.approx(a, rel=1e-12)
    table = app.views["Flux & temperature"].tables["Orbits and irradiation"].value
    assert list(table["semi_major_axis_au"]) == [format(v, ".4g") for v in a]
    assert "Flux & temperature" not in app.stale_tabs()


def test_a_view_that_waited_matches_one_that_followed_every_change():
    waiting, following = served_app(), OrbitDeckApp(load_system(demo_path()))
    for app in (waiting, following):
        app.system.star.mass = 0.15
        app.selected = "e"
        app.time = app.system.epoch + 3.3
        app.system.planet("c").eccentricity = 0.05
    for title in TITLES[1:]:
        open_tab(waiting, title)
    for title in TITLES:
        ours, theirs = layers_of(waiting.views[title]), layers_of(following.views[title])
        assert ours.keys() == theirs.keys(), title
        for key in ours:
            assert plotting.same(ours[key], theirs[key]), (title, key)
    sky_from, followed = waiting.views["Neighbour skies"].sky_from, following.views["Neighbour skies"].sky_from
    assert sky_from.table.value.equals(followed.table.value)
    assert all(plotting.same(data, layers_of(followed)[key]) for key, data in layers_of(sky_from).items())
    assert sky_from.sky_title.object == following.views["Neighbour skies"].sky_from.sky_title.object
    assert waiting.stale_tabs() == []


def test_a_shown_tab_follows_selection_at_once_and_hidden_ones_on_opening():
    app = served_app()
    open_tab(app, "Observability")
    app.selected = "d"
    names = list(app.views["Observability"].plot.data["bars"]["planet"])
    widths = list(app.views["Observability"].plot.data["bars"]["line_width"])
    assert widths[names.index("d")] == max(widths) and widths.count(max(widths)) == 1
    assert "Observability" not in app.stale_tabs() and "Layout" in app.stale_tabs()
    open_tab(app, "Layout")
    sizes = list(app.views["Layout"].plot.data["planets"]["size"])
    assert sizes[names.index("d")] == max(sizes) and sizes.count(max(sizes)) == 1


def test_a_session_builds_only_the_views_it_shows():
    app = served_app()
    assert app.views.built() == ["Layout", "Flux & temperature"]
    app.system.star.mass = 0.17
    assert app.views.built() == ["Layout", "Flux & temperature"]
    assert app.stale_tabs() == ["Flux & temperature"]
    open_tab(app, "Observability")
    assert app.views.built() == ["Layout", "Flux & temperature", "Observability"]
    assert app.tabs[TITLES.index("Observability")].objects, "the view is in its tab"
    # built when first shown, from the state of that moment; the waiting one catches up when shown
    expected = load_system(demo_path())
    expected.star.mass = 0.17
    open_tab(app, "Flux & temperature")
    assert flux_axes(app) == pytest.approx(derive(expected).planets["semi_major_axis_au"], rel=1e-12)
    # reading a view from code builds it too, and every view is there
    assert [type(app.views[t]).__name__ for t in TITLES] == ["LayoutView", "SkiesView", "LadderView", "FluxView",
                                                             "ObservabilityView"]
    assert app.views.built() == list(TITLES)


def test_without_a_served_page_every_view_follows_at_once():
    app = OrbitDeckApp(load_system(demo_path()))
    app.system.star.mass = 0.2
    assert app.stale_tabs() == []
    expected = load_system(demo_path())
    expected.star.mass = 0.2
    assert flux_axes(app) == pytest.approx(derive(expected).planets["semi_major_axis_au"], rel=1e-12)


def test_catch_up_all_brings_every_tab_up_to_date():
    app = served_app()
    app.system.star.mass = 0.13
    app.catch_up_all()
    assert app.stale_tabs() == [] and app.shown_tab == "Layout"
    expected = load_system(demo_path())
    expected.star.mass = 0.13
    assert flux_axes(app) == pytest.approx(derive(expected).planets["semi_major_axis_au"], rel=1e-12)


def test_warm_up_leaves_no_session_state_behind():
    def apps_alive() -> int:
        gc.collect()
        return sum(isinstance(o, OrbitDeckApp) for o in gc.get_objects())

    pn.extension("tabulator")
    views_before, apps_before = set(pn.state._views), apps_alive()
    warm_up()
    assert set(pn.state._views) == views_before
    assert apps_alive() == apps_before


def test_server_releases_closed_sessions_sooner_than_bokeh_by_default():
    settings = server_settings()
    # Bokeh's defaults: 15000 ms without a connection, checked every 17000 ms (bokeh.server.server docs)
    assert settings["unused_session_lifetime_milliseconds"] < 15000
    assert settings["check_unused_sessions_milliseconds"] < 17000
    assert settings["unused_session_lifetime_milliseconds"] >= 5000  # a page's websocket has time to connect


def test_the_served_command_leaves_its_environment_as_it_was(tmp_path):
    # the server neither re-executes itself nor changes its environment (no allocator switches)
    sys.path.insert(0, str(Path(__file__).parent))
    from browser_support import free_port, stop, wait_until_serving

    port = free_port()
    env = {k: v for k, v in os.environ.items() if k != "PYTHONMALLOC"}
    with open(tmp_path / "serve.log", "w+") as log:
        server = subprocess.Popen([sys.executable, "-m", "orbitdeck.dashboard.serve", "--no-show", "--port",
                                   str(port)], stdout=log, stderr=subprocess.STDOUT, env=env)
        try:
            wait_until_serving(server, port, log)
            environ = Path(f"/proc/{server.pid}/environ").read_bytes().split(b"\0")
            assert not any(entry.startswith(b"PYTHONMALLOC=") for entry in environ)
            server.send_signal(signal.SIGINT)  # Ctrl+C
            assert server.wait(timeout=30) == 0
        finally:
            if server.poll() is None:
                stop(server)
