"""The dashboard's views without a browser: what each plot holds, selection, colours, edits and controls.

Each view's plots are HoloViews layers fed with plain data (``view.plot.data[layer]``); the numbers drawn are
checked against derive() and, where a view computes something itself (ellipses, positions, the rungs of the
ladder, the habitable-zone band), against an independent calculation written here (astropy constants, scipy's
root finder).
"""

from __future__ import annotations

import argparse
import html
import math
import re
from fractions import Fraction

import astropy.constants as const
import astropy.units as u
import numpy as np
import panel as pn
import pytest
from bokeh.document import Document
from bokeh.models import ColumnDataSource, Label, Legend, Plot
from scipy.optimize import brentq

from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.dashboard.serve import choose_port, register_serve, serve, session_factory
from orbitdeck.dashboard.views import palette
from orbitdeck.dashboard.views.layout import HILL_MIN_SHARE, REFERENCE_ORBITS
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import derive, dumps_system, load_system, loads_system

pytestmark = pytest.mark.filterwarnings("ignore:The inplace keyword in DataFrame.reset_index")


@pytest.fixture
def app():
    return OrbitDeckApp(load_system(demo_path()))


def view(app, title):
    return app.views[title]


def shown(pane) -> str:
    """The text a user reads in an HTML pane."""
    return html.unescape(re.sub(r"<[^>]+>", "", pane.object or ""))


def kepler_third_law_au(period_d, star_msun, planet_mearth):
    """a = (G (M* + Mp) P^2 / 4 pi^2)^(1/3) with astropy's G, M_sun and M_earth (Kepler's third law)."""
    mass = star_msun * const.M_sun + np.asarray(planet_mearth) * const.M_earth
    a = np.cbrt(const.G * mass * (np.asarray(period_d) * u.day) ** 2 / (4 * np.pi ** 2))
    return a.to_value(u.au)


def rendered(plot):
    """The Bokeh figure of a view's live plot, attached to a document of its own."""
    root = pn.pane.HoloViews(plot.live()).get_root(Document())
    return root.select_one({"type": Plot})


def legend_labels(figure) -> list[str]:
    return [item.label["value"] for legend in figure.select({"type": Legend}) for item in legend.items]


# -- Period ladder ---------------------------------------------------------------
def test_ladder_pairs_sit_at_the_period_ratios(app):
    periods = np.array([p.period for p in app.system.planets])
    pairs = view(app, "Period ladder").plot.data["pairs"]
    n = periods.size - 1
    # two discs a pair (inner planet's, then outer planet's), both at the pair's ratio
    np.testing.assert_allclose(pairs["y"][:n], periods[1:] / periods[:-1], rtol=1e-12)
    np.testing.assert_allclose(pairs["y"][n:], periods[1:] / periods[:-1], rtol=1e-12)
    np.testing.assert_allclose(pairs["delta"][:n], app.derived.pairs["delta"], rtol=1e-12)
    assert pairs["planet"] == app.derived.planet_names[:-1] + app.derived.planet_names[1:]


def test_ladder_rungs_are_every_commensurability_up_to_third_order_in_range(app):
    data = view(app, "Period ladder").plot.data
    lo, hi = data["pairs"]["y_range"]
    drawn = sorted(Fraction(label.replace(":", "/")) for label in data["rung_names"]["text"])
    # independent enumeration: p:q in lowest terms, p > q, p - q <= 3, p <= 12 (the ladder's stated limits)
    expected = sorted({Fraction(p, q) for p in range(2, 13) for q in range(max(1, p - 3), p)
                       if math.gcd(p, q) == 1 and lo <= p / q <= hi})
    assert drawn == expected
    ratios = app.derived.pairs["period_ratio"]
    assert lo < ratios.min() and ratios.max() < hi
    for k in (1, 2, 3):
        for y in data[f"rungs{k}"]["y0"]:
            fraction = Fraction(y).limit_denominator(12)
            assert fraction.numerator - fraction.denominator == k and y == pytest.approx(float(fraction))


def test_ladder_stubs_run_to_the_integer_rungs_of_the_pairs(app):
    stubs = view(app, "Period ladder").plot.data["stubs"]
    p, q = app.derived.pairs["p"], app.derived.pairs["q"]
    np.testing.assert_allclose(stubs["y1"], p / q, rtol=1e-15)
    assert list(app.derived.pairs["nearest"]) == [f"{a}:{b}" for a, b in zip(p, q)]


