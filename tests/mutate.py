"""Mutation trial of the formulas in ``models/``: does a changed constant, sign or exponent fail a test?

Each mutant is one small edit of one formula (a digit swapped, a sign
flipped, an exponent or factor changed). For each, in turn, a copy of the
package with that edit alone is imported by the fast reference tests
(``FAST_TESTS``), run with ``pytest -x``; a mutant that leaves them passing
"survives" and shows a formula the tests do not pin down. The working tree
is never touched: the package, laid out as it is installed (the
``package-dir`` mapping of pyproject.toml), and the tests are copied to a
temporary folder whose package is put first on ``PYTHONPATH``.

Not part of the test run (no ``test_`` prefix); run it by hand::

    python tests/mutate.py            # every mutant; exits 1 if any survives
    python tests/mutate.py --list     # the mutants, without running anything
    python tests/mutate.py --only tsm # the mutants whose description holds "tsm"

A mutant whose original snippet is no longer found exactly once in its file
is reported as stale (the formula was rewritten): update the list.
"""

from __future__ import annotations

import argparse
import os
import shutil
import subprocess
import sys
import tempfile
import time
import tomllib
from dataclasses import dataclass
from pathlib import Path

REPOSITORY = Path(__file__).resolve().parents[1]
#: the reference tests a mutant must fail (fast: a few seconds all together)
FAST_TESTS = (
    "tests/test_reference_irradiation.py", "tests/test_reference_observability.py",
    "tests/test_reference_bulk.py", "tests/test_reference_orbits.py", "tests/test_reference_resonances.py",
    "tests/test_reference_skies.py", "tests/test_kepler.py", "tests/test_sky_view.py", "tests/test_ephemeris.py",
)
#: seconds one run of the fast tests may take before it counts as hung
RUN_TIMEOUT = 900


@dataclass(frozen=True)
class Mutant:
    """Replace ``original`` (found exactly once in ``path``) by ``replacement``."""

    path: str
    original: str
    replacement: str
    what: str


