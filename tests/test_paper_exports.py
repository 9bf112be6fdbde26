"""Exports for papers: LaTeX and AASTeX tables, BibTeX of the methods used, provenance in every export."""

from __future__ import annotations

import hashlib
import json
import re
from decimal import Decimal

import bibtexparser
import param
import pytest
from astropy.io import ascii
from astropy.table import Table
from cli_harness import succeeded

from orbitdeck import __version__
from orbitdeck.demo_systems import demo_path
from orbitdeck.models import derive, load_system
from orbitdeck.models.engine.methods import bibtex, depends_on, methods_used, probe_failures
from orbitdeck.models.files.paper_table import default_columns, heading, latex_text, write_paper_table
from orbitdeck.models.files.provenance import assumptions_of, provenance_of
from orbitdeck.models.engine.references import REFERENCES
from orbitdeck.models.engine.registry import REGISTRY, by_key
from orbitdeck.models.files.system import Assumptions

#: a value with its interval as the tables write it: $x^{+a}_{-b}$ or $x \pm a$
_CELL = re.compile(r"^\$(?P<value>[-0-9.]+)(?:\^\{\+(?P<plus>[0-9.]+)\}_\{-(?P<minus>[0-9.]+)\}"
                   r"| \\pm (?P<pm>[0-9.]+))\$")