def test_ladder_links_join_consecutive_pairs_with_the_three_body_relation(app):
    ladder = view(app, "Period ladder")
    links = ladder.plot.data["links"]
    ratios = app.derived.pairs["period_ratio"]
    np.testing.assert_allclose(links["y0"], ratios[:-1])
    np.testing.assert_allclose(links["y1"], ratios[1:])
    periods = np.array([p.period for p in app.system.planets])
    table = ladder.triples_table.value
    for i, (p, q) in enumerate(zip(app.derived.triples["p"], app.derived.triples["q"])):
        # Laplace-type relation p/P1 - (p+q)/P2 + q/P3, in deg/day (DESIGN.md physics table)
        direct = 360.0 * (p / periods[i] - (p + q) / periods[i + 1] + q / periods[i + 2])
        assert app.derived.triples["residual_deg_per_day"][i] == pytest.approx(direct, rel=1e-9, abs=1e-12)
        assert (table["p"][i], table["q"][i]) == (str(p), str(q))
        assert f"p={p} q={q}" in ladder.plot.data["link_names"]["text"][i]


# -- Layout ------------------------------------------------------------------------
def eccentric(app):
    for planet, e, w in zip(app.system.planets[:3], (0.3, 0.15, 0.05), (30.0, 200.0, -75.0)):
        planet.param.update(eccentricity=e, omega=w)
    return app


def orbit_points(data, count):
    """The drawn orbits as rows of points, from the segments of the orbits layer."""
    x0, y0 = np.asarray(data["x0"]), np.asarray(data["y0"])
    return x0.reshape(count, -1), y0.reshape(count, -1)


def test_layout_orbits_have_the_derived_semi_major_axes_and_periastra(app):
    eccentric(app)
    data = view(app, "Layout").plot.data["orbits"]
    pl = app.derived.planets
    xs, ys = orbit_points(data, len(pl["name"]))
    a_ref = kepler_third_law_au(pl["period_d"], app.system.star.mass, pl["mass_mearth"])
    for x, y, a, planet in zip(xs, ys, pl["semi_major_axis_au"], app.system.planets):
        r = np.hypot(x, y)
        e = planet.eccentricity
        # the curve is sampled: its nearest and farthest points lie within a hair of periastron and apoastron
        assert r.min() == pytest.approx(a * (1 - e), rel=1e-3)
        assert r.max() == pytest.approx(a * (1 + e), rel=1e-3)
        # definition of an ellipse: distances to the two foci add up to 2a; the empty focus is
        # at 2ae from the star, opposite periastron
        w = math.radians(planet.omega)
        other = -2 * a * e * np.array([math.cos(w), math.sin(w)])
        np.testing.assert_allclose(r + np.hypot(x - other[0], y - other[1]), 2 * a, rtol=1e-9)
    np.testing.assert_allclose(pl["semi_major_axis_au"], a_ref, rtol=1e-6)


def test_layout_positions_solve_keplers_equation(app):
    eccentric(app)
    app.time = app.system.epoch + 0.73
    data = view(app, "Layout").plot.data["planets"]
    for i, planet in enumerate(app.system.planets):
        a, e, w = app.derived.planets["semi_major_axis_au"][i], planet.eccentricity, math.radians(planet.omega)
        # mid-transit at omega + f = 90 deg (Winn 2010), Kepler's equation solved with scipy's brentq
        f_transit = math.pi / 2 - w
        E_transit = 2 * math.atan(math.sqrt((1 - e) / (1 + e)) * math.tan(f_transit / 2))
        M = E_transit - e * math.sin(E_transit) + 2 * math.pi * (app.time - planet.transit_time) / planet.period
        M = math.remainder(M, 2 * math.pi)
        E = brentq(lambda x: x - e * math.sin(x) - M, M - 1.0, M + 1.0, xtol=1e-14)
        f = 2 * math.atan2(math.sqrt(1 + e) * math.sin(E / 2), math.sqrt(1 - e) * math.cos(E / 2))
        r = a * (1 - e * math.cos(E))
        assert data["x"][i] == pytest.approx(r * math.cos(w + f), abs=1e-10)
        assert data["y"][i] == pytest.approx(r * math.sin(w + f), abs=1e-10)