MUTANTS = (
    # -- habitable zone (Kopparapu et al. 2014 Table 1, eq. 4) --------------------------------------
    Mutant("models/irradiation.py", "[1.776, 2.136e-4, 2.533e-8,", "[1.776, 2.136e-4, -2.533e-8,",
           "HZ recent Venus: sign of b"),
    Mutant("models/irradiation.py", "[1.776, 2.136e-4,", "[1.776, 2.316e-4,", "HZ recent Venus: a 2.136e-4 -> 2.316e-4"),
    Mutant("models/irradiation.py", "[0.320, 5.547e-5,", "[0.320, 5.457e-5,", "HZ early Mars: a 5.547e-5 -> 5.457e-5"),
    Mutant("models/irradiation.py", "[1.107, 1.332e-4,", "[1.170, 1.332e-4,", "HZ runaway greenhouse: S_eff,sun"),
    Mutant("models/irradiation.py", "1.580e-8, -8.308e-12,", "1.580e-8, 8.308e-12,", "HZ runaway greenhouse: sign of c"),
    Mutant("models/irradiation.py", "-3.198e-12, -5.575e-16]", "-3.198e-12, -5.757e-16]", "HZ maximum greenhouse: d"),
    Mutant("models/irradiation.py", "[0.356, 6.171e-5,", "[0.356, 6.117e-5,", "HZ maximum greenhouse: a"),
    Mutant("models/irradiation.py", "1.526e-9, -2.874e-12,", "1.526e-9, -2.847e-12,", "HZ early Mars: c"),
    Mutant("models/irradiation.py", "as_float_array(teff_k) - 5780.0", "as_float_array(teff_k) - 5778.0",
           "HZ: reference temperature 5780 K"),
    Mutant("models/irradiation.py", "HZ_TEFF_RANGE = (2600.0, 7200.0)", "HZ_TEFF_RANGE = (2700.0, 7200.0)",
           "HZ: lower edge of the validity range"),
    Mutant("models/irradiation.py", "np.sqrt(luminosity_lsun / effective_flux)", "(luminosity_lsun / effective_flux)",
           "HZ distance: square root"),
    Mutant("models/irradiation.py", "np.sum(s <= np.asarray(limit_fluxes)", "np.sum(s >= np.asarray(limit_fluxes)",
           "HZ region: comparison"),
    # -- luminosity, insolation, equilibrium temperature -----------------------------------------
    Mutant("models/irradiation.py", "return 4.0 * np.pi * np.asarray(radius_m) ** 2", "return 2.0 * np.pi * np.asarray(radius_m) ** 2",
           "luminosity: 4 pi"),
    Mutant("models/irradiation.py", "SIGMA_SB * np.asarray(teff_k) ** 4", "SIGMA_SB * np.asarray(teff_k) ** 3",
           "luminosity: Teff^4"),
    Mutant("models/irradiation.py", "luminosity_lsun / a_au**2 /", "luminosity_lsun / a_au**3 /", "insolation: a^-2"),
    Mutant("models/irradiation.py", "/ np.sqrt(1.0 - eccentricity**2)", "/ (1.0 - eccentricity**2)",
           "insolation: orbit average 1/sqrt(1-e^2)"),
    Mutant("models/irradiation.py", "(redistribution * (1.0 - bond_albedo)) ** 0.25", "(redistribution * (1.0 - bond_albedo)) ** 0.5",
           "Teq: quarter power"),
    Mutant("models/irradiation.py", "teff_k * np.sqrt(star_radius_m / a_m)", "teff_k * (star_radius_m / a_m)",
           "Teq: sqrt(R*/a)"),
    Mutant("models/irradiation.py", "(1.0 - bond_albedo)) ** 0.25", "(1.0 + bond_albedo)) ** 0.25", "Teq: 1 - A"),
    # -- Kepler's third law, orbit geometry ------------------------------------------------------
    Mutant("models/orbits.py", "YEAR**2 / (4.0 * np.pi**2)))", "YEAR**2 / (2.0 * np.pi**2)))", "Kepler III: 4 pi^2"),
    Mutant("models/orbits.py", "np.cbrt(mass * period * period)", "np.cbrt(mass * period)", "Kepler III: P^2"),
    Mutant("models/orbits.py", "return a * (1.0 - e**2) / (1.0 + e * np.cos(true_anomaly))",
           "return a * (1.0 - e**2) / (1.0 - e * np.cos(true_anomaly))", "orbital radius: sign of e cos f"),
    Mutant("models/orbits.py", "return a * (1.0 - e**2), e * np.cos(omega), e * np.sin(omega), e",
           "return a * (1.0 - e), e * np.cos(omega), e * np.sin(omega), e", "closest distance: semi-latus rectum"),
    # (swapping e cos omega and e sin omega for every orbit mirrors all orbits alike and leaves every distance
    # as it is: an equivalent mutant, so the inner orbit's direction alone is turned round here)
    Mutant("models/orbits.py", "- p_i / (1.0 + (c * ec_i + s * es_i))", "- p_i / (1.0 - (c * ec_i + s * es_i))",
           "closest distance: inner orbit's periastron direction"),
    Mutant("models/ephemeris.py", "P * P / (4.0 * math.pi ** 2))", "P * P / (4.0 * math.pi))",
           "ephemeris Kepler III: 4 pi^2"),
    Mutant("models/ephemeris.py", "return r * np.cos(u_arg), r * s * np.cos(inclination), r * s * np.sin(inclination)",
           "return r * np.cos(u_arg), r * s * np.sin(inclination), r * s * np.cos(inclination)",
           "sky-frame position: inclination"),
    # -- Kepler's equation -----------------------------------------------------------------------
    Mutant("models/kepler.py", "return E - np.asarray(eccentricity, dtype=float) * np.sin(E)",
           "return E + np.asarray(eccentricity, dtype=float) * np.sin(E)", "Kepler's equation: sign"),
    Mutant("models/kepler.py", "bad = np.abs(g, out=tmp) > 0.5 * tol", "bad = np.abs(g, out=tmp) > 5e4 * tol",
           "Kepler solver: stopping tolerance"),
    Mutant("models/kepler.py", "beta *= 0.078", "beta *= 0.78", "Kepler starting guess: Mikkola's correction"),
    Mutant("models/kepler.py", "f = 2.0 * np.arctan2(np.sqrt(1.0 + e) * np.sin(half), np.sqrt(1.0 - e) * np.cos(half))",
           "f = 2.0 * np.arctan2(np.sqrt(1.0 - e) * np.sin(half), np.sqrt(1.0 + e) * np.cos(half))",
           "true anomaly from E"),
    Mutant("models/kepler.py", "1.0 - np.asarray(eccentricity, dtype=float) * np.cos(np.asarray(eccentric_anomaly",
           "1.0 + np.asarray(eccentricity, dtype=float) * np.cos(np.asarray(eccentric_anomaly",
           "orbital radius from E"),
    Mutant("models/kepler.py", "return wrap_angle(0.5 * np.pi - np.asarray(omega, dtype=float))",
           "return wrap_angle(np.pi - np.asarray(omega, dtype=float))", "true anomaly at transit"),
    # -- bulk properties, Chen & Kipping 2017 ----------------------------------------------------
    Mutant("models/composition.py", "_TERRAN_C, _TERRAN_S = 1.008, 0.2790", "_TERRAN_C, _TERRAN_S = 1.080, 0.2790",
           "Chen-Kipping: Terran C"),
    Mutant("models/composition.py", "_TERRAN_C, _TERRAN_S = 1.008, 0.2790", "_TERRAN_C, _TERRAN_S = 1.008, 0.2970",
           "Chen-Kipping: Terran index"),
    Mutant("models/composition.py", "_NEPTUNIAN_S = 0.589", "_NEPTUNIAN_S = 0.598", "Chen-Kipping: Neptunian index"),
    Mutant("models/composition.py", "_TERRAN_TO_NEPTUNIAN_MEARTH = 2.04", "_TERRAN_TO_NEPTUNIAN_MEARTH = 2.40",
           "Chen-Kipping: Terran-Neptunian transition"),
    Mutant("models/composition.py", "_NEPTUNIAN_TO_JOVIAN_MEARTH = 0.414 * M_JUP", "_NEPTUNIAN_TO_JOVIAN_MEARTH = 0.441 * M_JUP",
           "Chen-Kipping: Neptunian-Jovian transition"),
    Mutant("models/composition.py", "mass_kg / (4.0 / 3.0 * np.pi * radius_m", "mass_kg / (3.0 / 4.0 * np.pi * radius_m",
           "density: 4/3 pi"),
    Mutant("models/composition.py", "return G * mass_kg / radius_m**2", "return G * mass_kg / radius_m**3",
           "surface gravity: R^-2"),
    Mutant("models/composition.py", "np.sqrt(2.0 * G * mass_kg / radius_m)", "np.sqrt(G * mass_kg / radius_m)",
           "escape speed: factor 2"),
    # -- Hill radius, spacing, tidal locking ----------------------------------------------------
    Mutant("models/dynamics.py", "a * (1.0 - eccentricity) * np.cbrt", "a * (1.0 + eccentricity) * np.cbrt",
           "Hill radius: periastron"),
    Mutant("models/dynamics.py", "np.cbrt(planet_mass / (3.0 * star_mass))", "np.cbrt(planet_mass / (2.0 * star_mass))",
           "Hill radius: factor 3"),
    Mutant("models/dynamics.py", "np.cbrt((m_in + m_out) / (3.0 * star_mass)) * 0.5 * (a_in + a_out)",
           "np.cbrt((m_in + m_out) / (3.0 * star_mass)) * (a_in + a_out)", "mutual Hill radius: mean of a"),
    Mutant("models/dynamics.py", "np.cbrt((m_in + m_out) / (3.0 * star_mass))", "np.cbrt((m_in * m_out) / (3.0 * star_mass))",
           "mutual Hill radius: sum of masses"),
    Mutant("models/dynamics.py", "HILL_STABLE_SPACING = 2.0 * np.sqrt(3.0)", "HILL_STABLE_SPACING = 2.0 * np.sqrt(2.0)",
           "Hill stability: 2 sqrt 3"),
    Mutant("models/dynamics.py", "TIDAL_Q = 100.0", "TIDAL_Q = 10.0", "tidal locking: Q"),
    Mutant("models/dynamics.py", "INITIAL_SPIN_PERIOD_S = 12.0 * 3600.0", "INITIAL_SPIN_PERIOD_S = 24.0 * 3600.0",
           "tidal locking: initial spin"),
    Mutant("models/dynamics.py", "* x3 * x3 *", "* x3 * x *", "tidal locking: a^6"),
    Mutant("models/dynamics.py", "q / (3.0 * k2)", "q / (2.0 * k2)", "tidal locking: factor 3"),
    Mutant("models/dynamics.py", "(planet_mass_kg / star_mass_kg) * x3", "(planet_mass_kg / star_mass_kg**2) * x3",
           "tidal locking: star mass power"),
    # -- commensurabilities, super-period, three-body relations ------------------------------------
    Mutant("models/resonances.py", "return np.asarray(period_ratio) * q / p - 1.0",
           "return np.asarray(period_ratio) * p / q - 1.0", "offset Delta: p/q"),
    Mutant("models/resonances.py", "1.0 / np.abs(j / period_outer - (j - 1) / period_inner)",
           "1.0 / np.abs(j / period_inner - (j - 1) / period_outer)", "super-period: periods swapped"),
    Mutant("models/resonances.py", "1.0 / np.abs(j / period_outer - (j - 1) / period_inner)",
           "1.0 / np.abs(j / period_outer - (j + 1) / period_inner)", "super-period: j - 1"),
    Mutant("models/resonances.py", "return p / period_1 - (p + q) / period_2 + q / period_3",
           "return p / period_1 - (p + q) / period_2 - q / period_3", "three-body relation: sign"),
    Mutant("models/resonances.py", "return grid[best, 0], grid[best, 1], chosen * 360.0",
           "return grid[best, 0], grid[best, 1], chosen * 180.0", "three-body residual: degrees"),
    Mutant("models/resonances.py", "take_low = (gap_low < gap_high)", "take_low = (gap_low > gap_high)",
           "nearest commensurability: nearer rung"),
    # -- transits, radial velocity, TSM, ESM ---------------------------------------------------
    Mutant("models/observability.py", "TSM_RADIUS_EDGES = np.array([0.0, 1.5, 2.75, 4.0, 10.0])",
           "TSM_RADIUS_EDGES = np.array([0.0, 1.8, 2.75, 4.0, 10.0])", "TSM edge 1.5 -> 1.8"),
    Mutant("models/observability.py", "TSM_RADIUS_EDGES = np.array([0.0, 1.5, 2.75, 4.0, 10.0])",
           "TSM_RADIUS_EDGES = np.array([0.0, 1.5, 2.5, 4.0, 10.0])", "TSM edge 2.75 -> 2.5"),
    Mutant("models/observability.py", "TSM_RADIUS_EDGES = np.array([0.0, 1.5, 2.75, 4.0, 10.0])",
           "TSM_RADIUS_EDGES = np.array([0.0, 1.5, 2.75, 4.2, 10.0])", "TSM edge 4.0 -> 4.2"),
    Mutant("models/observability.py", "TSM_RADIUS_EDGES = np.array([0.0, 1.5, 2.75, 4.0, 10.0])",
           "TSM_RADIUS_EDGES = np.array([0.0, 1.5, 2.75, 4.0, 11.0])", "TSM upper limit 10 -> 11"),
    Mutant("models/observability.py", "TSM_SCALE_FACTORS = np.array([0.190, 1.26, 1.28, 1.15])",
           "TSM_SCALE_FACTORS = np.array([0.109, 1.26, 1.28, 1.15])", "TSM scale factor 0.190"),
    Mutant("models/observability.py", "TSM_SCALE_FACTORS = np.array([0.190, 1.26, 1.28, 1.15])",
           "TSM_SCALE_FACTORS = np.array([0.190, 1.26, 1.82, 1.15])", "TSM scale factor 1.28"),
    Mutant("models/observability.py", "/ (mass_mearth * star_radius_rsun**2) * 10.0 ** (-j_mag / 5.0))",
           "/ (mass_mearth * star_radius_rsun) * 10.0 ** (-j_mag / 5.0))", "TSM: R*^-2"),
    Mutant("models/observability.py", "star_radius_rsun**2) * 10.0 ** (-j_mag / 5.0))",
           "star_radius_rsun**2) * 10.0 ** (-j_mag / 2.5))", "TSM: magnitude term"),
    Mutant("models/observability.py", "ESM_SCALE = 4.29e6", "ESM_SCALE = 4.92e6", "ESM: normalisation"),
    Mutant("models/observability.py", "ESM_DAYSIDE_FACTOR = 1.10", "ESM_DAYSIDE_FACTOR = 1.01", "ESM: dayside temperature"),
    Mutant("models/observability.py", "ESM_WAVELENGTH = 7.5e-6", "ESM_WAVELENGTH = 5.7e-6", "ESM: wavelength"),
    Mutant("models/observability.py", "(radius_rearth / star_radius_rearth) ** 2 * 10.0 ** (-k_mag / 5.0)",
           "(radius_rearth / star_radius_rearth) ** 3 * 10.0 ** (-k_mag / 5.0)", "ESM: (Rp/R*)^2"),
    Mutant("models/observability.py", "C_LIGHT**2 / wavelength_m**5", "C_LIGHT**2 / wavelength_m**4", "Planck: lambda^-5"),
    Mutant("models/observability.py", "return (planet_radius / star_radius) ** 2", "return (planet_radius / star_radius) ** 3",
           "transit depth: (Rp/R*)^2"),
    Mutant("models/observability.py", "return (star_radius + planet_radius) / a * (1.0 + eccentricity * np.sin(omega))",
           "return (star_radius - planet_radius) / a * (1.0 + eccentricity * np.sin(omega))",
           "transit probability: R* + Rp"),
    Mutant("models/observability.py", "/ a * (1.0 + eccentricity * np.sin(omega)) / (1.0 - eccentricity**2)",
           "/ a * (1.0 - eccentricity * np.sin(omega)) / (1.0 - eccentricity**2)", "transit probability: e sin omega"),
    Mutant("models/observability.py", "t14 = period / np.pi * np.arcsin", "t14 = period / (2.0 * np.pi) * np.arcsin",
           "transit duration: P / pi"),
    Mutant("models/observability.py", "chord2 = np.asarray((1.0 + k) ** 2 - b**2)", "chord2 = np.asarray((1.0 + k) ** 2 + b**2)",
           "transit duration: impact parameter"),
    Mutant("models/observability.py", "return t14 * np.sqrt(1.0 - eccentricity**2)", "return t14 * (1.0 - eccentricity**2)",
           "transit duration: eccentric factor"),
    Mutant("models/observability.py", "return a * np.abs(np.cos(inclination)) / star_radius",
           "return a * np.abs(np.sin(inclination)) / star_radius", "impact parameter: cos i"),
    Mutant("models/observability.py", "np.cbrt(2.0 * np.pi * G / period_s)", "np.cbrt(np.pi * G / period_s)",
           "RV amplitude: 2 pi G / P"),
    Mutant("models/observability.py", "/ np.square(np.cbrt(star_mass_kg + planet_mass_kg))",
           "/ np.cbrt(star_mass_kg + planet_mass_kg)", "RV amplitude: total mass^(2/3)"),
    Mutant("models/observability.py", "planet_mass_kg * np.sin(inclination)", "planet_mass_kg * np.cos(inclination)",
           "RV amplitude: sin i"),
    # -- apparent sizes and brightness in the skies ---------------------------------------------
    Mutant("models/skies.py", "diameter *= 2.0", "diameter *= 1.0", "angular size: 2 arcsin"),
    Mutant("models/skies.py", "diameter = np.arcsin(ratio, out=out)", "diameter = np.arctan(ratio, out=out)",
           "angular size: arcsin"),
    Mutant("models/skies.py", "np.asarray(angular_diameter_rad) / MOON_ANGULAR_DIAMETER",
           "np.asarray(angular_diameter_rad) * MOON_ANGULAR_DIAMETER", "Moon ratio"),
    Mutant("models/constants.py", "D_MOON = 384_400e3", "D_MOON = 348_400e3", "Moon's mean distance"),
    Mutant("models/sky_view.py", "MOON_GEOMETRIC_ALBEDO = 0.12", "MOON_GEOMETRIC_ALBEDO = 0.21", "full Moon: albedo"),
    Mutant("models/sky_view.py", "return 0.5 * (1.0 + np.cos(np.radians", "return 0.5 * (1.0 - np.cos(np.radians",
           "illuminated fraction: sign"),
    Mutant("models/sky_view.py", "(np.sin(a) + (np.pi - a) * np.cos(a)) / np.pi", "(np.sin(a) + (np.pi + a) * np.cos(a)) / np.pi",
           "Lambert phase function"),
    Mutant("models/sky_view.py", "return 1.0 / np.abs(1.0 / np.asarray(period_1, dtype=float) - 1.0 /",
           "return 1.0 / np.abs(1.0 / np.asarray(period_1, dtype=float) + 1.0 /", "synodic period: sign"),
)


