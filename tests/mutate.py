"""Mutation trial of the formulas in ``models/``: does a changed constant, sign or exponent fail a test?

Each mutant is one small edit of one formula (a digit swapped, a sign
flipped, an exponent or factor changed). For each, in turn, a copy of the
package with that edit alone is imported by the fast reference tests
(``FAST_TESTS``), run with ``pytest -x`` (the ``FIRST_TESTS`` of the mutated
file first, so a caught mutant stops early); a mutant that leaves them
passing "survives" and shows a formula the tests do not pin down. The working tree
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
    "tests/test_reference_skies.py", "tests/test_reference_interiors.py", "tests/test_reference_atmospheres.py",
    "tests/test_kepler.py", "tests/test_sky_view.py", "tests/test_ephemeris.py", "tests/test_forecast.py",
    "tests/test_forecast_sky.py", "tests/test_reference_dynamics_hill.py", "tests/test_reference_dynamics_ttv.py",
)
#: the fast tests that exercise a file most directly, run before the others for its mutants, so that a
#: caught mutant stops early (every fast test still runs for a survivor)
FIRST_TESTS = {
    "models/irradiation.py": ("tests/test_reference_irradiation.py", "tests/test_reference_atmospheres.py"),
    "models/orbits.py": ("tests/test_reference_orbits.py",),
    "models/ephemeris.py": ("tests/test_ephemeris.py",),
    "models/kepler.py": ("tests/test_kepler.py", "tests/test_ephemeris.py"),
    "models/composition.py": ("tests/test_reference_bulk.py", "tests/test_reference_interiors.py"),
    "models/dynamics.py": ("tests/test_reference_bulk.py", "tests/test_reference_dynamics_hill.py"),
    "models/ttv.py": ("tests/test_reference_dynamics_ttv.py",),
    "models/resonances.py": ("tests/test_reference_resonances.py",),
    "models/observability.py": ("tests/test_reference_observability.py",),
    "models/skies.py": ("tests/test_reference_skies.py",),
    "models/constants.py": ("tests/test_reference_skies.py",),
    "models/sky_view.py": ("tests/test_sky_view.py",),
    "models/interiors.py": ("tests/test_reference_interiors.py",),
    "models/tides.py": ("tests/test_reference_interiors.py",),
    "models/atmospheres.py": ("tests/test_reference_atmospheres.py",),
    "models/solar_system.py": ("tests/test_reference_atmospheres.py",),
    "models/forecast.py": ("tests/test_forecast.py",),
    "models/sites.py": ("tests/test_forecast_sky.py",),
    "models/visibility.py": ("tests/test_forecast_sky.py", "tests/test_forecast.py"),
    "models/engine/quantities/star.py": ("tests/test_reference_irradiation.py",),
    "models/engine/quantities/orbit.py": ("tests/test_reference_orbits.py", "tests/test_reference_bulk.py"),
    "models/engine/quantities/irradiation.py": ("tests/test_reference_irradiation.py",),
    "models/engine/quantities/bulk.py": ("tests/test_reference_bulk.py",),
    "models/engine/quantities/observing.py": ("tests/test_reference_observability.py",),
    "models/engine/quantities/pairs.py": ("tests/test_reference_resonances.py", "tests/test_reference_bulk.py"),
    "models/engine/quantities/triples.py": ("tests/test_reference_resonances.py",),
    "models/engine/quantities/skies.py": ("tests/test_reference_skies.py",),
    "models/engine/quantities/atmospheres.py": ("tests/test_reference_atmospheres.py",),
    "models/engine/quantities/interiors.py": ("tests/test_reference_interiors.py",),
}
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
    Mutant("models/irradiation.py", "[1.107, 1.332e-4, 1.580e-8, -8.308e-12, -1.931e-15],   # runaway greenhouse",
           "[1.170, 1.332e-4, 1.580e-8, -8.308e-12, -1.931e-15],   # runaway greenhouse", "HZ runaway greenhouse: S_eff,sun"),
    Mutant("models/irradiation.py", "1.580e-8, -8.308e-12, -1.931e-15],   # runaway greenhouse",
           "1.580e-8, 8.308e-12, -1.931e-15],   # runaway greenhouse", "HZ runaway greenhouse: sign of c"),
    Mutant("models/irradiation.py", "-3.198e-12, -5.575e-16]", "-3.198e-12, -5.757e-16]", "HZ maximum greenhouse: d"),
    Mutant("models/irradiation.py", "[0.356, 6.171e-5,", "[0.356, 6.117e-5,", "HZ maximum greenhouse: a"),
    Mutant("models/irradiation.py", "1.526e-9, -2.874e-12,", "1.526e-9, -2.847e-12,", "HZ early Mars: c"),
    Mutant("models/irradiation.py", "np.asarray(teff_k, dtype=float)[..., None] - 5780.0",
           "np.asarray(teff_k, dtype=float)[..., None] - 5778.0", "HZ: reference temperature 5780 K"),
    Mutant("models/irradiation.py", "HZ_TEFF_RANGE = (2600.0, 7200.0)", "HZ_TEFF_RANGE = (2700.0, 7200.0)",
           "HZ: lower edge of the validity range"),
    Mutant("models/irradiation.py", "HZ_EXTRAPOLATED_MIN_TEFF = 1000.0", "HZ_EXTRAPOLATED_MIN_TEFF = 1500.0",
           "HZ: coolest extrapolated Teff"),
    Mutant("models/irradiation.py", "np.sqrt(luminosity_lsun / effective_flux)", "(luminosity_lsun / effective_flux)",
           "HZ distance: square root"),
    Mutant("models/irradiation.py", "np.sum(s <= np.asarray(limit_fluxes)", "np.sum(s >= np.asarray(limit_fluxes)",
           "HZ region: comparison"),
    # -- runaway greenhouse by planet mass (Kopparapu et al. 2014 Table 1) ---------------------------
    Mutant("models/irradiation.py", "[0.990, 1.209e-4,", "[0.990, 1.290e-4,", "runaway by mass: 0.1 Mearth a"),
    Mutant("models/irradiation.py", "[1.188, 1.433e-4, 1.707e-8, -8.968e-12,", "[1.188, 1.433e-4, 1.707e-8, 8.968e-12,",
           "runaway by mass: 5 Mearth sign of c"),
    Mutant("models/irradiation.py", "[1.107, 1.332e-4, 1.580e-8, -8.308e-12, -1.931e-15],   # 1 Mearth",
           "[1.170, 1.332e-4, 1.580e-8, -8.308e-12, -1.931e-15],   # 1 Mearth", "runaway by mass: 1 Mearth S_eff,sun"),
    Mutant("models/irradiation.py", "t = teff - 5780.0", "t = teff - 5778.0", "runaway by mass: reference temperature"),
    Mutant("models/irradiation.py", "x / np.log10(5.0))", "x / np.log(5.0))", "runaway by mass: log10 interpolation above 1 Mearth"),
    Mutant("models/irradiation.py", "(x + 1.0) / 1.0,", "(x + 1.0) / 2.0,", "runaway by mass: interpolation below 1 Mearth"),
    Mutant("models/irradiation.py", "valid = (teff >= HZ_TEFF_RANGE[0]) & (teff <= HZ_TEFF_RANGE[1])",
           "valid = (teff >= HZ_TEFF_RANGE[0]) | (teff <= HZ_TEFF_RANGE[1])", "runaway by mass: validity range"),
    Mutant("models/irradiation.py", "(m > RUNAWAY_MASSES_MEARTH[-1])", "(m > RUNAWAY_MASSES_MEARTH[1])",
           "runaway by mass: clamped above 5 Mearth"),
    # -- luminosity, insolation, equilibrium temperature -----------------------------------------
    Mutant("models/irradiation.py", "return 4.0 * np.pi * np.asarray(radius_m) ** 2", "return 2.0 * np.pi * np.asarray(radius_m) ** 2",
           "luminosity: 4 pi"),
    Mutant("models/irradiation.py", "SIGMA_SB * np.asarray(teff_k) ** 4", "SIGMA_SB * np.asarray(teff_k) ** 3",
           "luminosity: Teff^4"),
    Mutant("models/irradiation.py", "luminosity_lsun / a_au**2 /", "luminosity_lsun / a_au**3 /", "insolation: a^-2"),
    Mutant("models/irradiation.py", "/ np.sqrt(1.0 - eccentricity**2)", "/ (1.0 - eccentricity**2)",
           "insolation: orbit average 1/sqrt(1-e^2)"),
    Mutant("models/irradiation.py", "flux / SIGMA_SB) ** 0.25", "flux / SIGMA_SB) ** 0.5", "Teq: quarter power"),
    Mutant("models/irradiation.py", "SOLAR_FLUX_AT_1AU = L_SUN / (4.0 * np.pi * AU**2)",
           "SOLAR_FLUX_AT_1AU = L_SUN / (2.0 * np.pi * AU**2)", "Teq: the Sun's flux at 1 au, 4 pi"),
    Mutant("models/irradiation.py", "(redistribution * (1.0 - bond_albedo) * flux", "(redistribution * (1.0 + bond_albedo) * flux",
           "Teq: 1 - A"),
    # -- Kepler's third law, orbit geometry ------------------------------------------------------
    Mutant("models/orbits.py", "** 2 / (4.0 * np.pi**2))", "** 2 / (2.0 * np.pi**2))", "Kepler III: 4 pi^2"),
    Mutant("models/orbits.py", "np.asarray(period_s) ** 2 /", "np.asarray(period_s) ** 3 /", "Kepler III: P^2"),
    Mutant("models/orbits.py", "return a * (1.0 - e**2) / (1.0 + e * np.cos(true_anomaly))",
           "return a * (1.0 - e**2) / (1.0 - e * np.cos(true_anomaly))", "orbital radius: sign of e cos f"),
    Mutant("models/orbits.py", "p_in, p_out = a_in * (1.0 - e_in**2), a_out", "p_in, p_out = a_in * (1.0 - e_in), a_out",
           "closest distance: semi-latus rectum"),
    # (turning every orbit round alike leaves every distance as it is: an equivalent mutant, so the inner orbit's
    # direction alone is turned round here, in the radial gap that finds crossings and seeds the search)
    Mutant("models/orbits.py", "- p_in / (1.0 + e_in * np.cos(theta - w_in))", "- p_in / (1.0 - e_in * np.cos(theta - w_in))",
           "closest distance: inner orbit's periastron direction in the radial gap"),
    Mutant("models/orbits.py", "dr = latus * e * sin_u / d**2", "dr = latus * e * sin_u / d**3",
           "closest distance: dr/dtheta of the conic"),
    Mutant("models/orbits.py", "cy = a_out * e_out * np.sin(w_out) - a_in * e_in * np.sin(w_in)",
           "cy = a_out * e_out * np.sin(w_out) + a_in * e_in * np.sin(w_in)", "closest distance: first-order seed"),
    Mutant("models/orbits.py", "+ (y1[:, :, None] - y2[:, None, :]) ** 2", "- (y1[:, :, None] - y2[:, None, :]) ** 2",
           "closest distance: grid seed distance"),
    Mutant("models/orbits.py", "g1, g2 = gx * dx1 + gy * dy1, -(gx * dx2 + gy * dy2)",
           "g1, g2 = gx * dx1 + gy * dy1, (gx * dx2 + gy * dy2)", "closest distance: Newton gradient sign"),
    Mutant("models/orbits.py", "(gap.min(axis=1) <= 0.0) & (gap.max(axis=1) >= 0.0)",
           "(gap.min(axis=1) <= 0.0) | (gap.max(axis=1) >= 0.0)", "closest distance: crossing test"),
    # -- positions over time ---------------------------------------------------------------------
    Mutant("models/ephemeris.py", "return r * np.cos(u_arg), r * s * np.cos(inclination), r * s * np.sin(inclination)",
           "return r * np.cos(u_arg), r * s * np.sin(inclination), r * s * np.cos(inclination)",
           "sky-frame position: inclination"),
    # (the ephemeris has no Kepler's third law of its own any more; its mean anomaly takes that mutant's place)
    Mutant("models/ephemeris.py", "return m0 + kepler.mean_motion(elements.period_d)", "return m0 - kepler.mean_motion(elements.period_d)",
           "ephemeris: mean anomaly advances with time"),
    Mutant("models/ephemeris.py", "r = kepler.orbital_radius(elements.a_au, elements.e, E)",
           "r = kepler.orbital_radius(elements.a_au, elements.e, f)", "ephemeris: radius from the eccentric anomaly"),
    # -- Kepler's equation -----------------------------------------------------------------------
    Mutant("models/kepler.py", "return E - np.asarray(eccentricity, dtype=float) * np.sin(E)",
           "return E + np.asarray(eccentricity, dtype=float) * np.sin(E)", "Kepler's equation: sign"),
    Mutant("models/kepler.py", "bad = np.abs(g, out=tmp) > 0.5 * tol", "bad = np.abs(g, out=tmp) > 5e4 * tol",
           "Kepler solver: stopping tolerance"),
    Mutant("models/kepler.py", "beta *= 0.078", "beta *= 0.78", "Kepler starting guess: Mikkola's correction"),
    Mutant("models/kepler.py", "tmp *= -0.5", "tmp *= 0.5", "Kepler solver: Halley step sign"),
    Mutant("models/kepler.py", "f = 2.0 * np.arctan2(np.sqrt(1.0 + e) * np.sin(half), np.sqrt(1.0 - e) * np.cos(half))",
           "f = 2.0 * np.arctan2(np.sqrt(1.0 - e) * np.sin(half), np.sqrt(1.0 + e) * np.cos(half))",
           "true anomaly from E"),
    Mutant("models/kepler.py", "E = 2.0 * np.arctan2(np.sqrt(1.0 - e) * np.sin(half), np.sqrt(1.0 + e) * np.cos(half))",
           "E = 2.0 * np.arctan2(np.sqrt(1.0 + e) * np.sin(half), np.sqrt(1.0 - e) * np.cos(half))",
           "eccentric anomaly from f"),
    Mutant("models/kepler.py", "1.0 - np.asarray(eccentricity, dtype=float) * np.cos(np.asarray(eccentric_anomaly",
           "1.0 + np.asarray(eccentricity, dtype=float) * np.cos(np.asarray(eccentric_anomaly",
           "orbital radius from E"),
    Mutant("models/kepler.py", "return TWO_PI / np.asarray(period, dtype=float)", "return np.pi / np.asarray(period, dtype=float)",
           "mean motion: 2 pi"),
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
    Mutant("models/composition.py", "TERRAN_SCATTER_LOG_R = 0.0403", "TERRAN_SCATTER_LOG_R = 0.0430",
           "Chen-Kipping: Terran scatter"),
    Mutant("models/composition.py", "NEPTUNIAN_SCATTER_LOG_R = 0.146", "NEPTUNIAN_SCATTER_LOG_R = 0.164",
           "Chen-Kipping: Neptunian scatter"),
    # (flipping the sign of z is equivalent: z is a standard normal deviate, symmetric about 0)
    Mutant("models/composition.py", "r / 10.0 ** (np.asarray(z)", "r / np.e ** (np.asarray(z)",
           "Chen-Kipping scatter draw: scatter in log10"),
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
    Mutant("models/dynamics.py", "return (a_out - a_in) / mutual_hill_radius", "return (a_out + a_in) / mutual_hill_radius",
           "mutual Hill spacing: difference of a"),
    Mutant("models/dynamics.py", "HILL_STABLE_SPACING = 2.0 * np.sqrt(3.0)", "HILL_STABLE_SPACING = 2.0 * np.sqrt(2.0)",
           "Hill stability: 2 sqrt 3"),
    Mutant("models/dynamics.py", "TIDAL_Q = 100.0", "TIDAL_Q = 10.0", "tidal locking: Q"),
    Mutant("models/dynamics.py", "TIDAL_LOVE_K2 = 0.3", "TIDAL_LOVE_K2 = 0.5", "tidal locking: k2"),
    Mutant("models/dynamics.py", "INITIAL_SPIN_PERIOD_S = 12.0 * 3600.0", "INITIAL_SPIN_PERIOD_S = 24.0 * 3600.0",
           "tidal locking: initial spin"),
    Mutant("models/dynamics.py", "initial_spin_rad_s * a_m**6 *", "initial_spin_rad_s * a_m**5 *", "tidal locking: a^6"),
    Mutant("models/dynamics.py", "/ (3.0 * G * star_mass_kg**2", "/ (2.0 * G * star_mass_kg**2", "tidal locking: factor 3"),
    Mutant("models/dynamics.py", "G * star_mass_kg**2 * k2", "G * star_mass_kg * k2", "tidal locking: star mass power"),
    Mutant("models/dynamics.py", "k2 * planet_radius_m**5))", "k2 * planet_radius_m**4))", "tidal locking: R^5"),
    # -- resonance overlap as a period ratio, TTV curves over time -----------------------------------
    Mutant("models/dynamics.py", "return (1.0 + overlap_spacing(epsilon)) ** 1.5",
           "return (1.0 + overlap_spacing(epsilon)) ** 1.4", "overlap edge in period ratio: Kepler's 3/2"),
    Mutant("models/dynamics.py", "np.sqrt((1.0 + mu_inner) / (1.0 + mu_outer))",
           "np.sqrt((1.0 + mu_outer) / (1.0 + mu_inner))", "overlap edge in period ratio: planet masses in Kepler's law"),
    Mutant("models/ttv.py", "return ttv_signal(amplitude_inner, longitude), ttv_signal(amplitude_outer, longitude)",
           "return ttv_signal(amplitude_inner, longitude), ttv_signal(amplitude_inner, longitude)",
           "TTV curves: the outer planet's amplitude"),
    Mutant("models/ttv.py", "return ttv_signal(amplitude_inner, longitude), ttv_signal(amplitude_outer, longitude)",
           "return ttv_signal(amplitude_inner, -longitude), ttv_signal(amplitude_outer, longitude)",
           "TTV curves: the sense of the longitude of conjunctions"),
    # -- commensurabilities, super-period, three-body relations ------------------------------------
    Mutant("models/resonances.py", "MAX_ORDER = 3", "MAX_ORDER = 2", "commensurability table: third order"),
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
    Mutant("models/resonances.py", "keeps_above = (up_gap < above - ratio)", "keeps_above = (up_gap > above - ratio)",
           "nearest differs: rung above"),
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
           "TSM_SCALE_FACTORS = np.array([0.190, 1.62, 1.28, 1.15])", "TSM scale factor 1.26"),
    Mutant("models/observability.py", "TSM_SCALE_FACTORS = np.array([0.190, 1.26, 1.28, 1.15])",
           "TSM_SCALE_FACTORS = np.array([0.190, 1.26, 1.82, 1.15])", "TSM scale factor 1.28"),
    Mutant("models/observability.py", "TSM_SCALE_FACTORS = np.array([0.190, 1.26, 1.28, 1.15])",
           "TSM_SCALE_FACTORS = np.array([0.190, 1.26, 1.28, 1.51])", "TSM scale factor 1.15"),
    Mutant("models/observability.py", "cube = radius_rearth * radius_rearth * radius_rearth",
           "cube = radius_rearth * radius_rearth", "TSM: Rp^3"),
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
    Mutant("models/observability.py", "return t14 * np.sqrt(1.0 - eccentricity**2) / (1.0 + eccentricity * np.sin(omega))",
           "return t14 * np.sqrt(1.0 - eccentricity**2) / (1.0 + eccentricity * np.cos(omega))",
           "transit duration: e sin omega"),
    Mutant("models/observability.py", "return a * np.abs(np.cos(inclination)) / star_radius",
           "return a * np.abs(np.sin(inclination)) / star_radius", "impact parameter: cos i"),
    Mutant("models/observability.py", "star_radius * (1.0 - eccentricity**2) / (1.0 + eccentricity * np.sin(omega))",
           "star_radius * (1.0 - eccentricity**2) / (1.0 - eccentricity * np.sin(omega))", "impact parameter: e sin omega"),
    Mutant("models/observability.py", "((2.0 * np.pi * G / period_s) ** (1.0 / 3.0)", "((np.pi * G / period_s) ** (1.0 / 3.0)",
           "RV amplitude: 2 pi G / P"),
    Mutant("models/observability.py", "(star_mass_kg + planet_mass_kg) ** (2.0 / 3.0)",
           "(star_mass_kg + planet_mass_kg) ** (1.0 / 3.0)", "RV amplitude: total mass^(2/3)"),
    Mutant("models/observability.py", "planet_mass_kg * np.sin(inclination)", "planet_mass_kg * np.cos(inclination)",
           "RV amplitude: sin i"),
    Mutant("models/observability.py", "** (2.0 / 3.0) / np.sqrt(1.0 - eccentricity**2))",
           "** (2.0 / 3.0) * np.sqrt(1.0 - eccentricity**2))", "RV amplitude: 1/sqrt(1-e^2)"),
    # -- apparent sizes and brightness in the skies ---------------------------------------------
    Mutant("models/skies.py", "diameter *= 2.0", "diameter *= 1.0", "angular size: 2 arcsin"),
    Mutant("models/skies.py", "diameter = np.arcsin(ratio, out=out)", "diameter = np.arctan(ratio, out=out)",
           "angular size: arcsin"),
    Mutant("models/skies.py", "np.divide(radius, distance, out=out)", "np.divide(distance, radius, out=out)",
           "size ratio: R / d"),
    Mutant("models/skies.py", "np.asarray(angular_diameter_rad) / MOON_ANGULAR_DIAMETER",
           "np.asarray(angular_diameter_rad) * MOON_ANGULAR_DIAMETER", "Moon ratio"),
    Mutant("models/constants.py", "D_MOON = 384_400e3", "D_MOON = 348_400e3", "Moon's mean distance"),
    Mutant("models/sky_view.py", "MOON_GEOMETRIC_ALBEDO = 0.12", "MOON_GEOMETRIC_ALBEDO = 0.21", "full Moon: albedo"),
    Mutant("models/sky_view.py", "MOON_DISTANCE = 384400.0 * u.km", "MOON_DISTANCE = 348400.0 * u.km",
           "full Moon: distance"),
    Mutant("models/sky_view.py", "return 0.5 * (1.0 + np.cos(np.radians", "return 0.5 * (1.0 - np.cos(np.radians",
           "illuminated fraction: sign"),
    Mutant("models/sky_view.py", "(np.sin(a) + (np.pi - a) * np.cos(a)) / np.pi", "(np.sin(a) + (np.pi + a) * np.cos(a)) / np.pi",
           "Lambert phase function"),
    Mutant("models/sky_view.py", "np.sum(a * b, axis=-1)))", "-np.sum(a * b, axis=-1)))", "angle between vectors: a . b"),
    Mutant("models/sky_view.py", "ratio * ratio * np.asarray(phase_function", "ratio * np.asarray(phase_function",
           "reflected flux: (R/d)^2"),
    Mutant("models/sky_view.py", "lum = 4.0 * np.pi * (star.radius", "lum = 2.0 * np.pi * (star.radius",
           "sky luminosity: 4 pi"),
    Mutant("models/sky_view.py", "incident = lum / (star_dist * star_dist)", "incident = lum / star_dist",
           "sky brightness: inverse square from the star"),
    Mutant("models/sky_view.py", "phase = angle_between_deg(-bodies, -rel)", "phase = angle_between_deg(-bodies, rel)",
           "sky: phase angle"),
    Mutant("models/sky_view.py", "return 1.0 / np.abs(1.0 / np.asarray(period_1, dtype=float) - 1.0 /",
           "return 1.0 / np.abs(1.0 / np.asarray(period_1, dtype=float) + 1.0 /", "synodic period: sign"),
    Mutant("models/sky_view.py", "np.asarray(distance, dtype=float)) * RAD_TO_ARCSEC",
           "np.asarray(distance, dtype=float)) / RAD_TO_ARCSEC", "angular diameter in arcsec"),
    Mutant("models/sky_view.py", "step = np.minimum(el.period_d[obs], el.period_d[others])",
           "step = np.maximum(el.period_d[obs], el.period_d[others])", "close approach: sampling step"),
    Mutant("models/sky_view.py", "left = fc < fd", "left = fc > fd", "close approach: golden-section side"),
    # -- interiors: Zeng et al. 2016, Lopez & Fortney 2014 -----------------------------------------
    Mutant("models/interiors.py", "\"iron_100\": np.array([0.445, 0.55, 0.676, 0.823, 0.99, 1.176, 1.38,",
           "\"iron_100\": np.array([0.445, 0.55, 0.676, 0.823, 0.99, 1.176, 1.83,", "Zeng table: pure iron at 8 Mearth"),
    Mutant("models/interiors.py", "\"rock\": np.array([0.58, 0.711, 0.872, 1.067, 1.3, 1.57,",
           "\"rock\": np.array([0.58, 0.711, 0.872, 1.067, 1.3, 1.75,", "Zeng table: pure rock at 4 Mearth"),
    Mutant("models/interiors.py", "\"water_50\": np.array([0.697, 0.851, 1.039, 1.27, 1.54, 1.85,",
           "\"water_50\": np.array([0.697, 0.851, 1.039, 1.27, 1.54, 1.58,", "Zeng table: 50 % water at 4 Mearth"),
    Mutant("models/interiors.py", "np.interp(np.log10(m), np.log10(ZENG2016_MASS)", "np.interp(np.log10(m), np.log(ZENG2016_MASS)",
           "Zeng curves: log10 of the tabulated masses"),
    Mutant("models/interiors.py", "\"iron_30\": \"Earth-like (30 % iron)\"", "\"iron_20\": \"Earth-like (30 % iron)\"",
           "composition curves: Earth-like curve"),
    Mutant("models/interiors.py", "return (1.07 - np.asarray(radius_rearth)", "return (1.70 - np.asarray(radius_rearth)",
           "core mass fraction: 1.07"),
    Mutant("models/interiors.py", "** (1.0 / 3.7)) / 0.21", "** (1.0 / 3.7)) / 0.12", "core mass fraction: 0.21"),
    Mutant("models/interiors.py", "np.asarray(mass_mearth) ** (1.0 / 3.7)", "np.asarray(mass_mearth) ** (1.0 / 3.0)",
           "core mass fraction: M^(1/3.7)"),
    Mutant("models/interiors.py", "CMF_MASS_RANGE = (1.0, 8.0)", "CMF_MASS_RANGE = (1.0, 12.0)",
           "core mass fraction: upper mass of the range"),
    Mutant("models/interiors.py", "CMF_RANGE = (0.0, 0.4)", "CMF_RANGE = (0.0, 0.5)", "core mass fraction: largest CMF"),
    Mutant("models/interiors.py", "(\"water_25\", 0.25)", "(\"water_25\", 0.3)", "water fraction: 25 % curve"),
    Mutant("models/interiors.py", "(r - low) / (high - low)", "(r - low) / (high + low)", "water fraction: interpolation"),
    Mutant("models/interiors.py", "return (2.06 * mass_mearth ** -0.21", "return (2.60 * mass_mearth ** -0.21",
           "envelope radius: 2.06"),
    Mutant("models/interiors.py", "mass_mearth ** -0.21 *", "mass_mearth ** -0.12 *", "envelope radius: M^-0.21"),
    Mutant("models/interiors.py", "(envelope_fraction / 0.05) ** 0.59", "(envelope_fraction / 0.05) ** 0.95",
           "envelope radius: f^0.59"),
    Mutant("models/interiors.py", "(envelope_fraction / 0.05) **", "(envelope_fraction / 0.5) **",
           "envelope radius: 5 % normalisation"),
    Mutant("models/interiors.py", "insolation_earth ** 0.044", "insolation_earth ** 0.44", "envelope radius: S^0.044"),
    Mutant("models/interiors.py", "(age_gyr / 5.0) ** -0.11", "(age_gyr / 5.0) ** 0.11", "envelope radius: age^-0.11"),
    Mutant("models/interiors.py", "ENVELOPE_AGE_GYR = 5.0", "ENVELOPE_AGE_GYR = 4.0", "envelope: assumed age"),
    Mutant("models/interiors.py", "np.asarray(core_mass_mearth) ** 0.25", "np.asarray(core_mass_mearth) ** 0.27",
           "rocky core radius: M^0.25"),
    Mutant("models/interiors.py", "rocky_core_radius(mass_mearth * (1.0 - envelope_fraction))",
           "rocky_core_radius(mass_mearth * (1.0 + envelope_fraction))", "radius with envelope: core mass"),
    Mutant("models/interiors.py", "x0, g0 = np.where(crossed, x1, x0), np.where(crossed, g1, 0.5 * g0)",
           "x0, g0 = np.where(crossed, x0, x1), np.where(crossed, g1, 0.5 * g0)", "envelope fraction: bracket kept"),
    Mutant("models/interiors.py", "_ROOT_STEPS = 14", "_ROOT_STEPS = 3", "envelope fraction: root steps"),
    Mutant("models/interiors.py", "ENVELOPE_MASS_RANGE = (1.0, 20.0)", "ENVELOPE_MASS_RANGE = (1.0, 40.0)",
           "envelope fraction: mass range"),
    Mutant("models/interiors.py", "ENVELOPE_FRACTION_RANGE = (0.001, 0.20)", "ENVELOPE_FRACTION_RANGE = (0.001, 0.30)",
           "envelope fraction: largest fraction"),
    Mutant("models/interiors.py", "ENVELOPE_INSOLATION_RANGE = (0.1, 1000.0)", "ENVELOPE_INSOLATION_RANGE = (0.1, 10000.0)",
           "envelope fraction: insolation range"),
    # -- tidal heating (Jackson, Greenberg & Barnes 2008) ----------------------------------------------
    Mutant("models/tides.py", "return 1.5 / np.asarray(k2_over_q)", "return 2.5 / np.asarray(k2_over_q)", "Q' = 3 Q / (2 k2)"),
    Mutant("models/tides.py", "63.0 / 4.0 *", "63.0 / 2.0 *", "tidal heating: 63/4"),
    Mutant("models/tides.py", "(G * star_mass_kg) ** 1.5", "(G * star_mass_kg) ** 0.5", "tidal heating: (G M*)^(3/2)"),
    Mutant("models/tides.py", "radius_m**5 * a_m**-7.5", "radius_m**3 * a_m**-7.5", "tidal heating: Rp^5"),
    Mutant("models/tides.py", "a_m**-7.5", "a_m**-6.5", "tidal heating: a^(-15/2)"),
    Mutant("models/tides.py", "* eccentricity**2 / q_prime", "* eccentricity / q_prime", "tidal heating: e^2"),
    Mutant("models/tides.py", "heating_w / (4.0 * np.pi * radius_m**2)", "heating_w / (2.0 * np.pi * radius_m**2)",
           "tidal heat flux: 4 pi R^2"),
    Mutant("models/tides.py", "EARTH_HEAT_FLUX = 0.092", "EARTH_HEAT_FLUX = 0.029", "Earth's heat flux for comparison"),
    Mutant("models/tides.py", "IO_HEAT_FLUX = 2.5", "IO_HEAT_FLUX = 5.2", "Io's heat flux for comparison"),
    # -- atmospheres: shoreline, escape, scale height, eclipse -------------------------------------------
    Mutant("models/atmospheres.py", "SHORELINE_ANCHOR = \"Mars\"", "SHORELINE_ANCHOR = \"Venus\"", "shoreline: anchor body"),
    Mutant("models/atmospheres.py", "anchor.insolation_earth**0.25", "anchor.insolation_earth**0.5",
           "shoreline: v0 from the anchor, I^(1/4)"),
    Mutant("models/atmospheres.py", "SHORELINE_SPEED_KMS) ** 4", "SHORELINE_SPEED_KMS) ** 3", "shoreline: v_esc^4"),
    Mutant("models/atmospheres.py", "+ 1.0 / (2.0 * xi**3)", "+ 1.0 / (2.0 * xi**2)", "Roche-lobe factor: xi^-3"),
    Mutant("models/atmospheres.py", "(planet_mass_kg / (3.0 * star_mass_kg)) ** (1.0 / 3.0)",
           "(planet_mass_kg / (2.0 * star_mass_kg)) ** (1.0 / 3.0)", "Roche-lobe radius: factor 3"),
    Mutant("models/atmospheres.py", "efficiency * np.pi * radius_m**3", "efficiency * np.pi * radius_m**2",
           "energy-limited escape: Rp^3"),
    Mutant("models/atmospheres.py", "np.asarray(insolation_earth) * SOLAR_CONSTANT", "np.asarray(insolation_earth) / SOLAR_CONSTANT",
           "XUV flux: the solar constant"),
    Mutant("models/atmospheres.py", "ATOMIC_MASS_UNIT * gravity_ms2)", "ATOMIC_MASS_UNIT / gravity_ms2)", "scale height: g"),
    Mutant("models/atmospheres.py", "return 2.0 * scale_height_m * radius_m", "return 4.0 * scale_height_m * radius_m",
           "transmission signal: 2 H Rp"),
    Mutant("models/atmospheres.py", "((1.0 - bond_albedo) * 2.0 / 3.0) ** 0.25", "((1.0 - bond_albedo) * 2.0 / 4.0) ** 0.25",
           "bare-rock dayside: 2/3"),
    Mutant("models/atmospheres.py", "C_LIGHT**2 / wavelength_m**5", "C_LIGHT**2 / wavelength_m**4", "Planck radiance: lambda^-5"),
    Mutant("models/atmospheres.py", "return (radius_ratio**2 * planck_radiance", "return (radius_ratio**3 * planck_radiance",
           "eclipse depth: (Rp/R*)^2"),
    Mutant("models/atmospheres.py", "/ feature) ** 2)", "/ feature) ** 1)", "transits needed: square"),
    Mutant("models/atmospheres.py", "significance=3.0", "significance=2.0", "transits needed: 3 sigma default"),
    # -- Solar System reference bodies ----------------------------------------------------------------
    Mutant("models/solar_system.py", "np.sqrt(2.0 * G * self.mass_kg / self.radius_m)", "np.sqrt(G * self.mass_kg / self.radius_m)",
           "reference bodies: escape speed factor 2"),
    Mutant("models/solar_system.py", "return 1.0 / self.distance_au**2", "return 1.0 / self.distance_au**3",
           "reference bodies: insolation 1/d^2"),
    Mutant("models/solar_system.py", "Body(\"Mars\", 0.64171e24,", "Body(\"Mars\", 0.46171e24,", "reference bodies: Mars mass"),
    Mutant("models/solar_system.py", "Body(\"Venus\", 4.8675e24, 6051.8e3, 0.72333,", "Body(\"Venus\", 4.8675e24, 6051.8e3, 0.27333,",
           "reference bodies: Venus distance"),
    Mutant("models/solar_system.py", "if b.planet or not planets_only", "if b.planet or planets_only",
           "reference points: planets only"),
    Mutant("models/solar_system.py", "return self.mass_kg / M_EARTH", "return self.mass_kg / M_JUP",
           "reference bodies: mass in Earth masses"),
    Mutant("models/solar_system.py", "return self.radius_m / R_EARTH", "return self.radius_m / R_JUP",
           "reference bodies: radius in Earth radii"),
    # -- transit forecasts ------------------------------------------------------------------------------
    Mutant("models/forecast.py", "first = np.ceil((start - t0) / p)", "first = np.floor((start - t0) / p)",
           "forecast: first epoch in the range"),
    Mutant("models/forecast.py", "last = np.floor((end - t0) / p)", "last = np.ceil((end - t0) / p)",
           "forecast: last epoch in the range"),
    Mutant("models/forecast.py", "return transit_time + epoch * period", "return transit_time - epoch * period",
           "forecast: T0 + n P"),
    Mutant("models/forecast.py", "sigma_transit_time * sigma_transit_time + n_sigma_p * n_sigma_p",
           "sigma_transit_time + n_sigma_p * n_sigma_p", "forecast: sigma_T0 squared"),
    Mutant("models/forecast.py", "kepler.wrap_angle(1.5 * np.pi - omega)", "kepler.wrap_angle(1.5 * np.pi + omega)",
           "secondary eclipse: f = 3 pi/2 - omega"),
    Mutant("models/forecast.py", "(1.0 + 4.0 / np.pi * eccentricity", "(1.0 + 2.0 / np.pi * eccentricity",
           "secondary eclipse, first order: 4/pi"),
    Mutant("models/forecast.py", "_RADIANS_PER_DEGREE = np.pi / 180.0", "_RADIANS_PER_DEGREE = np.pi / 360.0",
           "forecast: degrees to radians"),
    Mutant("models/forecast.py", "star.mass * M_SUN + mass * M_EARTH", "star.mass * M_SUN - mass * M_EARTH",
           "forecast durations: M* + Mp"),
    Mutant("models/forecast.py", "counts = np.maximum(reach - np.arange(order.size) - 1, 0)",
           "counts = np.maximum(reach - np.arange(order.size) - 2, 0)", "overlaps: transits that start during one"),
    Mutant("models/forecast.py", "different = planet[i] != planet[j]", "different = planet[i] == planet[j]",
           "overlaps: of different planets"),
    Mutant("models/forecast.py", "return self.mid - 0.5 * self.duration", "return self.mid - self.duration",
           "forecast: ingress half T14 before"),
    Mutant("models/forecast.py", "return self.mid + 0.5 * self.duration", "return self.mid + self.duration",
           "forecast: egress half T14 after"),
    Mutant("models/forecast.py", "secondary=mid + secondary_eclipse_delay(", "secondary=mid - secondary_eclipse_delay(",
           "forecast: secondary eclipse after the transit"),
    Mutant("models/forecast.py", "half = sigmas * self.sigma + self.ttv_padding", "half = sigmas * self.sigma - self.ttv_padding",
           "forecast window: TTV padding"),
    Mutant("models/forecast.py", "max(spread.plus, spread.minus)", "min(spread.plus, spread.minus)",
           "forecast: larger side of an asymmetric error"),
    Mutant("models/forecast.py", "MAX_RANGE_DAYS = 5 * 365.25", "MAX_RANGE_DAYS = 5 * 365.0", "forecast: five Julian years"),
    # -- a site: time scales, altitudes, the Moon ---------------------------------------------------------
    Mutant("models/sites.py", "EarthLocation.from_geodetic(site.longitude * u.deg, site.latitude * u.deg",
           "EarthLocation.from_geodetic(site.latitude * u.deg, site.longitude * u.deg", "site: longitude and latitude"),
    Mutant("models/sites.py", "pm_ra_cosdec=star.pm_ra * u.mas / u.yr", "pm_ra_cosdec=star.pm_ra * u.arcsec / u.yr",
           "star position: proper motion unit"),
    Mutant("models/sites.py", "arrival = target - arrival.light_travel_time(", "arrival = target + arrival.light_travel_time(",
           "BJD_TDB to UTC: sign of the light-travel time"),
    Mutant("models/sites.py", "LIGHT_TIME_ITERATIONS = 2", "LIGHT_TIME_ITERATIONS = 1", "BJD_TDB to UTC: iterations"),
    Mutant("models/sites.py", "(utc.tdb + utc.light_travel_time(", "(utc.tdb - utc.light_travel_time(",
           "UTC to BJD_TDB: sign of the light-travel time"),
    Mutant("models/sites.py", "np.sin(declination) + np.cos(latitude)", "np.sin(declination) - np.cos(latitude)",
           "altitude: Meeus 13.6 sign"),
    Mutant("models/sites.py", "1.0 / np.sin(np.deg2rad(h))", "1.0 / np.cos(np.deg2rad(h))", "airmass: sec z"),
    Mutant("models/sites.py", "moon_distance - sun_distance * np.cos(elongation)", "moon_distance + sun_distance * np.cos(elongation)",
           "Moon phase angle: Meeus 48.3"),
    Mutant("models/sites.py", "return 0.5 * (1.0 + np.cos(phase_angle))", "return 0.5 * (1.0 - np.cos(phase_angle))",
           "Moon illuminated fraction: Meeus 48.1"),
    Mutant("models/sites.py", "return era - np.interp(jd, self.nodes_jd, self.offset)", "return era + np.interp(jd, self.nodes_jd, self.offset)",
           "sky track: hour angle"),
    # (negating the hour angle is equivalent for altitudes, cos(-H) = cos H: the track's unwrapping is dropped instead)
    Mutant("models/sites.py", "offset = np.unwrap(era - apparent.ha.to_value(u.rad))", "offset = (era - apparent.ha.to_value(u.rad))",
           "sky track: unwrapped offsets"),
    Mutant("models/sites.py", "TRACK_STEP_D = 2.0", "TRACK_STEP_D = 20.0", "sky track: node spacing"),
    Mutant("models/sites.py", "Time(first_jd - 2.0 * TRACK_STEP_D", "Time(first_jd + 2.0 * TRACK_STEP_D", "sky track: nodes before the range"),
    Mutant("models/sites.py", "moon = moon - location.get_gcrs_posvel(utc)[0]", "moon = moon + location.get_gcrs_posvel(utc)[0]",
           "Moon: topocentric position"),
    Mutant("models/sites.py", "return float(utc.tdb.jd), (", "return float(utc.jd), (", "time parsing: UTC to TDB"),
    # -- observability from a site --------------------------------------------------------------------
    Mutant("models/visibility.py", "ok = ((star_track.altitude_deg(grid) >= conditions.min_altitude_deg)",
           "ok = ((star_track.altitude_deg(grid) <= conditions.min_altitude_deg)", "observable: star above the limit"),
    Mutant("models/visibility.py", "& (sun_track.altitude_deg(grid) <= conditions.max_sun_altitude_deg))",
           "& (sun_track.altitude_deg(grid) >= conditions.max_sun_altitude_deg))", "observable: Sun below the limit"),
    Mutant("models/visibility.py", "observable = ok.all(axis=1)", "observable = ok.any(axis=1)", "observable: the whole window"),
    Mutant("models/visibility.py", "partial = ~observable & (ok & in_transit).any(axis=1)",
           "partial = ~observable & (ok | in_transit).any(axis=1)", "partial: part of the transit"),
    Mutant("models/visibility.py", "0.5 * forecast.duration, 0.0)", "1.0 * forecast.duration, 0.0)",
           "site times: half the duration either side"),
    Mutant("models/visibility.py", "jd2 = utc.jd2[:, None] + days", "jd2 = utc.jd2[:, None] - days",
           "site times: offsets from mid-transit"),
    Mutant("models/visibility.py", "baseline = conditions.baseline_h / _HOURS_PER_DAY", "baseline = conditions.baseline_h / _MINUTES_PER_DAY",
           "observable: baseline in hours"),
    Mutant("models/visibility.py", "step * sun[change] / (sun[change] - sun[change + 1])",
           "step * sun[change + 1] / (sun[change] - sun[change + 1])", "nights: crossing interpolation"),
    Mutant("models/visibility.py", "dark = sun <= 0.0", "dark = sun >= 0.0", "nights: Sun below the limit"),
    Mutant("models/visibility.py", "_number(forecast.sigma[k] * _MINUTES_PER_DAY)", "_number(forecast.sigma[k] * _HOURS_PER_DAY)",
           "forecast rows: sigma in minutes"),
    # -- quantity declarations that compute something themselves -----------------------------------
    Mutant("models/engine/quantities/star.py", "return c.star_mass * M_SUN", "return c.star_mass / M_SUN",
           "declaration star_mass_kg"),
    Mutant("models/engine/quantities/star.py", "return c.star_radius * R_SUN", "return c.star_radius / R_SUN",
           "declaration star_radius_m"),
    Mutant("models/engine/quantities/star.py", "np.where(c.luminosity_is_computed, computed, c.star_luminosity)",
           "np.where(c.luminosity_is_computed, c.star_luminosity, computed)", "declaration luminosity_lsun: given first"),
    Mutant("models/engine/quantities/star.py", "(c.star_teff < irradiation.HZ_TEFF_RANGE[0])",
           "(c.star_teff <= irradiation.HZ_TEFF_RANGE[0])", "declaration hz_extrapolated: 2600 K included"),
    Mutant("models/engine/quantities/star.py", "c.hz_limit_flux[:, limit])", "c.hz_limit_flux[:, limit - 1])",
           "declaration hz distances: each limit's own flux"),
    Mutant("models/engine/quantities/orbit.py", "return c.period * DAY", "return c.period / DAY", "declaration period_s"),
    Mutant("models/engine/quantities/orbit.py", "return np.isnan(c.mass)", "return ~np.isnan(c.mass)",
           "declaration mass_is_estimated"),
    Mutant("models/engine/quantities/orbit.py", "(c.radius, c.mass_relation_z)", "(c.radius, 2.0 * c.mass_relation_z)",
           "declaration mass_or_estimate_mearth: one unit deviate"),
    Mutant("models/engine/quantities/orbit.py", "return c.mass_or_estimate_mearth * M_EARTH", "return c.mass_or_estimate_mearth / M_EARTH",
           "declaration mass_kg"),
    Mutant("models/engine/quantities/orbit.py", "return c.radius * R_EARTH", "return c.radius / R_EARTH", "declaration radius_m"),
    Mutant("models/engine/quantities/orbit.py", "return np.deg2rad(c.omega)", "return np.rad2deg(c.omega)", "declaration omega_rad"),
    Mutant("models/engine/quantities/orbit.py", "return np.deg2rad(c.inclination)", "return np.rad2deg(c.inclination)",
           "declaration inclination_rad"),
    Mutant("models/engine/quantities/orbit.py", "return c.a_m / AU", "return c.a_m * AU", "declaration semi_major_axis_au"),
    Mutant("models/engine/quantities/orbit.py", "c.star_mass_kg + c.mass_kg)", "c.star_mass_kg - c.mass_kg)",
           "declaration a_m: M* + Mp"),
    Mutant("models/engine/quantities/orbit.py", "c.semi_major_axis_au * (1.0 - c.eccentricity)",
           "c.semi_major_axis_au * (1.0 + c.eccentricity)", "declaration periastron_au"),
    Mutant("models/engine/quantities/orbit.py", "c.semi_major_axis_au * (1.0 + c.eccentricity)",
           "c.semi_major_axis_au * (1.0 - c.eccentricity)", "declaration apoastron_au"),
    Mutant("models/engine/quantities/irradiation.py", "equilibrium_temperature(c.insolation_earth, 0.0, 0.25)",
           "equilibrium_temperature(c.insolation_earth, 0.0, 0.5)", "declaration teq_zero_albedo_k: full redistribution"),
    Mutant("models/engine/quantities/irradiation.py", "c.hz_region == irradiation.HZ_REGIONS.index(\"conservative\")",
           "c.hz_region == irradiation.HZ_REGIONS.index(\"optimistic inner\")", "declaration in_conservative_hz"),
    Mutant("models/engine/quantities/irradiation.py", "region <= irradiation.HZ_REGIONS.index(\"optimistic outer\")",
           "region < irradiation.HZ_REGIONS.index(\"optimistic outer\")", "declaration in_optimistic_hz"),
    Mutant("models/engine/quantities/bulk.py", "return c.mass_kg / M_EARTH", "return c.mass_kg * M_EARTH", "declaration mass_mearth"),
    Mutant("models/engine/quantities/bulk.py", "composition.bulk_density(c.mass_kg, c.radius_m) / 1000.0",
           "composition.bulk_density(c.mass_kg, c.radius_m) / 100.0", "declaration density_gcc"),
    Mutant("models/engine/quantities/bulk.py", "composition.escape_speed(c.mass_kg, c.radius_m) / 1000.0",
           "composition.escape_speed(c.mass_kg, c.radius_m) / 100.0", "declaration escape_speed_kms"),
    Mutant("models/engine/quantities/bulk.py", "c.star_mass_kg) / GYR", "c.star_mass_kg) * GYR", "declaration tidal_lock_gyr"),
    Mutant("models/engine/quantities/observing.py", "c.star_radius_m) * 1e6", "c.star_radius_m) * 1e3",
           "declaration transit_depth_ppm"),
    Mutant("models/engine/quantities/observing.py", "c.eccentricity, c.omega_rad) / HOUR", "c.eccentricity, c.omega_rad) * HOUR",
           "declaration transit_duration_h"),
    Mutant("models/engine/quantities/observing.py", "c.star_radius * R_SUN / R_EARTH", "c.star_radius * R_EARTH / R_SUN",
           "declaration esm: star radius in Earth radii"),
    Mutant("models/engine/quantities/pairs.py", "return outer(c.period) / inner(c.period)", "return inner(c.period) / outer(c.period)",
           "declaration period_ratio"),
    Mutant("models/engine/quantities/pairs.py", "return c.pair_p - c.pair_q", "return c.pair_p + c.pair_q", "declaration order"),
    Mutant("models/engine/quantities/pairs.py", "np.where(c.order == 1, period, np.nan)", "np.where(c.order == 2, period, np.nan)",
           "declaration super_period_d: first order only"),
    Mutant("models/engine/quantities/triples.py", "return 360.0 * resonances.three_body_residual",
           "return 180.0 * resonances.three_body_residual", "declaration residual_deg_per_day"),
    Mutant("models/engine/quantities/skies.py", "body = np.where(body >= observer, body + 1, body)",
           "body = np.where(body > observer, body + 1, body)", "declaration sky rows: skip the observer"),
    Mutant("models/engine/quantities/skies.py", "e[:, high], omega[:, high])", "e[:, high], omega[:, low])",
           "declaration closest_distance_au: each orbit's periastron"),
    Mutant("models/engine/quantities/skies.py", "np.where(body < 0, star_radius_au", "np.where(body <= 0, star_radius_au",
           "declaration sky_diameter_rad: the star's radius for the star only"),
    Mutant("models/engine/quantities/skies.py", "c.sky_diameter_rad * RAD_TO_ARCSEC", "c.sky_diameter_rad / RAD_TO_ARCSEC",
           "declaration max_angular_diameter_arcsec"),
    Mutant("models/engine/quantities/atmospheres.py", "c.insolation_earth / atmospheres.shoreline_insolation",
           "c.insolation_earth * atmospheres.shoreline_insolation", "declaration shoreline_flux_ratio"),
    Mutant("models/engine/quantities/atmospheres.py", "c.star_mass_kg) / c.radius_m", "c.star_mass_kg) * c.radius_m",
           "declaration escape_rate_kg_s: xi = R_Roche / Rp"),
    Mutant("models/engine/quantities/atmospheres.py", "c.surface_gravity_ms2) / 1000.0", "c.surface_gravity_ms2) / 100.0",
           "declaration scale_height_km"),
    Mutant("models/engine/quantities/atmospheres.py", "c.star_radius_m) * 1e6", "c.star_radius_m) * 1e3",
           "declaration transmission_ppm"),
    Mutant("models/engine/quantities/atmospheres.py", "c.eclipse_wavelength_um * 1e-6", "c.eclipse_wavelength_um * 1e-5",
           "declaration eclipse_depth_ppm: wavelength in um"),
    Mutant("models/engine/quantities/interiors.py", "np.where(np.isnan(c.tidal_q), c.assumed_tidal_q, c.tidal_q)",
           "np.where(np.isnan(c.tidal_q), c.tidal_q, c.assumed_tidal_q)", "declaration tidal_q_used: a planet's own Q' first"),
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


def _run_tests(root: Path, first: tuple = ()) -> tuple[int, str]:
    tests = [*first, *(t for t in FAST_TESTS if t not in first)]
    command = [sys.executable, "-m", "pytest", "-x", "-q", "-p", "no:cacheprovider", "-m", "not browser", *tests]
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
                code, summary = _run_tests(root, FIRST_TESTS.get(mutant.path, ()))
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
