"""Every view's plots as plain HoloViews objects, and the same objects saved as images through matplotlib.

The figures for slides come from the same element-building functions as the live Bokeh plots: a
figure's elements carry the live layers' data, and ``hv.save(..., backend="matplotlib")`` writes them.
"""

from __future__ import annotations

import holoviews as hv
import numpy as np
import pytest
from PIL import Image

from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import load_system

pytestmark = pytest.mark.filterwarnings("ignore:The inplace keyword in DataFrame.reset_index")


@pytest.fixture(scope="module")
def app():
    return OrbitDeckApp(load_system(demo_path()), samples=500, uncertainty=True)


@pytest.mark.parametrize("title", ["Layout", "Neighbour skies", "Period ladder", "Flux & temperature",
                                   "Observability", "Dynamics", "Bulk & atmosphere", "Transit planner"])
def test_each_view_saves_through_matplotlib(app, title, tmp_path):
    figure = app.views[title].figure("matplotlib")
    path = tmp_path / "figure.png"
    hv.save(figure, path, backend="matplotlib")
    image = np.asarray(Image.open(path).convert("RGB"))
    assert image.shape[0] > 200 and image.shape[1] > 300
    # something is drawn: many distinct colours, not a blank canvas
    assert len(np.unique(image.reshape(-1, 3), axis=0)) > 50


def test_figures_hold_the_live_layers_data(app):
    flux = app.views["Flux & temperature"]
    figure = flux.figure()
    planets = next(el for el in figure if el.group == "FluxPlanet")
    np.testing.assert_array_equal(planets.dimension_values("S"), flux.plot.data["planets"]["S"])
    np.testing.assert_array_equal(planets.dimension_values("name"), flux.plot.data["planets"]["name"])
    app.system.star.mass = 0.125
    moved = next(el for el in flux.figure() if el.group == "FluxPlanet")
    np.testing.assert_allclose(moved.dimension_values("S"), app.derived.planets["insolation_earth"])
    layout = app.views["Layout"].figure()
    assert {el.group for el in layout} >= {"LayoutOrbit", "LayoutPlanet", "LayoutStar", "LayoutHZ"}


def test_bulk_and_transit_figures_are_the_live_elements(app):
    bulk = app.views["Bulk & atmosphere"]
    mass_radius, shoreline, heat = bulk.figure("matplotlib")
    points = next(el for el in mass_radius if el.group == "BulkMassRadius")
    np.testing.assert_array_equal(points.dimension_values("mass"), bulk._mass_radius_points().dimension_values("mass"))
    np.testing.assert_allclose(next(el for el in heat if el.group == "BulkHeat").dimension_values("flux"),
                               bulk._heat_bars().dimension_values("flux"))
    assert {el.group for el in shoreline} >= {"BulkShoreline", "BulkShorePlanet"}
    planner = app.views["Transit planner"]
    live, static = planner.timeline(), planner.figure("matplotlib")
    assert [el.group for el in live] == [el.group for el in static]
    ticks = next(el for el in static if el.group == "TransitTick")
    # the same transits: calendar dates live, matplotlib's day numbers (days since 1970) in the figure
    days = (next(el for el in live if el.group == "TransitTick").dimension_values("mid").astype("datetime64[ms]")
            .astype("int64") / 86_400_000.0)
    np.testing.assert_allclose(ticks.dimension_values("mid"), days, rtol=0, atol=1e-6)