def test_layout_time_and_scale_reference(app):
    layout = view(app, "Layout")
    before = np.arctan2(layout.plot.data["planets"]["y"], layout.plot.data["planets"]["x"])
    app.time = app.system.epoch + app.system.planets[0].period / 4
    after = np.arctan2(layout.plot.data["planets"]["y"], layout.plot.data["planets"]["x"])
    # a circular orbit turns by 90 deg in a quarter period
    assert math.remainder(after[0] - before[0], 2 * math.pi) == pytest.approx(math.pi / 2, abs=1e-9)
    app.reference = "Mercury (0.387 au)"
    ref = layout.plot.data["reference"]
    np.testing.assert_allclose(np.hypot(ref["x0"], ref["y0"]), REFERENCE_ORBITS["Mercury (0.387 au)"], rtol=1e-12)
    assert layout.plot.data["planets"]["x_range"][1] > 0.387


def test_hill_spheres_show_at_the_default_zoom_and_say_how_enlarged(app):
    layout = view(app, "Layout")
    assert len(layout.plot.data["hill"]["x0"]) == 0
    app.show_hill = True
    hill, planets = layout.plot.data["hill"], layout.plot.data["planets"]
    n = len(planets["name"])
    xs, ys = orbit_points(hill, n)
    radius = np.hypot(xs - planets["x"][:, None], ys - planets["y"][:, None]).mean(axis=1)
    factor = layout.hill_factor
    np.testing.assert_allclose(radius, factor * app.derived.planets["hill_radius_au"], rtol=1e-9)
    # drawn at least HILL_MIN_SHARE of the half-width across (several pixels on a 500 px frame), where the
    # true radii are a small fraction of a pixel to a few pixels
    half_width = planets["x_range"][1]
    assert np.median(radius) >= HILL_MIN_SHARE * half_width
    assert np.median(app.derived.planets["hill_radius_au"]) / half_width * 250 < 4   # true size: under 4 px
    assert factor > 1 and f"{factor}\u00d7 their radius" in shown(layout.caption)


def test_layout_legend_lists_only_what_is_drawn_and_notes_stay_off_the_plot(app):
    layout = view(app, "Layout")
    figure = rendered(layout.plot)
    assert legend_labels(figure) == ["orbits", "star (to scale)", "planets"]
    app.show_hill = True
    app.reference = "Venus (0.723 au)"
    labels = legend_labels(figure)
    assert any(label.startswith("Hill spheres") for label in labels)
    assert "a Solar System orbit, for scale" in labels and "Venus's orbit (a = 0.723 au)" in shown(layout.caption)
    app.show_hill = False
    assert not any(label.startswith("Hill spheres") for label in legend_labels(figure))
    # notes are beneath the plot, never drawn on it
    assert not list(figure.select({"type": Label}))
    assert "Positions at BJD_TDB" in shown(layout.caption)


def test_layout_habitable_zone_is_graded_and_hatched_between_the_limits(app):
    hz = view(app, "Layout").plot.data["hz"]
    limits = app.derived.star["hz_au"]
    image, w = hz["image"], hz["half_width"]
    n = image.shape[0]
    centre = (np.arange(n) + 0.5) / n * 2 * w - w
    x, y = np.meshgrid(centre, centre[::-1])
    r = np.hypot(x, y)
    alpha = image[..., 3]
    inside = (r > limits["recent_venus"] * 1.01) & (r < limits["early_mars"] * 0.99)
    outside = (r < limits["recent_venus"] * 0.99) | (r > limits["early_mars"] * 1.01)
    assert (alpha[inside] > 0).all() and (alpha[outside] == 0).all()
    # graded: warmer (redder than blue) at the inner edge, cooler at the outer edge
    ring = lambda r0, r1: image[(r > r0) & (r < r1)][:, :3].astype(float).mean(axis=0)   # noqa: E731
    inner = ring(limits["runaway_greenhouse"] * 1.01, limits["runaway_greenhouse"] * 1.05)
    outer = ring(limits["maximum_greenhouse"] * 0.95, limits["maximum_greenhouse"] * 0.99)
    assert inner[0] - inner[2] > 10 and outer[2] - outer[0] > 10
    # hatched (dark stripes) over the optimistic parts only, the conservative zone solid
    hatch = np.array([int(palette.HZ_HATCH_COLOUR[i:i + 2], 16) for i in (1, 3, 5)])
    striped = np.all(np.abs(image[..., :3].astype(int) - hatch) < 3, axis=-1)
    optimistic = inside & ((r < limits["runaway_greenhouse"]) | (r > limits["maximum_greenhouse"]))
    conservative = (r > limits["runaway_greenhouse"] * 1.01) & (r < limits["maximum_greenhouse"] * 0.99)
    assert striped[optimistic].mean() > 0.1 and not striped[conservative].any()


