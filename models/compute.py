"""Every derived quantity of a system, computed at once on arrays.

:func:`compute` turns :class:`Inputs` of shape (samples, planets) into
columns keyed by the names of the ``orbitdeck-derived/1`` document, each
shaped (samples, rows) where rows are planets, adjacent pairs, consecutive
triples or observer-body skies. No Python loop runs over planets.
"""

from __future__ import annotations

import numpy as np

from . import composition, dynamics, irradiation, observability, orbits, resonances, skies
from .constants import AU, DAY, GYR, HOUR, L_SUN, M_EARTH, M_SUN, R_EARTH, R_SUN, RAD_TO_ARCSEC
from .inputs import Inputs


def sky_rows(n_planets: int):
    """Observer and body indices of the sky table; body -1 is the star.

    For each observer in period order: the star first, then every other
    planet in period order. Also returns, per row, the index of the
    unordered planet pair in ``np.triu_indices(n_planets, 1)`` order (-1
    for the star), since a pair's closest distance is the same both ways.
    """
    observer = np.repeat(np.arange(n_planets), n_planets)
    body = np.tile(np.arange(-1, n_planets - 1), n_planets)
    body = np.where(body >= observer, body + 1, body)
    pair_index = np.full((n_planets, n_planets), -1)
    inner, outer = np.triu_indices(n_planets, 1)
    pair_index[inner, outer] = pair_index[outer, inner] = np.arange(inner.size)
    return observer, body, np.where(body < 0, -1, pair_index[observer, np.maximum(body, 0)])


def compute(inp: Inputs) -> dict[str, np.ndarray]:
    """All derived columns for ``inp``; see :mod:`orbitdeck.models.derive` for their keys.

    Returns
    -------
    dict
        ``"star.<key>"`` arrays (samples,), plus planet, pair, triple and
        sky columns keyed ``"planets.<key>"`` etc., each (samples, rows).
    """
    n = inp.period.shape[1]
    out: dict[str, np.ndarray] = {}

    # -- star --------------------------------------------------------------
    star_mass_kg = inp.star_mass * M_SUN
    star_radius_m = inp.star_radius * R_SUN
    computed_luminosity = irradiation.luminosity_from_radius_teff(star_radius_m, inp.star_teff) / L_SUN
    luminosity = np.where(np.isnan(inp.star_luminosity), computed_luminosity, inp.star_luminosity)
    limit_flux = irradiation.hz_effective_flux(inp.star_teff[:, 0])            # (S, 4)
    hz_au = irradiation.hz_distance(luminosity, limit_flux)                     # (S, 4)
    out["star.luminosity_lsun"] = luminosity[:, 0]
    for i, key in enumerate(irradiation.HZ_LIMITS):
        out[f"star.hz_au.{key}"] = hz_au[:, i]

    # -- planets -----------------------------------------------------------
    mass_estimated = np.isnan(inp.mass)
    mass_mearth = np.where(mass_estimated, composition.mass_from_radius(inp.radius), inp.mass)
    mass_kg = mass_mearth * M_EARTH
    radius_m = inp.radius * R_EARTH
    period_s = inp.period * DAY
    e = inp.eccentricity
    incl = np.radians(inp.inclination)
    omega = np.radians(inp.omega)

    a_m = orbits.semi_major_axis(period_s, star_mass_kg + mass_kg)
    a_au = a_m / AU
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
        "hz_region_index": irradiation.hz_region_index(s_earth, limit_flux),
        "transit_probability": observability.transit_probability(star_radius_m, radius_m, a_m, e, omega),
        "transit_depth_ppm": observability.transit_depth(radius_m, star_radius_m) * 1e6,
        "transit_duration_h": observability.transit_duration_total(period_s, a_m, star_radius_m, radius_m,
                                                                   incl, b, e, omega) / HOUR,
        "impact_parameter": b,
        "rv_semi_amplitude_ms": observability.rv_semi_amplitude(period_s, mass_kg, star_mass_kg, incl, e),
        "tsm": observability.transmission_spectroscopy_metric(inp.radius, mass_mearth, inp.star_radius,
                                                              teq_kempton, inp.j_mag),
        "esm": observability.emission_spectroscopy_metric(inp.radius, inp.star_radius * R_SUN / R_EARTH,
                                                          teq_kempton, inp.star_teff, inp.k_mag),
        "tidal_lock_gyr": dynamics.tidal_locking_time(a_m, mass_kg, radius_m, star_mass_kg) / GYR,
        "periastron_au": a_au * (1.0 - e),
        "apoastron_au": a_au * (1.0 + e),
    }
    out.update({f"planets.{k}": v for k, v in planet.items()})

    # -- adjacent pairs ----------------------------------------------------
    inner, outer = slice(0, n - 1), slice(1, n)
    ratio = inp.period[:, outer] / inp.period[:, inner]
    p, q, order = resonances.nearest_commensurability(ratio)
    first_order = order == 1
    with np.errstate(divide="ignore"):
        sup = resonances.super_period(inp.period[:, inner], inp.period[:, outer], p)
    out.update({
        "pairs.period_ratio": ratio,
        "pairs.p": p,
        "pairs.q": q,
        "pairs.order": order,
        "pairs.delta": resonances.resonance_offset(ratio, p, q),
        "pairs.super_period_d": np.where(first_order, sup, np.nan),
        "pairs.mutual_hill_spacing": dynamics.mutual_hill_spacing(
            a_au[:, inner], a_au[:, outer], mass_kg[:, inner], mass_kg[:, outer], star_mass_kg),
    })

    # -- consecutive triples -----------------------------------------------
    tp, tq, residual = resonances.best_three_body_relation(
        inp.period[:, : n - 2], inp.period[:, 1 : n - 1], inp.period[:, 2:])
    out.update({"triples.p": tp, "triples.q": tq, "triples.residual_deg_per_day": residual})

    # -- skies -------------------------------------------------------------
    observer, body, pair = sky_rows(n)
    is_star = body < 0
    other = np.where(is_star, 0, body)
    inner_of, outer_of = np.triu_indices(n, 1)
    closest = orbits.closest_orbit_distance(a_au[:, inner_of], e[:, inner_of], omega[:, inner_of],
                                            a_au[:, outer_of], e[:, outer_of], omega[:, outer_of])
    distance_au = np.where(is_star, a_au[:, observer], closest[:, np.maximum(pair, 0)] if closest.size else 0.0)
    body_radius_au = np.where(is_star, star_radius_m / AU, radius_m[:, other] / AU)
    diameter = skies.angular_diameter(body_radius_au, distance_au)
    out.update({
        "sky_pairs.closest_distance_au": closest,
        "skies.closest_distance_au": distance_au,
        "skies.max_angular_diameter_arcsec": diameter * RAD_TO_ARCSEC,
        "skies.moon_ratio": skies.moon_ratio(diameter),
    })
    return out