def _sha256(path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def _last_digit(number: Decimal) -> int:
    """The decimal place of a printed number's last digit (of its last non-zero digit for a whole number)."""
    if number.as_tuple().exponent < 0:
        return number.as_tuple().exponent
    return number.normalize().as_tuple().exponent


@pytest.mark.parametrize("style", ["latex", "aastex"])
def test_paper_table_is_read_back_by_astropy_with_units_and_rounded_intervals(cli, tmp_path, style):
    out = tmp_path / f"planets.{style}.tex"
    path = demo_path("ossery_loom")
    succeeded(cli.run("table", f"--{style}", out, "--samples", "300", "--seed", "2", path))
    text = out.read_text()
    table = ascii.read(text, format=style)
    columns = default_columns()
    quantities = by_key("planets")
    assert table.colnames == ["Planet", *(heading(quantities[k]) for k in columns)]
    assert "T14 ($\\mathrm{h}$)" in table.colnames and "Teq ($\\mathrm{K}$)" in table.colnames
    derived = derive(load_system(path), samples=300, seed=2)
    assert list(table["Planet"]) == list(derived.planets["name"])
    # every rounded value lies within half a unit of its last digit of the derived one, and so do its sides
    for key in ("period_d", "semi_major_axis_au", "teq_k", "radius_rearth", "transit_depth_ppm"):
        low, high = derived.intervals["planets"][key]
        for i, cell in enumerate(table[heading(quantities[key])]):
            match = _CELL.match(cell)
            assert match, cell
            value = Decimal(match["value"])
            plus = Decimal(match["plus"] or match["pm"])
            minus = Decimal(match["minus"] or match["pm"])
            half = Decimal(1).scaleb(min(_last_digit(plus), _last_digit(minus))) / 2
            assert abs(value - Decimal(repr(float(derived.planets[key][i])))) <= half, cell
            assert abs(plus - Decimal(repr(float(high[i] - derived.planets[key][i])))) <= half, cell
            assert abs(minus - Decimal(repr(float(derived.planets[key][i] - low[i])))) <= half, cell
    # provenance as comments, the file's SHA-256 among them
    assert f"% input SHA-256: {_sha256(path)}" in text and f"% orbitdeck {__version__}" in text
    assert "% uncertainties: 300 Monte Carlo draws, seed 2" in text
    assert "bond_albedo = 0.3" in text and "heat_redistribution = full" in text
    assert ("\\begin{deluxetable}" in text) == (style == "aastex")
    assert "$$" not in text   # would open display math


def test_paper_table_columns_can_be_chosen_and_bad_keys_are_refused(cli, tmp_path):
    out = tmp_path / "t.tex"
    succeeded(cli.run("table", "--latex", out, "--samples", "0", "--columns", "teq_k,mass_mearth",
                demo_path("ossery_loom")))
    table = ascii.read(out.read_text(), format="latex")
    assert len(table.colnames) == 3
    # estimated masses are marked and explained in the foot
    assert sum("\\ast" in cell for cell in table[table.colnames[2]]) == 2
    result = cli.run("table", "--latex", out, "--columns", "teq_k,nonsense", demo_path("ossery_loom"))
    assert result.returncode == 2 and "nonsense" in result.stderr and "Traceback" not in result.stderr


def test_free_text_is_escaped_for_latex():
    system = load_system(demo_path("amber_pair"))
    system.name = "A & B_1 \\input{/etc/passwd} 50% #1 {x} ~^$"
    system.planets[0].name = "b_{1}"
    text = write_paper_table(derive(system), "latex")
    assert "\\input{/etc" not in text and "A \\& B\\_1 \\textbackslash{}input\\{/etc/passwd\\}" in text
    assert "b\\_\\{1\\}" in text
    assert latex_text("line\nbreak") == "line break"


def test_bibtex_parses_and_lists_exactly_the_methods_used(cli, tmp_path):
    # ossery_loom: two masses estimated from radii and no luminosity given; skew_trio: every mass
    # measured and the luminosity given, so neither the mass-radius relation nor L = 4 pi R^2 sigma T^4
    cited = {}
    for name in ("ossery_loom", "skew_trio"):
        out = tmp_path / f"{name}.bib"
        succeeded(cli.run("cite", "-o", out, demo_path(name)))
        library = bibtexparser.parse_string(out.read_text())
        assert not library.failed_blocks
        cited[name] = {entry.key for entry in library.entries}
        for entry in library.entries:
            assert entry.key in REFERENCES and entry.fields_dict["year"].value
        assert f"% input SHA-256: {_sha256(demo_path(name))}" in out.read_text()
    assert {"chen_kipping2017", "stefan_boltzmann"} <= cited["ossery_loom"]
    assert not {"chen_kipping2017", "stefan_boltzmann"} & cited["skew_trio"]
    assert "winn2010" in cited["skew_trio"] and "kepler_third_law" in cited["skew_trio"]
    # the whole document: the source of every quantity with a value, and of everything it reads
    # (skew_trio has a value of every quantity, and no condition of a method holds in it)
    expected = {REGISTRY[n].source for q in REGISTRY.values() if q.document
                for n in depends_on(q.name) if REGISTRY[n].source and not REGISTRY[n].source_when}
    assert cited["skew_trio"] == expected


def test_every_quantity_can_be_traced_on_the_probe_system():
    # what each quantity reads is recorded on a small probe system: a quantity failing there would leave
    # its methods out of the references
    assert probe_failures() == ()
    assert {"a_m", "star_radius_m", "star_teff"} & set(depends_on("teq_k")) == {"a_m", "star_radius_m"}


def test_bibtex_of_chosen_columns_follows_what_they_read(cli, tmp_path):
    out = tmp_path / "teq.bib"
    succeeded(cli.run("table", "--bibtex", out, "--columns", "teq_k", "--samples", "0", demo_path("skew_trio")))
    keys = {entry.key for entry in bibtexparser.parse_string(out.read_text()).entries}
    # Teq of the orbit-averaged flux (Mendez & Rivera-Valentin 2017), the flux L / (a^2 sqrt(1 - e^2))
    # (Williams & Pollard 2002) with a from Kepler's third law; skew_trio gives its luminosity
    assert keys == {"mendez_rivera2017", "williams_pollard2002", "kepler_third_law"}
    system = load_system(demo_path("ossery_loom"))   # a from M* + Mp, two of the Mp estimated; L computed
    assert set(methods_used(system, derive(system), ["planets.teq_k"])) == {
        "mendez_rivera2017", "williams_pollard2002", "kepler_third_law", "chen_kipping2017", "stefan_boltzmann"}


def test_a_method_without_a_value_is_not_cited():
    system = load_system(demo_path("amber_pair"))
    system.star.teff = 900.0      # below even the extrapolated habitable-zone fit (1000 K): no HZ numbers
    derived = derive(system)
    hz_keys = ["star.hz_au.recent_venus", "planets.hz_region", "planets.in_conservative_hz", "star.hz_extrapolated"]
    assert "kopparapu2014" not in methods_used(system, derived, hz_keys)
    library = bibtexparser.parse_string(bibtex(system, derived, hz_keys, header=["name @ place"]))
    assert not library.failed_blocks and "kopparapu2014" not in {e.key for e in library.entries}
    system.star.teff = 3000.0     # inside: cited
    assert "kopparapu2014" in methods_used(system, derive(system), hz_keys)


def test_json_and_ecsv_carry_the_provenance(cli, tmp_path):
    path = demo_path("amber_pair")
    out = tmp_path / "p.ecsv"
    doc = json.loads(succeeded(cli.run("table", "--json", "--ecsv", out, "--samples", "120", "--seed", "8",
                                 path)).stdout)
    table = Table.read(out, format="ascii.ecsv")
    for provenance in (doc["provenance"], table.meta["provenance"]):
        assert provenance["orbitdeck"] == __version__
        assert provenance["input"] == {"name": str(path), "sha256": _sha256(path), "edited": False}
        assert provenance["assumptions"]["bond_albedo"] == load_system(path).assumptions.bond_albedo
        assert provenance["assumptions"]["redistribution_factor"] in (0.25, 0.5, 2 / 3)
        assert (provenance["samples"], provenance["seed"]) == (120, 8)
        assert "kepler_third_law" in provenance["methods"]
    # the bundled demo without a file: the SHA-256 of its bytes
    default = json.loads(succeeded(cli.run("table", "--json", "--samples", "0")).stdout)["provenance"]
    assert default["input"]["sha256"] == _sha256(demo_path()) and default["seed"] is None


def test_exports_are_byte_stable(cli, tmp_path):
    outputs = []
    for run in range(2):
        files = [tmp_path / f"{run}.{ext}" for ext in ("tex", "ecsv", "bib")]
        succeeded(cli.run("table", "--latex", files[0], "--ecsv", files[1], "--bibtex", files[2], "--samples", "100",
                    demo_path("skew_trio")))
        outputs.append([f.read_bytes() for f in files])
    assert outputs[0] == outputs[1]


class _MoreAssumptions(Assumptions):
    tidal_q = param.Number(default=100.0, bounds=(1.0, None), doc="tidal quality factor Q'")


def test_every_assumption_is_read_from_the_parameters():
    from orbitdeck.models import Uncertainty

    assumptions = _MoreAssumptions(bond_albedo=0.2)
    assumptions.set_uncertainty("bond_albedo", Uncertainty.from_sigma(0.05))
    system = load_system(demo_path("amber_pair"))
    system.assumptions = assumptions
    found = assumptions_of(system)
    assert found["tidal_q"] == 100.0 and found["heat_redistribution"] == "full"
    assert found["bond_albedo"] == {"value": 0.2, "sigma": 0.05}
    assert "name" not in found and "uncertainties" not in found
    assert provenance_of(system, derive(system), "x", "0" * 64)["assumptions"] == found