# -- Neighbour skies ------------------------------------------------------------------
def test_skies_matrix_holds_the_derived_moon_ratios(app):
    cells = view(app, "Neighbour skies").matrix.data["cells"]
    expected = {(o, b): v for o, b, v in zip(app.derived.skies["observer"], app.derived.skies["body"],
                                              app.derived.skies["moon_ratio"])}
    assert {(o, b): v for o, b, v in zip(cells["observer"], cells["body"], cells["moon_ratio"]) if o != b} == expected
    # a planet's own cell is in the data too (so that the plot fills no cell of its own), with nothing to show
    own = [i for i, (o, b) in enumerate(zip(cells["observer"], cells["body"])) if o == b]
    assert sorted(cells["observer"][i] for i in own) == sorted(app.derived.planet_names)
    assert all(np.isnan(cells["moon_ratio"][i]) and cells["moon_text"][i] == "\u2014" for i in own)
    # the star from planet b: 2 arcsin(R*/a) over the Moon's 2 arcsin(1737.4 km / 384400 km)
    # (lunar radius and mean distance: NASA Moon fact sheet, from memory)
    a_b = app.derived.planets["semi_major_axis_au"][0] * u.au
    star = 2 * np.arcsin((app.system.star.radius * const.R_sun / a_b).decompose().value)
    moon = 2 * np.arcsin(1737.4 / 384400.0)
    assert expected[("b", "star")] == pytest.approx(star / moon, rel=1e-6)


def test_skies_bars_and_table_show_the_selected_observer(app):
    app.selected = "d"
    skies = view(app, "Neighbour skies")
    bars = skies.bars.data["bars"]
    rows = [i for i, o in enumerate(app.derived.skies["observer"]) if o == "d"]
    assert bars["body"] == [app.derived.skies["body"][i] for i in rows]
    np.testing.assert_allclose(bars["moon_ratio"], app.derived.skies["moon_ratio"][rows])
    assert set(skies.matrix.data["row"]["observer"]) == {"d"}
    assert list(skies.table.value["body"]) == bars["body"]
    assert "planet d" in shown(skies.bars_title)


# -- Flux & temperature, Observability -------------------------------------------------------
def test_flux_points_are_insolation_and_radius_on_a_reversed_log_axis(app):
    flux = view(app, "Flux & temperature")
    data = flux.plot.data["planets"]
    np.testing.assert_allclose(data["S"], app.derived.planets["insolation_earth"])
    np.testing.assert_allclose(data["R"], [p.radius for p in app.system.planets])
    # S = L / a^2 with L = (R/Rsun)^2 (Teff / 5772 K)^4 (Stefan-Boltzmann; nominal solar Teff 5772 K,
    # IAU 2015 Resolution B3), averaged over the orbit with 1 / sqrt(1 - e^2) (Williams & Pollard 2002)
    star = app.system.star
    luminosity = (star.radius ** 2 * (star.teff / 5772.0) ** 4)
    e = np.array([p.eccentricity for p in app.system.planets])
    np.testing.assert_allclose(data["S"], luminosity / app.derived.planets["semi_major_axis_au"] ** 2
                               / np.sqrt(1 - e**2), rtol=2e-4)
    figure = rendered(flux.plot)
    assert figure.x_scale.__class__.__name__ == "LogScale"
    assert figure.x_range.start > figure.x_range.end   # reversed: hotter to the left


