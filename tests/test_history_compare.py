"""Undo and redo of a session's edits, and the comparison of a pinned reference state with the current one."""

from __future__ import annotations

import math

import pytest

from orbitdeck.models import derive, dumps_system, load_demo
from orbitdeck.models.engine.compare import combined_sigmas, compare


@pytest.fixture()
def app():
    from orbitdeck.dashboard.app import OrbitDeckApp

    return OrbitDeckApp(load_demo("skew_trio"))


def test_undo_and_redo_walk_the_states_of_the_session(app):
    history = app.history
    first = dumps_system(app.system)
    app.system.star.mass = 0.8
    app.system.planets[0].radius = 2.0
    edited = dumps_system(app.system)
    assert history.can_undo and not history.can_redo and history.states == 3
    app.selected = app.system.planets[1].name
    assert history.undo() and history.undo()
    assert dumps_system(app.system) == first and not history.can_undo and history.can_redo
    assert app.selected == app.system.planets[1].name       # the selection and time stay
    assert app.derived.star["mass_msun"] == load_demo("skew_trio").star.mass
    assert history.redo() and history.redo() and dumps_system(app.system) == edited
    assert not history.redo()
    # an edit after an undo drops what could have been redone
    history.undo()
    app.system.assumptions.bond_albedo = 0.5
    assert not history.can_redo and history.states == 3
    # edits of the restored system keep being recorded (its watcher moved with it)
    app.system.star.teff = 4000.0
    assert history.states == 4 and app.derived.star["teff_k"] == 4000.0


def test_switching_draws_or_a_refused_edit_is_no_new_state(app):
    app.uncertainty = True
    assert app.history.states == 1
    app.controls._apply(app.system.star, "mass", 250.0, "mass", app.controls.star_message)   # inside the star
    assert app.history.states in (1, 2) and dumps_system(app.system) == app.history._states[app.history.position]


def test_loading_a_file_starts_a_new_history(app):
    from orbitdeck.models.files.sources import demo_source

    app.system.star.mass = 0.8
    source = demo_source("amber_pair")
    app.replace_system(source.system(), source)
    assert app.history.states == 1 and not app.history.can_undo
    assert app.provenance()["input"] == {"name": "demo:amber_pair", "sha256": source.sha256, "edited": False}
    app.system.star.mass = 1.2
    edited = app.provenance()["input"]
    assert edited["edited"] and edited["sha256"] == source.sha256 and len(edited["edited_sha256"]) == 64


def test_combined_uncertainty_uses_the_sides_facing_each_other():
    # old 10 +1 -2, new 13 +3 -1.5: new above old, so s_old = +1 and s_new = -1.5 (common practice for
    # asymmetric errors of a difference): 3 / sqrt(1 + 2.25)
    assert math.isclose(combined_sigmas(10.0, (8.0, 11.0), 13.0, (11.5, 16.0)), 3 / math.sqrt(3.25))
    # the other way round: s_old = -1.5 (the old state's lower side), s_new = +1
    assert math.isclose(combined_sigmas(13.0, (11.5, 16.0), 10.0, (8.0, 11.0)), -3 / math.sqrt(1.5 ** 2 + 1.0))
    assert combined_sigmas(1.0, None, 2.0, (1.0, 3.0)) is None


def test_a_pinned_comparison_lists_what_changed_with_sign_and_size(app):
    app.uncertainty = True
    app.pin_reference()
    assert app.pinned is app.derived
    inner = app.system.planets[0]
    old_radius = inner.radius
    inner.radius = old_radius * 1.5           # only the innermost planet's radius
    changes = compare(app.pinned, app.derived)
    keys = {(c.table, c.row, c.quantity.key) for c in changes}
    assert ("planets", inner.name, "radius_rearth") in keys and ("planets", inner.name, "transit_depth_ppm") in keys
    # what the radius does not enter stays out: periods, orbits, insolation, the other planets' own values
    assert not any(k[2] in ("period_d", "semi_major_axis_au", "insolation_earth", "teq_k") for k in keys)
    assert not any(t == "planets" and row != inner.name for t, row, _ in keys)
    depth = next(c for c in changes if c.row == inner.name and c.quantity.key == "transit_depth_ppm")
    # depth = (Rp/R*)^2: a radius 1.5 times larger deepens the transit 2.25 times (Winn 2010, eq. 1 in the limit
    # of no limb darkening)
    assert math.isclose(depth.new / depth.old, 2.25, rel_tol=1e-9)
    assert depth.difference > 0 and depth.sigmas > 3
    view = app.views["Compare"]
    html = view.body.object
    assert "transit_depth_ppm" in html and "+" in html
    row = html[html.index('data-key="planets.transit_depth_ppm"'):].split("</tr>")[0]
    assert f"+{depth.sigmas:.2f}" in row
    # smaller than pinned: a minus sign
    inner.radius = old_radius * 0.5
    depth = next(c for c in compare(app.pinned, app.derived) if c.quantity.key == "transit_depth_ppm")
    assert depth.difference < 0 and depth.sigmas < 0
    row = view.body.object[view.body.object.index('data-key="planets.transit_depth_ppm"'):].split("</tr>")[0]
    assert f"\u2212{abs(depth.sigmas):.2f}" in row
    app.clear_reference()
    assert app.pinned is None and "No reference is pinned" in view.body.object


def test_added_and_removed_planets_show_as_new_and_gone():
    system = load_demo("skew_trio")
    before = derive(system)
    from orbitdeck.models import Planet

    system.add_planet(Planet(name="x", period=40.0, radius=1.0))
    system.remove_planet(system.planets[0].name)
    changes = compare(before, derive(system))
    assert any(c.row == "x" and c.old is None and c.new is not None for c in changes)
    assert any(c.row == before.planet_names[0] and c.new is None for c in changes)


def test_snapshot_includes_the_comparison_only_when_pinned(app):
    app.system.star.mass = 0.7
    page = app.controls._snapshot().getvalue().decode()
    assert "od-compare" not in page
    app.pin_reference()
    app.system.star.mass = 0.75
    page = app.controls._snapshot().getvalue().decode()
    assert "od-compare" in page and "break-before: page" in page


def test_names_in_the_comparison_are_text():
    from orbitdeck.dashboard.views.compare import comparison_html

    system = load_demo("skew_trio")
    before = derive(system)
    system.planets[0].name = "<script>window.__owned=1</script>"
    system.star.mass = 0.9
    html = comparison_html(before, derive(system), '<img src=x onerror="alert(1)">')
    assert "<script>" not in html and "<img" not in html
    assert "&lt;script&gt;" in html and "&lt;img" in html
