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
                                   "Observability", "Dynamics"])
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