def test_flux_habitable_zone_spans_the_four_limits_hatched_where_optimistic(app):
    band = view(app, "Flux & temperature").plot.data["hz"]
    hz, luminosity = app.derived.star["hz_au"], app.derived.star["luminosity_lsun"]
    # S = L / d^2 at each limit distance (inverse-square law)
    flux = {k: luminosity / hz[k] ** 2 for k in hz}
    assert band["hot"][0] == pytest.approx(flux["recent_venus"], rel=1e-9)
    assert band["cold"][-1] == pytest.approx(flux["early_mars"], rel=1e-9)
    edges = sorted(set(np.round(np.concatenate([band["hot"], band["cold"]]), 12)))
    for key in ("runaway_greenhouse", "maximum_greenhouse"):
        assert any(abs(e - flux[key]) < 1e-9 * flux[key] for e in edges)
    for hot, cold, hatch in zip(band["hot"], band["cold"], band["hatch"]):
        middle = math.sqrt(hot * cold)
        conservative = flux["maximum_greenhouse"] < middle < flux["runaway_greenhouse"]
        assert (hatch == palette.HZ_HATCH) != conservative
    # graded, not two flat shades: every step its own colour
    assert len(set(band["colour"])) == len(band["colour"]) > 6


def test_flux_without_habitable_zone_outside_the_fit_range(app):
    app.system.star.teff = 900.0
    flux = view(app, "Flux & temperature")
    if "hz_extrapolated" in app.derived.star:     # a derived state that extrapolates the fit draws it faded
        assert flux.plot.data["hz"]["alpha"].max() < 0.6
    else:
        assert len(flux.plot.data["hz"]["hot"]) == 0
        assert "outside the range" in shown(flux.caption)
        assert view(app, "Layout").plot.data["hz"]["image"].shape[:2] == (1, 1)


def test_observability_bars_and_follow_up_thresholds(app):
    obs = view(app, "Observability")
    bars = obs.plot.data["bars"]
    np.testing.assert_allclose(bars["tsm"], app.derived.planets["tsm"])
    # Kempton et al. 2018 suggest follow-up above TSM 10 below 1.5 Rearth and above 90 from 1.5 to 10 Rearth
    radius = np.array([p.radius for p in app.system.planets])
    np.testing.assert_array_equal(obs.plot.data["thresholds"]["threshold"], np.where(radius < 1.5, 10.0, 90.0))
    assert obs.plot.data["thresholds"]["planet"] == app.derived.planet_names
    assert "Kempton et al. 2018 suggest follow-up" in shown(obs.caption)


# -- selection ---------------------------------------------------------------------------
def test_selection_highlights_the_planet_in_every_view(app):
    app.selected = "e"
    names = app.derived.planet_names
    i = names.index("e")
    layout = view(app, "Layout").plot.data["planets"]
    assert layout["size"][i] == max(layout["size"]) and list(layout["size"]).count(max(layout["size"])) == 1
    flux = view(app, "Flux & temperature")
    assert flux.plot.data["planets"]["line_width"][i] == max(flux.plot.data["planets"]["line_width"])
    assert all(table.selection == [i] for table in flux.tables.values())
    obs = view(app, "Observability")
    assert obs.table.selection == [i] and obs.plot.data["bars"]["line_width"][i] == 3.0
    pairs = view(app, "Period ladder").plot.data["pairs"]
    assert [w > 1 for w in pairs["line_width"]] == ["e" in p for p in pairs["pair_planets"]]
    assert app.controls.planet_select.value == "e"


def test_tapping_a_point_a_bar_a_cell_or_a_row_selects_the_planet(app):
    names = app.derived.planet_names
    view(app, "Layout").tap.event(index=[2])
    assert app.selected == names[2]
    view(app, "Observability").tap.event(index=[4])
    assert app.selected == names[4]
    flux = view(app, "Flux & temperature")
    next(iter(flux.tables.values())).selection = [3]
    assert app.selected == names[3]
    # a cell of the sky matrix selects the observer of the row it is drawn in (the plot lays its cells out itself)
    skies = view(app, "Neighbour skies")
    drawn = next(s for s in rendered(skies.matrix).select({"type": ColumnDataSource}) if "arcsec_range" in s.data)
    for index in (1, 7, 13):
        skies.tap.event(index=[index])
        assert app.selected == drawn.data["observer"][index]
    view(app, "Period ladder").tap.event(index=[len(names) - 1 + 3])   # the outer disc of the fourth pair
    assert app.selected == app.derived.pairs["outer"][3]
    app.controls.planet_select.value = "f"
    assert app.selected == "f" and view(app, "Observability").table.selection == [4]


