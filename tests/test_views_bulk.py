"""The Bulk & atmosphere view, built and rendered without a browser: what it draws is what derive() gives."""

import holoviews as hv
import numpy as np
import pytest

from orbitdeck.dashboard.app import VIEW_CLASSES, OrbitDeckApp
from orbitdeck.dashboard.views.bulk import MOLECULAR_WEIGHTS, BulkView
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import derive, load_system
from orbitdeck.models.physics import atmospheres, interiors, solar_system

TITLE = BulkView.title


@pytest.fixture
def app():
    return OrbitDeckApp(load_system(demo_path("skew_trio")))


def _data(plot, vdim):
    """Columns of the element of ``plot`` (a rendered overlay) that has the value dimension ``vdim``."""
    for element in plot.traverse(lambda e: e, [hv.Element]):
        if vdim in [d.name for d in element.dimensions()]:
            return element
    return None


def test_the_tab_is_registered_and_renders_with_bokeh(app):
    assert BulkView in VIEW_CLASSES and TITLE == "Bulk & atmosphere"
    view = app.views[TITLE]
    for name, plot in view.plots.items():
        figure = hv.render(plot, backend="bokeh")
        assert figure.renderers, name
    assert "Model estimates" in view.caution.object and "Q' = 100" in view.caution.object


def test_planets_are_drawn_where_derive_puts_them(app):
    view = app.views[TITLE]
    derived = derive(app.system)
    points = view._mass_radius_points()
    assert list(points.dimension_values("mass")) == pytest.approx(list(derived.planets["mass_mearth"]))
    assert list(points.dimension_values("radius")) == pytest.approx(list(derived.planets["radius_rearth"]))
    shore = view._shoreline_points()
    assert list(shore.dimension_values("speed")) == pytest.approx(list(derived.planets["escape_speed_kms"]))
    bars = view._heat_bars()
    flux = derived.planets["tidal_heat_flux_w_m2"]
    assert list(bars.dimension_values("flux")) == pytest.approx(list(np.where(flux > 0, flux, np.nan)), nan_ok=True)


def test_composition_curves_and_references_come_from_the_models(app):
    view = app.views[TITLE]
    curves = view._composition_curves()
    assert [c.label for c in curves] == list(interiors.composition_curves())
    line = view._shoreline_line()
    speed, insolation = line.dimension_values(0), line.dimension_values(1)
    assert insolation == pytest.approx(atmospheres.shoreline_insolation(speed))
    shown = view._shoreline_references()
    names = {n for e in shown.traverse(lambda e: e, [hv.Scatter]) for n in e.dimension_values("name")}
    assert names == {b.name for b in solar_system.BODIES}


def test_spectroscopy_table_follows_the_inputs(app):
    view = app.views[TITLE]
    derived = app.derived
    frame = view.table.value
    assert list(frame["planet"]) == list(derived.planet_names)
    # the column at the mean molecular weight of the assumptions equals the registered quantity
    assert app.system.assumptions.mean_molecular_weight == 2.3 and 2.3 in MOLECULAR_WEIGHTS
    assert list(frame["H(\u03bc=2.3) [km]"]) == pytest.approx(list(derived.planets["scale_height_km"]))
    assert list(frame["signal(\u03bc=2.3) [ppm]"]) == pytest.approx(list(derived.planets["transmission_ppm"]))
    expected = atmospheres.transits_needed(2.0 * derived.planets["transmission_ppm"], 30.0, 3.0)
    assert list(frame["transits(\u03bc=2.3)"]) == list(expected)
    view.precision_input.value = 60.0
    assert list(view.table.value["transits(\u03bc=2.3)"]) == list(
        atmospheres.transits_needed(2.0 * derived.planets["transmission_ppm"], 60.0, 3.0))
    assert list(frame["eclipse 15 \u00b5m [ppm]"]) == pytest.approx(list(derived.planets["eclipse_depth_ppm"]))


def test_an_edit_and_a_selection_reach_the_view(app):
    view = app.views[TITLE]
    before = view.revision
    app.system.planets[0].eccentricity = 0.3
    assert view.revision == before + 1
    assert view._heat_bars().dimension_values("flux")[0] == pytest.approx(app.derived.planets["tidal_heat_flux_w_m2"][0])
    name = app.derived.planet_names[2]
    app.selected = name
    assert list(view._mass_radius_selected().dimension_values("highlighted_name")) == [name]
    assert view.table.selection == [2]
    view.taps["mr"].event(index=[1])
    assert app.selected == app.derived.planet_names[1]
    view.table.selection = [0]
    assert app.selected == app.derived.planet_names[0]


def test_estimated_masses_are_hollow_and_named_in_the_caution():
    system = load_system(demo_path("skew_trio"))
    system.planets[1].mass = None
    app = OrbitDeckApp(system)
    view = app.views[TITLE]
    frame = view._mass_radius_frame()
    assert frame["fill"][1] == "white" and frame["fill"][0] != "white"
    assert "estimated from the radius" in view.caution.object and system.planets[1].name in view.caution.object
