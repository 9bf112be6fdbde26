"""The dashboard's views without a browser: what each plot holds, selection, edits and controls.

The numbers drawn are checked against derive() and, where a view computes
something itself (ellipses, positions, the rungs of the ladder), against an
independent calculation written here (astropy constants, scipy's root finder).
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
import pytest
from bokeh.document import Document
from bokeh.models import Plot
from scipy.optimize import brentq

from orbitdeck.dashboard.app import OrbitDeckApp
from orbitdeck.dashboard.serve import choose_port, register_serve, serve, session_factory
from orbitdeck.dashboard.views import palette
from orbitdeck.dashboard.views.layout import REFERENCE_ORBITS
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


# -- Period ladder ---------------------------------------------------------------
def test_ladder_pairs_sit_at_the_period_ratios(app):
    periods = np.array([p.period for p in app.system.planets])
    data = view(app, "Period ladder").sources["pairs"].data
    np.testing.assert_allclose(data["y"], periods[1:] / periods[:-1], rtol=1e-12)
    np.testing.assert_allclose(data["y"], app.derived.pairs["period_ratio"], rtol=1e-12)
    np.testing.assert_allclose(data["delta"], app.derived.pairs["delta"], rtol=1e-12)


def test_ladder_rungs_are_every_commensurability_up_to_third_order_in_range(app):
    ladder = view(app, "Period ladder")
    lo, hi = ladder.y_range.start, ladder.y_range.end
    drawn = sorted(Fraction(label.replace(":", "/")) for k in (1, 2, 3)
                   for label in ladder.sources[f"rungs{k}"].data["label"])
    # independent enumeration: p:q in lowest terms, p > q, p - q <= 3, p <= 12 (the ladder's stated limits)
    expected = sorted({Fraction(p, q) for p in range(2, 13) for q in range(max(1, p - 3), p)
                       if math.gcd(p, q) == 1 and lo <= p / q <= hi})
    assert drawn == expected
    ratios = app.derived.pairs["period_ratio"]
    assert lo < ratios.min() and ratios.max() < hi
    for k in (1, 2, 3):
        data = ladder.sources[f"rungs{k}"].data
        for label, y in zip(data["label"], data["y"]):
            p, q = map(int, label.split(":"))
            assert y == pytest.approx(p / q) and p - q == k


def test_ladder_links_join_consecutive_pairs_with_the_three_body_relation(app):
    links = view(app, "Period ladder").sources["links"].data
    ratios = app.derived.pairs["period_ratio"]
    np.testing.assert_allclose(links["y0"], ratios[:-1])
    np.testing.assert_allclose(links["y1"], ratios[1:])
    periods = np.array([p.period for p in app.system.planets])
    for i, (p, q, residual) in enumerate(zip(links["p"], links["q"], links["residual"])):
        # Laplace-type relation p/P1 - (p+q)/P2 + q/P3, in deg/day (DESIGN.md physics table)
        direct = 360.0 * (p / periods[i] - (p + q) / periods[i + 1] + q / periods[i + 2])
        assert residual == pytest.approx(direct, rel=1e-9, abs=1e-12)


# -- Layout ------------------------------------------------------------------------
def eccentric(app):
    for planet, e, w in zip(app.system.planets[:3], (0.3, 0.15, 0.05), (30.0, 200.0, -75.0)):
        planet.param.update(eccentricity=e, omega=w)
    return app


def drawn_ellipses(data, samples: int = 721):
    """Points of each ellipse glyph as a canvas draws it: centre, half axes, rotated by ``angle``."""
    t = np.linspace(0.0, 2.0 * np.pi, samples)
    for cx, cy, w, h, angle in zip(*(np.asarray(data[k], dtype=float) for k in ("x", "y", "width", "height",
                                                                            "angle"))):
        u, v = 0.5 * w * np.cos(t), 0.5 * h * np.sin(t)
        yield cx + u * np.cos(angle) - v * np.sin(angle), cy + u * np.sin(angle) + v * np.cos(angle)


def test_layout_ellipses_have_the_derived_semi_major_axes_and_periastra(app):
    eccentric(app)
    data = view(app, "Layout").sources["orbits"].data
    pl = app.derived.planets
    a_ref = kepler_third_law_au(pl["period_d"], app.system.star.mass, pl["mass_mearth"])
    for (xs, ys), a, planet in zip(drawn_ellipses(data), pl["semi_major_axis_au"], app.system.planets):
        r = np.hypot(xs, ys)
        e = planet.eccentricity
        assert r.min() == pytest.approx(a * (1 - e), rel=1e-9)
        assert 0.5 * (r.min() + r.max()) == pytest.approx(a, rel=1e-9)
        # definition of an ellipse: distances to the two foci add up to 2a; the empty focus is
        # at 2ae from the star, opposite periastron
        w = math.radians(planet.omega)
        other = -2 * a * e * np.array([math.cos(w), math.sin(w)])
        np.testing.assert_allclose(r + np.hypot(xs - other[0], ys - other[1]), 2 * a, rtol=1e-9)
    np.testing.assert_allclose(pl["semi_major_axis_au"], a_ref, rtol=1e-6)


def test_layout_positions_solve_keplers_equation(app):
    eccentric(app)
    app.time = app.system.epoch + 0.73
    data = view(app, "Layout").sources["planets"].data
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
    assert abs(math.hypot(data["x"][0], data["y"][0]) / app.derived.planets["semi_major_axis_au"][0] - 1) > 0.01


def test_layout_time_hill_spheres_and_scale_reference(app):
    layout = view(app, "Layout")
    before = np.arctan2(layout.sources["planets"].data["y"], layout.sources["planets"].data["x"])
    app.time = app.system.epoch + app.system.planets[0].period / 4
    after = np.arctan2(layout.sources["planets"].data["y"], layout.sources["planets"].data["x"])
    # a circular orbit turns by 90 deg in a quarter period
    assert math.remainder(after[0] - before[0], 2 * math.pi) == pytest.approx(math.pi / 2, abs=1e-9)
    assert not layout.hill.visible
    app.show_hill = True
    assert layout.hill.visible
    np.testing.assert_allclose(layout.sources["hill"].data["radius"], app.derived.planets["hill_radius_au"])
    app.reference = "Mercury (0.387 au)"
    assert list(layout.sources["reference"].data["radius"]) == [REFERENCE_ORBITS["Mercury (0.387 au)"]]
    assert layout.x_range.end > 0.387 and layout.x_range.end == -layout.x_range.start


def test_layout_habitable_zone_annuli(app):
    hz = view(app, "Layout").sources["hz"].data
    limits = app.derived.star["hz_au"]
    conservative = hz["kind"].index("conservative")
    assert hz["inner"][conservative] == limits["runaway_greenhouse"]
    assert hz["outer"][conservative] == limits["maximum_greenhouse"]
    assert sorted(zip(hz["inner"], hz["outer"])) == sorted([
        (limits["recent_venus"], limits["runaway_greenhouse"]),
        (limits["runaway_greenhouse"], limits["maximum_greenhouse"]),
        (limits["maximum_greenhouse"], limits["early_mars"])])


# -- Neighbour skies ------------------------------------------------------------------
def test_skies_matrix_holds_the_derived_moon_ratios(app):
    skies = view(app, "Neighbour skies")
    cells = skies.sources["cells"].data
    expected = {(o, b): v for o, b, v in zip(app.derived.skies["observer"], app.derived.skies["body"],
                                              app.derived.skies["moon_ratio"])}
    assert {(o, b): v for o, b, v in zip(cells["observer"], cells["body"], cells["moon_ratio"])} == expected
    # the star from planet b: 2 arcsin(R*/a) over the Moon's 2 arcsin(1737.4 km / 384400 km)
    # (lunar radius and mean distance: NASA Moon fact sheet, from memory)
    a_b = app.derived.planets["semi_major_axis_au"][0] * u.au
    star = 2 * np.arcsin((app.system.star.radius * const.R_sun / a_b).decompose().value)
    moon = 2 * np.arcsin(1737.4 / 384400.0)
    assert expected[("b", "star")] == pytest.approx(star / moon, rel=1e-6)


def test_skies_bars_show_the_selected_observer(app):
    app.selected = "d"
    skies = view(app, "Neighbour skies")
    bars = skies.sources["bars"].data
    rows = [i for i, o in enumerate(app.derived.skies["observer"]) if o == "d"]
    assert bars["body"] == [app.derived.skies["body"][i] for i in rows]
    np.testing.assert_allclose(bars["moon_ratio"], app.derived.skies["moon_ratio"][rows])
    assert set(skies.sources["row"].data["observer"]) == {"d"}
    assert list(skies.bars.x_range.factors) == bars["body"]


# -- Flux & temperature, Observability -------------------------------------------------------
def test_flux_scatter_points_are_insolation_and_radius(app):
    flux = view(app, "Flux & temperature")
    data = flux.sources["planets"].data
    np.testing.assert_allclose(data["S"], app.derived.planets["insolation_earth"])
    np.testing.assert_allclose(data["R"], [p.radius for p in app.system.planets])
    # S = L / a^2 with L = (R/Rsun)^2 (Teff / 5772 K)^4 (Stefan-Boltzmann; nominal solar Teff 5772 K,
    # IAU 2015 Resolution B3), averaged over the orbit with 1 / sqrt(1 - e^2) (Williams & Pollard 2002)
    star = app.system.star
    luminosity = (star.radius ** 2 * (star.teff / 5772.0) ** 4)
    e = np.array([p.eccentricity for p in app.system.planets])
    np.testing.assert_allclose(data["S"], luminosity / app.derived.planets["semi_major_axis_au"] ** 2
                               / np.sqrt(1 - e**2), rtol=2e-4)
    assert flux.figure.x_scale.__class__.__name__ == "LogScale"
    assert flux.x_range.start > flux.x_range.end  # reversed: hotter to the left
    hz = app.derived.star["hz_au"]
    for key, span in flux.spans.items():
        assert span.location == pytest.approx(app.derived.star["luminosity_lsun"] / hz[key] ** 2)
    table = flux.table.value
    np.testing.assert_allclose(table["a [au]"], app.derived.planets["semi_major_axis_au"])
    np.testing.assert_allclose(table["S [S\u2295]"], app.derived.planets["insolation_earth"])
    assert list(table["mass"]) == ["estimated" if e else "measured" for e in app.derived.planets["mass_estimated"]]


def test_flux_without_habitable_zone_outside_the_fit_range(app):
    app.system.star.teff = 900.0
    flux = view(app, "Flux & temperature")
    assert not any(s.visible for s in flux.spans.values())
    assert "outside" in flux.hz_note.text
    assert view(app, "Layout").sources["hz"].data["inner"] == []


def test_observability_table_and_bars(app):
    obs = view(app, "Observability")
    np.testing.assert_allclose(obs.sources["bars"].data["tsm"], app.derived.planets["tsm"])
    np.testing.assert_allclose(obs.table.value["depth [ppm]"], app.derived.planets["transit_depth_ppm"])
    # transit depth (Rp/R*)^2 (Winn 2010, eq. 1 to first order), with astropy's R_earth and R_sun
    ratio = (app.system.planets[0].radius * const.R_earth / (app.system.star.radius * const.R_sun)).decompose()
    assert obs.table.value["depth [ppm]"][0] == pytest.approx(1e6 * ratio.value ** 2, rel=1e-9)


# -- selection -------------------------------------------------------------------------
def test_selection_highlights_the_planet_in_every_view(app):
    app.selected = "e"
    names = app.derived.planet_names
    i = names.index("e")
    layout = view(app, "Layout").sources["planets"].data
    assert layout["size"][i] == max(layout["size"]) and layout["size"].count(max(layout["size"])) == 1
    flux = view(app, "Flux & temperature")
    assert flux.sources["planets"].data["line_width"][i] == max(flux.sources["planets"].data["line_width"])
    assert flux.table.selection == [i]
    obs = view(app, "Observability")
    assert obs.table.selection == [i] and obs.sources["bars"].data["line_width"][i] == 3.0
    rings = view(app, "Period ladder").sources["pairs"].data
    assert [w > 0 for w in rings["outline"]] == ["e" in pair.split("\u2013") for pair in rings["pair"]]
    assert app.controls.planet_select.value == "e"


def test_tapping_a_point_or_a_row_selects_the_planet(app):
    layout = view(app, "Layout").sources["planets"]
    layout.selected.indices = [2]
    assert app.selected == app.derived.planet_names[2] and layout.selected.indices == []
    flux = view(app, "Flux & temperature")
    flux.table.selection = [3]
    assert app.selected == app.derived.planet_names[3]
    view(app, "Neighbour skies").sources["cells"].selected.indices = [0]
    assert app.selected == app.derived.skies["observer"][0]
    app.controls.planet_select.value = "f"
    assert app.selected == "f" and view(app, "Observability").table.selection == [4]


def test_palette_is_the_same_for_a_planet_in_every_view(app):
    colours = palette.planet_colours(len(app.derived.planet_names))
    assert view(app, "Layout").sources["planets"].data["colour"] == colours
    assert view(app, "Flux & temperature").sources["planets"].data["colour"] == colours
    assert view(app, "Observability").sources["bars"].data["colour"] == colours
    pairs = view(app, "Period ladder").sources["pairs"].data
    assert pairs["inner_colour"] == colours[:-1] and pairs["outer_colour"] == colours[1:]
    assert len(set(palette.PLANET_COLOURS)) == len(palette.PLANET_COLOURS) and palette.STAR_COLOUR not in colours


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
    np.testing.assert_allclose(app.derived.planets["semi_major_axis_au"], pl["semi_major_axis_au"])
    np.testing.assert_allclose(app.derived.planets["semi_major_axis_au"],
                               kepler_third_law_au(pl["period_d"], 0.2, pl["mass_mearth"]), rtol=1e-6)
    np.testing.assert_allclose(view(app, "Flux & temperature").table.value["a [au]"], pl["semi_major_axis_au"])
    orbits = view(app, "Layout").sources["orbits"].data
    xs, ys = next(drawn_ellipses(orbits))
    r = np.hypot(xs, ys)
    assert r.max() == pytest.approx(pl["semi_major_axis_au"][0])
    assert {m.id for m in root.select({"type": Plot})} == plots  # same figures, new data
    assert app.controls.star_entries["mass"].value == "0.2"


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
    assert len(view(app, "Period ladder").sources["pairs"].data["y"]) == 5
    c._remove(None)
    assert "i" not in app.derived.planet_names and app.selected in app.derived.planet_names


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

    from orbitdeck.models.files import system_to_document

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

    from orbitdeck.models.files import system_to_document

    doc = system_to_document(load_system(demo_path()))
    doc["system"]["name"] = '<img src=x onerror="alert(1)">'
    doc["planets"][0]["name"] = "<i>b</i>"
    del doc["planets"][0]["mass"]
    return loads_system(tomli_w.dumps(doc), "hostile")


def test_free_text_is_escaped():
    app = OrbitDeckApp(hostile_system())
    assert "<img" not in app.header.object and "&lt;img" in app.header.object
    assert "<i>b</i>" not in app.alerts.object and "&lt;i&gt;b&lt;/i&gt;" in app.alerts.object


def test_a_one_planet_system_has_empty_pairs():
    system = load_system(demo_path())
    system.planets = system.planets[:1]
    app = OrbitDeckApp(system)
    assert len(view(app, "Period ladder").sources["pairs"].data["y"]) == 0
    assert view(app, "Neighbour skies").sources["bars"].data["body"] == ["star"]


# -- notebook and serving --------------------------------------------------------------------
def test_build_app_returns_a_plain_layout():
    import panel as pn

    from orbitdeck.dashboard import build_app

    layout = build_app(load_system(demo_path()))
    assert isinstance(layout, pn.Row) and not isinstance(layout, pn.template.BaseTemplate)


def test_every_session_gets_its_own_copy():
    system = load_system(demo_path())
    make_app = session_factory(system)
    one, two = make_app().orbitdeck_app, make_app().orbitdeck_app
    assert one.system is not system and two.system is not one.system
    one.system.star.mass = 0.3
    assert two.system.star.mass == system.star.mass == 0.231
    assert two.derived.planets["semi_major_axis_au"][0] != one.derived.planets["semi_major_axis_au"][0]


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