# -- colours ----------------------------------------------------------------------------
def test_palette_is_the_same_for_a_planet_in_every_view(app):
    names = app.derived.planet_names
    colours = app.colours.colours(names)
    assert colours == list(palette.PLANET_COLOURS[:len(names)])
    assert view(app, "Layout").plot.data["planets"]["colour"] == colours
    assert view(app, "Flux & temperature").plot.data["planets"]["colour"] == colours
    assert view(app, "Observability").plot.data["bars"]["colour"] == colours
    pairs = view(app, "Period ladder").plot.data["pairs"]
    assert pairs["colour"] == colours[:-1] + colours[1:]
    assert len(set(palette.PLANET_COLOURS)) == len(palette.PLANET_COLOURS) and palette.STAR_COLOUR not in colours


def test_a_planet_keeps_its_colour_whatever_is_added_or_removed(app):
    before = dict(zip(app.derived.planet_names, app.colours.colours(app.derived.planet_names)))
    c = app.controls
    c.new_name.value, c.new_period.value = "a0", "0.9"          # a new innermost planet
    c._add(None)
    app.selected = "d"
    c._remove(None)
    names = app.derived.planet_names
    assert names[0] == "a0" and "d" not in names
    shown_colours = dict(zip(view(app, "Layout").plot.data["planets"]["name"],
                             view(app, "Layout").plot.data["planets"]["colour"]))
    for name in names:
        if name in before:
            assert shown_colours[name] == before[name], name
    assert shown_colours["a0"] not in [before[n] for n in names if n in before]
    # a planet that comes back has its colour again
    c.new_name.value, c.new_period.value = "d", "3.8982"
    c._add(None)
    assert app.colours.colour("d") == before["d"]


def test_palette_stays_distinct_under_colour_vision_deficiencies():
    colorspacious = pytest.importorskip("colorspacious")
    rgb = np.array([[int(h[i:i + 2], 16) for i in (1, 3, 5)] for h in palette.PLANET_COLOURS]) / 255.0
    for kind in (None, "protanomaly", "deuteranomaly", "tritanomaly"):
        seen = rgb if kind is None else np.clip(colorspacious.cspace_convert(
            rgb, {"name": "sRGB1+CVD", "cvd_type": kind, "severity": 100}, "sRGB1"), 0, 1)
        ucs = colorspacious.cspace_convert(seen, "sRGB1", "CAM02-UCS")
        distance = np.linalg.norm(ucs[:, None] - ucs[None], axis=-1) + np.eye(len(rgb)) * 1e9
        # our own criterion: every pair at least 15 CAM02-UCS units apart (about 10x a just-noticeable step)
        assert distance.min() >= 15.0, kind


# -- edits and reactivity ------------------------------------------------------------------
def test_editing_the_star_mass_rederives_once_and_patches_in_place(app):
    root = app.layout.get_root(Document())
    plots = {m.id for m in root.select({"type": Plot})}
    calls = []
    app.param.watch(lambda e: calls.append(e), "derived")
    app.system.star.mass = 0.2
    assert len(calls) == 1
    pl = derive(app.system).planets
    np.testing.assert_allclose(app.derived.planets["semi_major_axis_au"],
                               kepler_third_law_au(pl["period_d"], 0.2, pl["mass_mearth"]), rtol=1e-6)
    table = view(app, "Flux & temperature").tables["Orbits and irradiation"].value
    assert list(table["semi_major_axis_au"]) == [format(a, ".4g") for a in pl["semi_major_axis_au"]]
    xs, ys = orbit_points(view(app, "Layout").plot.data["orbits"], len(pl["name"]))
    assert np.hypot(xs[0], ys[0]).max() == pytest.approx(pl["semi_major_axis_au"][0], rel=1e-9)
    assert {m.id for m in root.select({"type": Plot})} == plots  # same figures, new data
    assert app.controls.star_entries["mass"].value == "0.2"


def test_only_the_layers_that_changed_are_sent(app):
    flux = view(app, "Flux & temperature")
    sent = []
    for name, pipe in flux.plot.pipes.items():
        pipe.add_subscriber(lambda name=name, **_: sent.append(name))
    app.system.star.mass = 0.125         # the habitable zone does not depend on the mass
    assert set(sent) == {"planets", "names"}
    sent.clear()
    app.selected = "c"
    assert sent == ["planets"]