def _package_layout() -> list[tuple[str, Path]]:
    """(import package, source folder) of pyproject.toml's package-dir mapping, outer packages first."""
    config = tomllib.loads((REPOSITORY / "pyproject.toml").read_text())
    mapping = config["tool"]["setuptools"]["package-dir"]
    return sorted(((package, REPOSITORY / folder) for package, folder in mapping.items()),
                  key=lambda item: item[0].count("."))


def _copy_tree(root: Path) -> dict[Path, Path]:
    """Copy the package (as installed) to ``root/pkg`` and the tests and pyproject.toml to ``root``.

    Returns a map from each copied source folder in the repository to its copy.
    """
    ignore = shutil.ignore_patterns("__pycache__", "*.pyc", "artifacts", ".hypothesis")
    copies = {}
    for package, folder in _package_layout():
        target = root / "pkg" / Path(*package.split("."))
        shutil.copytree(folder, target, ignore=ignore, dirs_exist_ok=True)
        copies[folder] = target
    shutil.copytree(REPOSITORY / "tests", root / "tests", ignore=ignore)
    shutil.copy2(REPOSITORY / "pyproject.toml", root / "pyproject.toml")
    return copies


def _copied(path: str, copies: dict[Path, Path]) -> Path:
    """The copy of repository file ``path`` (the deepest mapped folder that holds it)."""
    source = REPOSITORY / path
    folder = max((f for f in copies if source.is_relative_to(f)), key=lambda f: len(f.parts))
    return copies[folder] / source.relative_to(folder)


