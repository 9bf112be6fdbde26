"""Every derived quantity of a system, computed at once on arrays.

:func:`compute` turns :class:`Inputs` of shape (samples, planets) into
columns keyed by the names of the ``orbitdeck-derived/1`` document, each
shaped (samples, rows) where rows are planets, adjacent pairs, consecutive
triples or observer-body skies. No Python loop runs over planets.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from . import composition, dynamics, irradiation, observability, orbits, resonances, skies
from .constants import AU, DAY, GYR, HOUR, L_SUN, M_EARTH, M_SUN, R_EARTH, R_SUN, RAD_TO_ARCSEC
from .inputs import Inputs


#: a product, not np.radians, whose loop is ten times slower
_RADIANS_PER_DEGREE = np.pi / 180.0


@lru_cache(maxsize=16)
def sky_rows(n_planets: int):
    """Observer and body indices of the sky table; body -1 is the star.

    For each observer in period order: the star first, then every other
    planet in period order. Also returns, per row, the index of the
    unordered planet pair in ``np.triu_indices(n_planets, 1)`` order (-1
    for the star), since a pair's closest distance is the same both ways.
    The arrays are shared between calls and read-only.
    """
    observer = np.repeat(np.arange(n_planets), n_planets)
    body = np.tile(np.arange(-1, n_planets - 1), n_planets)
    body = np.where(body >= observer, body + 1, body)
    low, high = np.minimum(observer, body), np.maximum(observer, body)
    # position of (low, high), low < high, in triu_indices order
    pair = low * (2 * n_planets - low - 1) // 2 + (high - low - 1)
    pair = np.where(body < 0, -1, pair)
    for array in (observer, body, pair):
        array.flags.writeable = False
    return observer, body, pair


@dataclass(frozen=True)
class Anchor:
    """Nominal choices that Monte Carlo draws are measured against.

    ``pair_p``, ``pair_q``: the nominal nearest commensurability of each
    adjacent pair, so that every draw's offset is from that same rung and
    its interval is continuous; ``triple_p``, ``triple_q``: the nominal
    three-body relation of each consecutive triple.
    """

    pair_p: np.ndarray
    pair_q: np.ndarray
    triple_p: np.ndarray
    triple_q: np.ndarray


def compute(inp: Inputs, anchor: Anchor | None = None) -> dict[str, np.ndarray]:
    """All derived columns for ``inp``; see :mod:`orbitdeck.models.derive` for their keys.

    Parameters
    ----------
    inp : Inputs
    anchor : Anchor, optional
        Measure pair offsets, super-periods and three-body residuals from
        these nominal choices instead of each row's own; the boolean column
        ``"pairs.other_nearest"`` (the row's own nearest differs) then takes
        the place of the pairs' integer columns p, q and order.

    Returns
    -------
    dict
        ``"star.<key>"`` arrays (samples,), plus planet, pair, triple and
        sky columns keyed ``"planets.<key>"`` etc., each (samples, rows).
    """
    orbit = orbit_of(inp)
    out = star_and_planet_columns(inp, orbit)
    out.update(pair_columns(inp, orbit, anchor))
    out.update(triple_columns(inp, anchor))
    out.update(sky_columns(orbit))
    return out


@dataclass(frozen=True)
class Orbit:
    """Intermediate arrays the pair and sky columns share with the planet columns (SI unless named).

    Every array has the samples on its first axis.
    """

    a_au: np.ndarray
    eccentricity: np.ndarray
    omega_rad: np.ndarray
    mass_kg: np.ndarray
    radius_m: np.ndarray
    star_mass_kg: np.ndarray
    star_radius_m: np.ndarray


def _working_period_s(inp: Inputs) -> np.ndarray:
    """The periods [s] in the precision of the stellar mass, for the columns that also depend on it.

    Single-precision draws (:mod:`orbitdeck.models.uncertainty`) keep their
    periods in double precision for the period column and the period
    ratios; every other column also depends on the stellar mass, whose
    spread single precision resolves, and is worked out in its precision.
    """
    return np.asarray(inp.period * DAY, dtype=np.result_type(inp.star_mass, np.float32))


def orbit_of(inp: Inputs) -> Orbit:
    """The orbits and bodies of ``inp`` in SI units (masses estimated from radii where absent)."""
    mass_mearth = np.where(np.isnan(inp.mass), composition.mass_from_radius(inp.radius), inp.mass)
    mass_kg = mass_mearth * M_EARTH
    star_mass_kg = inp.star_mass * M_SUN
    a_au = orbits.semi_major_axis(_working_period_s(inp), star_mass_kg + mass_kg) / AU
    return Orbit(a_au, inp.eccentricity, inp.omega * _RADIANS_PER_DEGREE, mass_kg, inp.radius * R_EARTH, star_mass_kg,
                 inp.star_radius * R_SUN)


def star_and_planet_columns(inp: Inputs, orbit: Orbit, regions: bool = True) -> dict[str, np.ndarray]:
    """Star and planet columns of ``inp`` (whose :func:`orbit_of` is ``orbit``); with ``regions``,
    also each planet's habitable-zone region (an integer column, not needed for intervals)."""
    out: dict[str, np.ndarray] = {}
    star_mass_kg, star_radius_m = orbit.star_mass_kg, orbit.star_radius_m
    computed_luminosity = irradiation.luminosity_from_radius_teff(star_radius_m, inp.star_teff) / L_SUN
    luminosity = np.where(np.isnan(inp.star_luminosity), computed_luminosity, inp.star_luminosity)
    limit_flux = irradiation.hz_effective_flux(inp.star_teff[:, 0])            # (S, 4)
    hz_au = irradiation.hz_distance(luminosity, limit_flux)                     # (S, 4)
    out["star.luminosity_lsun"] = luminosity[:, 0]
    for i, key in enumerate(irradiation.HZ_LIMITS):
        out[f"star.hz_au.{key}"] = hz_au[:, i]

    mass_estimated = np.isnan(inp.mass)
    mass_kg, radius_m = orbit.mass_kg, orbit.radius_m
    mass_mearth = mass_kg / M_EARTH
    period_s = _working_period_s(inp)
    e, omega = orbit.eccentricity, orbit.omega_rad
    # the inclination stays in its own precision, double for single-precision draws: near 90 deg
    # single precision resolves cos i only to ~1e-7, and so the impact parameter to ~1e-7 a / R*,
    # which a near-grazing transit's duration feels far out from its star
    incl = inp.inclination * _RADIANS_PER_DEGREE
    a_au = orbit.a_au
    a_m = a_au * AU
    s_earth = irradiation.insolation(luminosity, a_au, e)
    teq = irradiation.equilibrium_temperature(inp.star_teff, star_radius_m, a_m, inp.bond_albedo, inp.redistribution)
    teq_kempton = irradiation.equilibrium_temperature(inp.star_teff, star_radius_m, a_m, 0.0, 0.25)
    b = observability.impact_parameter(a_m, incl, star_radius_m, e, omega)

    planet = {
        "period_d": inp.period,
        "semi_major_axis_au": a_au,
        "insolation_earth": s_earth,
        "teq_k": teq,
        "radius_rearth": inp.radius,
        "mass_mearth": mass_mearth,
        "mass_estimated": mass_estimated,
        "density_gcc": composition.bulk_density(mass_kg, radius_m) / 1000.0,
        "surface_gravity_ms2": composition.surface_gravity(mass_kg, radius_m),
        "escape_speed_kms": composition.escape_speed(mass_kg, radius_m) / 1000.0,
        "hill_radius_au": dynamics.hill_radius(a_au, e, mass_kg, star_mass_kg),
        "transit_probability": observability.transit_probability(star_radius_m, radius_m, a_m, e, omega),
        "transit_depth_ppm": observability.transit_depth(radius_m, star_radius_m) * 1e6,
        "transit_duration_h": observability.transit_duration_total(period_s, a_m, star_radius_m, radius_m,
                                                                   incl, b, e, omega) / HOUR,
        "impact_parameter": b,
        "rv_semi_amplitude_ms": observability.rv_semi_amplitude(period_s, mass_kg, star_mass_kg,
                                                                 incl.astype(period_s.dtype), e),
        "tsm": observability.transmission_spectroscopy_metric(inp.radius, mass_mearth, inp.star_radius,
                                                              teq_kempton, inp.j_mag),
        "esm": observability.emission_spectroscopy_metric(inp.radius, inp.star_radius * R_SUN / R_EARTH,
                                                          teq_kempton, inp.star_teff, inp.k_mag),
        "tidal_lock_gyr": dynamics.tidal_locking_time(a_m, mass_kg, radius_m, star_mass_kg) / GYR,
        "periastron_au": a_au * (1.0 - e),
        "apoastron_au": a_au * (1.0 + e),
    }
    if regions:
        planet["hz_region_index"] = irradiation.hz_region_index(s_earth, limit_flux)
    out.update({f"planets.{k}": v for k, v in planet.items()})
    return out


def pair_columns(inp: Inputs, orbit: Orbit, anchor: Anchor | None) -> dict[str, np.ndarray]:
    n = inp.period.shape[1]
    inner, outer = inp.period[:, : n - 1], inp.period[:, 1:]
    ratio = outer / inner
    if anchor is None:
        p, q, order = resonances.nearest_commensurability(ratio)
        out = {"pairs.period_ratio": ratio, "pairs.p": p, "pairs.q": q, "pairs.order": order}
    else:
        p, q = anchor.pair_p, anchor.pair_q
        out = {"pairs.period_ratio": ratio, "pairs.other_nearest": resonances.nearest_differs(ratio, p, q)}
    with np.errstate(divide="ignore"):
        sup = resonances.super_period(inner, outer, p)
    out.update({
        "pairs.delta": resonances.resonance_offset(ratio, p, q),
        "pairs.super_period_d": np.where(p - q == 1, sup, np.nan),
        "pairs.mutual_hill_spacing": dynamics.mutual_hill_spacing(
            orbit.a_au[:, : n - 1], orbit.a_au[:, 1:], orbit.mass_kg[:, : n - 1], orbit.mass_kg[:, 1:],
            orbit.star_mass_kg),
    })
    return out


def triple_columns(inp: Inputs, anchor: Anchor | None) -> dict[str, np.ndarray]:
    n = inp.period.shape[1]
    period_1, period_2, period_3 = inp.period[:, : n - 2], inp.period[:, 1 : n - 1], inp.period[:, 2:]
    if anchor is None:
        tp, tq, residual = resonances.best_three_body_relation(period_1, period_2, period_3)
    else:
        tp, tq = anchor.triple_p, anchor.triple_q
        residual = 360.0 * resonances.three_body_residual(period_1, period_2, period_3, tp, tq)
    return {"triples.p": tp, "triples.q": tq, "triples.residual_deg_per_day": residual}


def sky_columns(orbit: Orbit) -> dict[str, np.ndarray]:
    n = orbit.a_au.shape[1]
    observer, body, pair = sky_rows(n)
    is_star = body < 0
    inner_of, outer_of = np.triu_indices(n, 1)
    closest = orbits.closest_distance_of_pairs(orbit.a_au, orbit.eccentricity, orbit.omega_rad, inner_of, outer_of)
    distance_au = np.where(is_star, orbit.a_au[:, observer], closest[:, np.maximum(pair, 0)] if closest.size else 0.0)
    body_radius_au = np.where(is_star, orbit.star_radius_m / AU, (orbit.radius_m / AU)[:, np.where(is_star, 0, body)])
    diameter = skies.angular_diameter(body_radius_au, distance_au)
    return {
        "skies.closest_distance_au": distance_au,
        "skies.max_angular_diameter_arcsec": diameter * RAD_TO_ARCSEC,
        "skies.moon_ratio": skies.moon_ratio(diameter),
    }