def test_entries_validate_before_they_apply(app):
    entry, revision = app.controls.star_entries["mass"], app.system.revision
    for text, reason in (("abc", "not a number"), ("-1", "must be >"), ("nan", "finite"), ("", "needed")):
        entry.value = text
        assert reason in shown(app.controls.star_message) and app.system.revision == revision
    entry.value = "0.15"
    assert app.system.star.mass == 0.15 and app.controls.star_message.object == ""
    mass = app.controls.planet_entries["mass"]
    mass.value = ""  # blank: estimated from the radius
    assert app.system.planet(app.selected).mass is None and app.derived.planets["mass_estimated"][0]
    app.controls.planet_entries["inclination"].value = "200"
    assert "<= 180" in shown(app.controls.planet_message) and app.system.planets[0].inclination == 89.12


def test_adding_and_removing_planets(app):
    c = app.controls
    c.new_name.value, c.new_period.value = "c", "30"
    c._add(None)
    assert "already exists" in shown(c.add_message) and len(app.system.planets) == 5
    c.new_name.value, c.new_period.value = "i", "-3"
    c._add(None)
    assert "period" in shown(c.add_message) and len(app.system.planets) == 5
    c.new_name.value, c.new_period.value = "i", "27.5"
    c._add(None)
    assert app.derived.planet_names[-1] == "i" and app.selected == "i"
    assert "no transit_time for i:" in shown(app.alerts)
    assert len(view(app, "Period ladder").plot.data["stubs"]["y0"]) == 5
    c._remove(None)
    assert "i" not in app.derived.planet_names and app.selected in app.derived.planet_names


def test_messages_clear_when_their_cause_is_gone(app):
    c = app.controls
    c.new_name.value, c.new_period.value = "i", "27.5"
    c._add(None)
    c.new_name.value, c.new_period.value = "i", "30"
    c._add(None)
    assert "a planet named 'i' already exists" in shown(c.add_message)
    app.selected = "i"
    c._remove(None)                                   # i is gone: the message about it goes too
    assert "already exists" not in shown(c.add_message)
    c.new_name.value = "b"
    c._add(None)
    assert "already exists" in shown(c.add_message)
    # another system: every earlier message goes
    app.controls.file_input.receive("other.toml", dumps_system(load_system(demo_path("amber_pair"))).encode())
    assert shown(c.add_message) == "" and "loaded other.toml" in shown(c.file_message)
    c.star_entries["mass"].value = "-1"
    assert "must be >" in shown(c.star_message)
    c.star_entries["radius"].value = "0.96"            # a later change: the refused text is no longer shown
    assert shown(c.star_message) == "" and c.star_entries["mass"].value == entry_text_of(app.system.star.mass)


def entry_text_of(value) -> str:
    from orbitdeck.dashboard.views.entries import entry_text

    return entry_text(value)


def test_file_input_errors_are_shown_and_the_system_kept(app):
    system = app.system
    app.controls.file_input.receive("broken.toml", b"format = 3\n[star\n")
    assert "not loaded" in shown(app.controls.file_message) and app.system is system
    text = dumps_system(system).replace("Ossery Loom", "Edited <b>copy</b>")
    app.controls.file_input.receive("edited.toml", text.encode())
    assert app.system is not system and app.system.name == "Edited <b>copy</b>"
    assert "&lt;b&gt;copy&lt;/b&gt;" in app.header.object and "<b>copy" not in app.header.object
    downloaded = loads_system(app.controls._download().getvalue(), "download")
    assert downloaded.planet_names == system.planet_names and downloaded.name == "Edited <b>copy</b>"


def test_a_refused_upload_names_the_planet_of_each_field(app):
    import tomli_w

    from orbitdeck.models.files.system_file import system_to_document

    system = app.system
    doc = system_to_document(system)
    second = doc["planets"][1]["name"]
    doc["planets"][1]["period"] = -3.0
    app.controls.file_input.receive("bad.toml", tomli_w.dumps(doc).encode())
    assert shown(app.controls.file_message) == ("not loaded, the current system is kept: bad.toml: "
                                                f"planets[1] ({second}).period: must be >= 0.001 d, not -3")
    # a planet whose name is itself refused is shown by its index alone
    doc["planets"][1]["name"] = " "
    app.controls.file_input.receive("bad.toml", tomli_w.dumps(doc).encode())
    assert shown(app.controls.file_message) == ("not loaded, the current system is kept: bad.toml: planets[1].name: "
                                                "must not be empty; bad.toml: planets[1].period: must be >= 0.001 d, "
                                                "not -3")
    assert app.system is system