def _environment(root: Path) -> dict:
    env = dict(os.environ)
    env["PYTHONPATH"] = os.pathsep.join([str(root / "pkg"), *filter(None, [env.get("PYTHONPATH")])])
    env["PYTHONDONTWRITEBYTECODE"] = "1"   # a mutant of the same size and second must not reuse a stale .pyc
    env.setdefault("OPENBLAS_NUM_THREADS", "1")
    return env


def _run_tests(root: Path) -> tuple[int, str]:
    command = [sys.executable, "-m", "pytest", "-x", "-q", "-p", "no:cacheprovider", "-m", "not browser",
               *FAST_TESTS]
    try:
        done = subprocess.run(command, cwd=root, env=_environment(root), capture_output=True, text=True,
                              timeout=RUN_TIMEOUT)
    except subprocess.TimeoutExpired:
        return -1, "timed out"
    lines = (done.stdout + done.stderr).strip().splitlines()
    return done.returncode, lines[-1] if lines else ""


def _check_import(root: Path) -> None:
    """Make sure the copy, not the installed package, is what the tests import."""
    probe = subprocess.run([sys.executable, "-c", "import orbitdeck.models as m; print(m.__file__)"],
                           cwd=root, env=_environment(root), capture_output=True, text=True, check=True)
    where = Path(probe.stdout.strip()).resolve()
    if not where.is_relative_to(root.resolve()):
        raise SystemExit(f"the copy is not imported first (orbitdeck.models from {where})")


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--list", action="store_true", help="print the mutants and exit")
    parser.add_argument("--only", default="", help="run the mutants whose description or file holds this text")
    parser.add_argument("--keep", action="store_true", help="keep the temporary copy (its path is printed)")
    args = parser.parse_args(argv)
    chosen = [m for m in MUTANTS if args.only.lower() in (m.what + " " + m.path).lower()]
    stale = [m for m in chosen if (REPOSITORY / m.path).read_text().count(m.original) != 1]
    if args.list:
        for m in chosen:
            print(f"{m.path:28} {m.what}{'   [STALE]' if m in stale else ''}")
        return 0
    root = Path(tempfile.mkdtemp(prefix="orbitdeck-mutants-"))
    try:
        copies = _copy_tree(root)
        _check_import(root)
        code, summary = _run_tests(root)
        if code != 0:
            print(f"the unmutated copy fails its tests ({summary}); nothing to learn from mutants")
            return 2
        survived, errors = [], []
        for number, mutant in enumerate(chosen, 1):
            label = f"[{number:3}/{len(chosen)}] {mutant.path}: {mutant.what}"
            if mutant in stale:
                errors.append(mutant)
                print(f"{label}: STALE (original snippet not found exactly once)", flush=True)
                continue
            target = _copied(mutant.path, copies)
            original = target.read_text()
            target.write_text(original.replace(mutant.original, mutant.replacement, 1))
            started = time.monotonic()
            try:
                code, summary = _run_tests(root)
            finally:
                target.write_text(original)
            verdict = {0: "SURVIVED", 1: "caught"}.get(code, "ERROR")
            if code == 0:
                survived.append(mutant)
            elif code != 1:
                errors.append(mutant)
            print(f"{label}: {verdict} ({summary}; {time.monotonic() - started:.0f} s)", flush=True)
        caught = len(chosen) - len(survived) - len(errors)
        print(f"\nmutants tried: {len(chosen)}, caught: {caught}, survived: {len(survived)}, "
              f"stale or errors: {len(errors)}")
        for mutant in survived:
            print(f"  survived: {mutant.path}: {mutant.what}")
        for mutant in errors:
            print(f"  stale or error: {mutant.path}: {mutant.what}")
        return 1 if survived or errors else 0
    finally:
        if args.keep:
            print(f"copy kept in {root}")
        else:
            shutil.rmtree(root, ignore_errors=True)


if __name__ == "__main__":
    sys.exit(main())
