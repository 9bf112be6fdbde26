"""A file that ``orbitdeck check`` accepts (ok, or valid with warnings) runs through every command without an
internal error.

Files are drawn with every field at or near the ends of its range, beyond
them, at the extremes of double precision, or anywhere between; whatever
``check`` calls ok must then go through ``table`` (nominal and sampled,
text and JSON), ``positions``, ``sky`` (with close approaches),
``snapshot`` and ``figures``, each ending with status 0 and whole output. The commands run in
this process (``orbitdeck.dashboard.cli.main``) to keep the examples cheap.
"""

from __future__ import annotations

import contextlib
import io
import json
import math

from hypothesis import HealthCheck, example, given, settings
from hypothesis import strategies as st

from orbitdeck.dashboard import cli

def inside(low, high, low_in=True, high_in=True, typical=()):
    """Values of a field within its range: its ends (or the nearest doubles inside), tiny ones, anything."""
    lo = low if low_in else math.nextafter(low, math.inf)
    hi = high if high_in else math.nextafter(high, -math.inf)
    edges = [lo, hi, math.nextafter(lo, math.inf), math.nextafter(hi, -math.inf), *typical]
    edges += [v for v in (5e-324, 1e-300, 1e-12) if lo <= v <= hi]
    return st.one_of(st.sampled_from(edges), st.floats(lo, hi))


def outside(low, high):
    """Values just beyond a field's range, and the extremes of double precision."""
    return st.sampled_from([math.nextafter(low, -math.inf), math.nextafter(high, math.inf), low - 1.0,
                            5e-324, -5e-324, 1e308, -1e308])


def near(low, high, typical=(), low_in=True, high_in=True):
    """Mostly values inside the range, now and then (one field in about three files) one beyond it."""
    return st.integers(0, 39).flatmap(lambda roll: outside(low, high) if roll == 0
                                      else inside(low, high, low_in, high_in, typical))


def spread():
    return st.one_of(st.none(), st.none(), st.sampled_from([0.0, 1e-300, 1e-9, 0.1, 1e300]).map(lambda s: {"sigma": s}))


def quantity(values):
    return st.tuples(values, spread()).map(lambda vs: vs[0] if vs[1] is None else {"value": vs[0], **vs[1]})


@st.composite
def documents(draw):
    planets = []
    for name in draw(st.lists(st.sampled_from("bcde"), min_size=1, max_size=3, unique=True)):
        planet = {"name": name, "period": draw(quantity(near(1e-3, 1e8, [1.5, 10.0]))),
                  "radius": draw(quantity(near(0.0, 1000.0, [1.0], low_in=False)))}
        for key, values in (("mass", near(0.0, 1e5, [3.0], low_in=False)),
                            ("eccentricity", near(0.0, 1.0, [0.3, 0.999999], high_in=False)),
                            ("inclination", near(0.0, 180.0, [89.5])), ("omega", near(-360.0, 360.0)),
                            ("transit_time", near(-1e7, 1e7, [2461000.3]))):
            if draw(st.booleans()):
                planet[key] = draw(quantity(values))
        planets.append(planet)
    star = {"name": "s", "mass": draw(quantity(near(1e-3, 300.0, [0.2], low_in=False))),
            "radius": draw(quantity(near(1e-3, 2000.0, [0.2], low_in=False))),
            "teff": draw(quantity(near(500.0, 60000.0, [3000.0])))}
    for key, values in (("luminosity", near(0.0, 1e7, low_in=False)), ("j_mag", near(-5.0, 30.0)),
                        ("k_mag", near(-5.0, 30.0)), ("distance", near(0.0, 1e6, low_in=False))):
        if draw(st.booleans()):
            star[key] = draw(values)
    return {"format": "orbitdeck-system/1",
            "system": {"name": "drawn", "epoch": draw(near(-1e7, 1e7, [2461000.0]))},
            "assumptions": {"bond_albedo": draw(near(0.0, 1.0, [0.3], high_in=False))}, "star": star,
            "planets": planets}


def toml_text(doc) -> str:
    import tomli_w

    return tomli_w.dumps(doc)


def run(*argv) -> tuple[int, str, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        try:
            code = cli.main([str(a) for a in argv])
        except SystemExit as exit_:
            code = exit_.code
    return code, out.getvalue(), err.getvalue()


def strict_json(text):
    def refuse(constant):
        raise ValueError(f"{constant} is not JSON")

    return json.loads(text, parse_constant=refuse)


BASE = {"format": "orbitdeck-system/1", "system": {"name": "known", "epoch": 2461000.0},
        "star": {"name": "s", "mass": 0.2, "radius": 0.2, "teff": 3000.0},
        "planets": [{"name": "b", "period": 2.0, "radius": 1.0}, {"name": "c", "period": 5.0, "radius": 1.0}]}


def _with(path: tuple, value):
    doc = json.loads(json.dumps(BASE))
    target = doc
    for key in path[:-1]:
        target = target[key]
    target[path[-1]] = value
    return doc


@settings(max_examples=10, deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
@given(documents())
# files that check called ok and that later failed in other commands
@example(_with(("planets", 0, "period"), 5e-324))
@example(_with(("planets", 0, "transit_time"), 1e308))
@example(_with(("system", "epoch"), 1e308))
@example(_with(("planets", 1, "transit_time"), -1e308))
def test_what_check_accepts_every_command_runs(tmp_path_factory, doc):
    folder = tmp_path_factory.mktemp("drawn")
    path = folder / "drawn.toml"
    path.write_text(toml_text(doc), encoding="utf-8")
    code, out, err = run("check", path)
    assert "internal error" not in err and "Traceback" not in err
    if code == 2:
        assert out == "" and err.startswith(f"{path}: "), (code, out, err)
        return
    # valid: ok, or valid with warnings (each on its own line); either way every command must run
    assert (code, out) == (0, "ok\n") or (code == 3 and out.startswith("valid, with ")), (code, out, err)
    assert (err == "") == (code == 0) and all(line.startswith(f"warning: {path}: ") for line in err.splitlines())
    observer = sorted(doc["planets"], key=lambda p: p["period"] if isinstance(p["period"], float)
                      else p["period"]["value"])[0]["name"]
    commands = [("table", "--samples", "0"), ("table", "--samples", "64", "--json"), ("positions",),
                ("positions", "--json"), ("sky", "--observer", observer, "--events", "2"),
                ("sky", "--observer", observer, "--json"), ("snapshot", "-o", folder / "page.html"),
                ("figures", "-o", folder / "figures", "--samples", "0")]
    for command in commands:
        name, *options = command
        code, out, err = run(name, path, *options)
        assert (code, "internal error" in err) == (0, False), (command, err[-2000:])
        if "--json" in options:
            strict_json(out)
    assert (folder / "page.html").stat().st_size > 0
    assert len(list((folder / "figures").glob("*.png"))) >= 8