def hostile_system():
    """The demo with markup in its free-text names (and an estimated mass, so a name is in the warnings)."""
    import tomli_w

    from orbitdeck.models.files.system_file import system_to_document

    doc = system_to_document(load_system(demo_path()))
    doc["system"]["name"] = '<img src=x onerror="alert(1)">'
    doc["planets"][0]["name"] = "<i>b</i>"
    del doc["planets"][0]["mass"]
    return loads_system(tomli_w.dumps(doc), "hostile")


def test_free_text_is_escaped():
    app = OrbitDeckApp(hostile_system())
    assert "<img" not in app.header.object and "&lt;img" in app.header.object
    assert "<i>b</i>" not in app.alerts.object and "&lt;i&gt;b&lt;/i&gt;" in app.alerts.object
    skies = app.views["Neighbour skies"]
    assert "<i>b</i>" not in skies.bars_title.object


def test_a_one_planet_system_has_empty_pairs():
    system = load_system(demo_path())
    system.planets = system.planets[:1]
    app = OrbitDeckApp(system)
    assert len(view(app, "Period ladder").plot.data["stubs"]["y0"]) == 0
    assert view(app, "Neighbour skies").bars.data["bars"]["body"] == ["star"]


# -- notebook and serving --------------------------------------------------------------------
def test_build_app_returns_a_plain_layout():
    from orbitdeck.dashboard import build_app

    layout = build_app(load_system(demo_path()))
    assert isinstance(layout, pn.Column) and not isinstance(layout, pn.template.BaseTemplate)


def test_every_session_gets_its_own_copy():
    system = load_system(demo_path())
    make_app = session_factory(system)
    one, two = make_app().orbitdeck_app, make_app().orbitdeck_app
    assert one.system is not system and two.system is not one.system
    one.system.star.mass = 0.3
    assert two.system.star.mass == system.star.mass == 0.231
    assert two.derived.planets["semi_major_axis_au"][0] != one.derived.planets["semi_major_axis_au"][0]
    assert one.colours is not two.colours


def test_serve_command_line(tmp_path, capsys):
    parser = argparse.ArgumentParser(prog="orbitdeck")
    register_serve(parser.add_subparsers(dest="command"))
    args = parser.parse_args(["serve", "x.toml", "--port", "5010", "--no-show"])
    assert (args.file, args.port, args.no_show) == ("x.toml", 5010, True) and callable(args.run)
    with pytest.raises(SystemExit) as stop:
        parser.parse_args(["serve", "--help"])
    assert stop.value.code == 0 and "--no-show" in capsys.readouterr().out
    with pytest.raises(SystemExit):
        parser.parse_args(["serve", "--port", "0"])
    bad = tmp_path / "bad.toml"
    bad.write_text('format = "orbitdeck-system/1"\n[system]\nname = "x"\n')
    assert serve(str(bad), show=False) == 2
    assert "bad.toml" in capsys.readouterr().err


def test_a_taken_port_is_refused_and_the_default_search_skips_it():
    import socket

    with socket.socket() as taken:
        taken.bind(("127.0.0.1", 0))
        port = taken.getsockname()[1]
        with pytest.raises(OSError, match=str(port)):
            choose_port(port)
        assert choose_port(None) != port


@pytest.mark.parametrize("text", ["1_0", "\u0661\u0662", "1 0", "0x1A", "1e", ".", "--1", "1.5.2"])
def test_entries_take_only_plain_decimal_numbers(text):
    # float() takes "1_0" and other scripts' digits; a number typed into an entry is plain ASCII
    from orbitdeck.dashboard.views.controls import Rejected, parse_entry
    from orbitdeck.models import Star

    with pytest.raises(Rejected, match="is not a number"):
        parse_entry(text, Star.param.mass, "Mass", "Msun")


@pytest.mark.parametrize("text, value", [(" 0.5 ", 0.5), ("+.5", 0.5), ("5.", 5.0), ("2E-1", 0.2), ("1e+1", 10.0)])
def test_entries_take_every_usual_way_of_writing_a_number(text, value):
    from orbitdeck.dashboard.views.controls import parse_entry
    from orbitdeck.models import Star

    assert parse_entry(text, Star.param.mass, "Mass", "Msun") == value
