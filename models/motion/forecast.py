"""Transit forecasts from a linear ephemeris: when, how uncertain, and which overlap.

For every planet with a ``transit_time`` T0 and period P, the transits of a
range of time are T0 + n P for the integer epochs n that fall in it, each
with its one-sigma timing uncertainty sqrt(sigma_T0^2 + n^2 sigma_P^2);
ingress and egress lie half the total duration T14 either side (Winn 2010,
computed for the nominal system); the following secondary eclipse comes
from Kepler's equation (exact for a Keplerian orbit; Winn 2010 eq. 33 is
its first order in e). Transits of different planets whose ingress-egress
spans overlap are flagged.

These are model estimates: a fixed linear ephemeris, uncorrelated errors of
T0 and P, no planet-planet perturbations (transit-timing variations). A
TTV amplitude can be added as a separate, labelled padding of the windows.
Every time is BJD_TDB [d]. Nothing here depends on a site (see
:mod:`orbitdeck.models.motion.visibility`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from . import kepler
from ..physics import composition, observability, orbits
from ..constants import DAY, M_EARTH, M_SUN, R_EARTH, R_SUN
from ..files.problems import planet_field
from ..files.system import System

#: the longest range one forecast may span [d] (5 Julian years)
MAX_RANGE_DAYS = 5 * 365.25
MINUTES_PER_DAY = 1440.0
_RADIANS_PER_DEGREE = np.pi / 180.0
#: when a transit counts as observable from a site (see :mod:`orbitdeck.models.motion.visibility`)
DEFAULT_MIN_ALTITUDE_DEG = 30.0
DEFAULT_MAX_SUN_ALTITUDE_DEG = -12.0
DEFAULT_BASELINE_H = 1.0


@dataclass(frozen=True)
class Conditions:
    """When a transit counts as observable (degrees and hours)."""

    min_altitude_deg: float = DEFAULT_MIN_ALTITUDE_DEG
    max_sun_altitude_deg: float = DEFAULT_MAX_SUN_ALTITUDE_DEG
    baseline_h: float = DEFAULT_BASELINE_H

    def problems(self) -> list[tuple[str, str]]:
        """(field, reason) for each value out of range."""
        found = []
        if not -90.0 <= self.min_altitude_deg < 90.0:
            found.append(("min_altitude", f"must be between -90 and 90 deg, not {self.min_altitude_deg:g}"))
        if not -90.0 <= self.max_sun_altitude_deg <= 90.0:
            found.append(("max_sun_altitude", f"must be between -90 and 90 deg, not {self.max_sun_altitude_deg:g}"))
        if not 0.0 <= self.baseline_h <= 12.0:
            found.append(("baseline", f"must be between 0 and 12 h, not {self.baseline_h:g}"))
        return found


class ForecastInputError(ValueError):
    """Input a forecast cannot use; ``problems`` holds (field, reason) pairs, a planet's field naming
    the planet (``planets[1] (c).transit_time``)."""

    def __init__(self, problems: list[tuple[str, str]]):
        self.problems = list(problems)
        super().__init__("; ".join(f"{field}: {reason}" for field, reason in self.problems))


def epochs_in_range(transit_time, period, start: float, end: float):
    """Every epoch n with T0 + n P in [start, end], for all planets at once.

    Parameters
    ----------
    transit_time, period : array_like
        T0 [BJD_TDB] and P [d] of each planet, shaped (planets,).
    start, end : float
        The range [BJD_TDB].

    Returns
    -------
    planet, epoch : ndarray of int
        The planet index and epoch of each transit, grouped by planet.
    """
    t0, p = np.asarray(transit_time, dtype=float), np.asarray(period, dtype=float)
    first = np.ceil((start - t0) / p).astype(np.int64)
    last = np.floor((end - t0) / p).astype(np.int64)
    counts = np.maximum(last - first + 1, 0)
    planet = np.repeat(np.arange(t0.size), counts)
    group_start = np.repeat(np.cumsum(counts) - counts, counts)
    epoch = first[planet] + (np.arange(planet.size) - group_start)
    return planet, epoch


def mid_transit_time(transit_time, period, epoch):
    """Mid-transit time of a linear ephemeris, T_n = T0 + n P [BJD_TDB]."""
    return transit_time + epoch * period


def mid_time_sigma(sigma_transit_time, sigma_period, epoch):
    """One-sigma uncertainty of T0 + n P, sqrt(sigma_T0^2 + n^2 sigma_P^2).

    First-order propagation of uncorrelated errors of T0 and P (any text on
    error analysis, e.g. Taylor 1997, *An Introduction to Error Analysis*,
    eq. 3.47, from memory). The window grows linearly in n once n sigma_P
    exceeds sigma_T0.
    """
    n_sigma_p = epoch * sigma_period
    return np.sqrt(sigma_transit_time * sigma_transit_time + n_sigma_p * n_sigma_p)


def secondary_eclipse_delay(period, eccentricity, omega):
    """Time from mid-transit to the next mid-occultation on a Keplerian orbit.

    The transit happens at true anomaly f = pi/2 - omega and the occultation
    at f = 3 pi/2 - omega (Winn 2010, section 2.1); each is turned into a
    mean anomaly through Kepler's equation, and the delay is their
    difference over the mean motion, taken in (0, P).

    Parameters
    ----------
    period : array_like
        P (the result takes its unit).
    eccentricity : array_like
    omega : array_like
        Argument of periastron [rad].
    """
    e = kepler.check_eccentricity(eccentricity)
    transit = kepler.mean_anomaly_of_transit(e, omega)
    occultation = kepler.mean_anomaly(kepler.eccentric_anomaly(kepler.wrap_angle(1.5 * np.pi - omega), e), e)
    return period * np.remainder(occultation - transit, 2.0 * np.pi) / (2.0 * np.pi)


def secondary_eclipse_delay_first_order(period, eccentricity, omega):
    """Winn 2010, eq. 33: t_occ - t_tra = (P / 2) [1 + (4 / pi) e cos omega], first order in e."""
    return 0.5 * period * (1.0 + 4.0 / np.pi * eccentricity * np.cos(omega))


def nominal_transit_durations(system: System) -> np.ndarray:
    """Total transit duration T14 [d] of every planet at its nominal values (NaN where it does not transit).

    The same formulas as the derived tables (Winn 2010 eqs. 7, 14 and 16 in
    :mod:`orbitdeck.models.physics.observability`), with masses from Chen & Kipping
    2017 where none is given.
    """
    star = system.star
    rows = np.array([[np.nan if v is None else v for v in p.values_of(
        ("period", "radius", "mass", "eccentricity", "inclination", "omega"))] for p in system.planets], dtype=float)
    period, radius, mass, e, inclination, omega = rows.reshape(-1, 6).T
    mass = np.where(np.isnan(mass), composition.mass_from_radius(radius), mass)
    a_m = orbits.semi_major_axis(period * DAY, star.mass * M_SUN + mass * M_EARTH)
    star_radius_m, radius_m = star.radius * R_SUN, radius * R_EARTH
    inclination, omega = inclination * _RADIANS_PER_DEGREE, omega * _RADIANS_PER_DEGREE
    b = observability.impact_parameter(a_m, inclination, star_radius_m, e, omega)
    return observability.transit_duration_total(period, a_m, star_radius_m, radius_m, inclination, b, e, omega)


def overlapping_pairs(ingress, egress, planet):
    """Index pairs (i, j), both ways, of transits of different planets whose [ingress, egress] overlap.

    Sorted by ingress, transit j > i overlaps i when ingress_j < egress_i,
    so each transit is compared only with the ones that start during it.
    Transits without a duration (NaN) overlap nothing.
    """
    ingress, egress = np.asarray(ingress, dtype=float), np.asarray(egress, dtype=float)
    known = np.isfinite(ingress) & np.isfinite(egress)
    index = np.flatnonzero(known)
    order = index[np.argsort(ingress[index], kind="stable")]
    starts = ingress[order]
    reach = np.searchsorted(starts, egress[order], side="left")   # first sorted position starting at or after egress
    counts = np.maximum(reach - np.arange(order.size) - 1, 0)
    first = np.repeat(np.arange(order.size), counts)
    second = first + 1 + (np.arange(first.size) - np.repeat(np.cumsum(counts) - counts, counts))
    i, j = order[first], order[second]
    different = planet[i] != planet[j]
    i, j = i[different], j[different]
    return np.concatenate([i, j]), np.concatenate([j, i])


@dataclass(frozen=True)
class TransitForecast:
    """Every transit of a range, arrays over transits in time order (times BJD_TDB [d]).

    ``planet`` indexes ``planet_names``; ``sigma`` is the one-sigma timing
    uncertainty of the linear ephemeris [d]; ``ttv_padding`` the labelled
    padding added to the windows [d] (zeros when none was given);
    ``duration`` T14 [d] (NaN: no transit at the nominal inclination);
    ``overlaps`` the names of the other planets in transit at the same time.
    """

    planet_names: tuple
    planet: np.ndarray
    epoch: np.ndarray
    mid: np.ndarray
    sigma: np.ndarray
    ttv_padding: np.ndarray
    duration: np.ndarray
    secondary: np.ndarray
    overlaps: tuple
    start: float
    end: float
    notes: tuple

    @property
    def ingress(self) -> np.ndarray:
        return self.mid - 0.5 * self.duration

    @property
    def egress(self) -> np.ndarray:
        return self.mid + 0.5 * self.duration

    def window(self, sigmas: float) -> tuple[np.ndarray, np.ndarray]:
        """Start and end of the ``sigmas``-sigma window of each mid-time, TTV padding included."""
        half = sigmas * self.sigma + self.ttv_padding
        return self.mid - half, self.mid + half

    def __len__(self) -> int:
        return int(self.mid.size)


def _larger_side(body, field: str) -> float:
    """The larger side of a field's uncertainty (0 when exact): windows are not narrowed by asymmetry."""
    spread = body.uncertainty(field)
    return 0.0 if spread is None else max(spread.plus, spread.minus)


def check_range(start: float, end: float) -> None:
    """Raise :class:`ForecastInputError` unless start < end and the range spans at most :data:`MAX_RANGE_DAYS`."""
    if not (np.isfinite(start) and np.isfinite(end)):
        raise ForecastInputError([("start" if not np.isfinite(start) else "end", "must be a finite time")])
    if end <= start:
        raise ForecastInputError([("end", f"must come after the start ({end:.5f} <= {start:.5f} BJD_TDB)")])
    if end - start > MAX_RANGE_DAYS:
        raise ForecastInputError([("end", f"the range spans {end - start:.1f} d; forecasts cover at most 5 years "
                                          f"({MAX_RANGE_DAYS:g} d)")])


def forecast_transits(system: System, start: float, end: float, ttv_padding=None) -> TransitForecast:
    """Every transit between ``start`` and ``end`` [BJD_TDB] of the planets that have a ``transit_time``.

    Parameters
    ----------
    system : System
    start, end : float
        The range [BJD_TDB]; at most :data:`MAX_RANGE_DAYS` long.
    ttv_padding : dict, optional
        Planet name -> an amplitude of transit-timing variations [d], added
        to both sides of that planet's windows as a separate, labelled
        padding (default: none).

    Raises
    ------
    ForecastInputError
        A bad range, or no planet with a ``transit_time`` (each such field named).
    """
    check_range(start, end)
    planets = system.planets
    timed = [i for i, p in enumerate(planets) if p.transit_time is not None]
    missing = [(planet_field(f"planets[{i}].transit_time", p.name), "has none (a mid-transit time, BJD_TDB), "
                "which forecasts need") for i, p in enumerate(planets) if p.transit_time is None]
    if not timed:
        raise ForecastInputError(missing)
    notes = [f"{field}: {reason}; it is left out" for field, reason in missing]
    t0 = np.array([planets[i].transit_time for i in timed])
    period = np.array([planets[i].period for i in timed])
    sigma_t0 = np.array([_larger_side(planets[i], "transit_time") for i in timed])
    sigma_p = np.array([_larger_side(planets[i], "period") for i in timed])
    padding = np.array([float((ttv_padding or {}).get(planets[i].name, 0.0)) for i in timed])
    eccentricity = np.array([planets[i].eccentricity for i in timed])
    omega = np.array([planets[i].omega for i in timed]) * _RADIANS_PER_DEGREE
    durations = nominal_transit_durations(system)[timed]
    grazing = [planets[i].name for i, d in zip(timed, durations) if not np.isfinite(d)]
    if grazing:
        notes.append(f"no transit at the nominal inclination for {', '.join(grazing)}: ingress and egress are "
                     "unknown, the mid-time is the conjunction")

    local, epoch = epochs_in_range(t0, period, start, end)
    mid = mid_transit_time(t0[local], period[local], epoch)
    order = np.argsort(mid, kind="stable")
    local, epoch, mid = local[order], epoch[order], mid[order]
    duration = durations[local]
    first, second = overlapping_pairs(mid - 0.5 * duration, mid + 0.5 * duration, local)
    names = tuple(p.name for p in planets)
    overlaps = [set() for _ in range(mid.size)]
    for i, j in zip(first.tolist(), second.tolist()):
        overlaps[i].add(timed[local[j]])
    return TransitForecast(
        planet_names=names, planet=np.array(timed, dtype=np.intp)[local], epoch=epoch, mid=mid,
        sigma=mid_time_sigma(sigma_t0[local], sigma_p[local], epoch), ttv_padding=padding[local],
        duration=duration, secondary=mid + secondary_eclipse_delay(period, eccentricity, omega)[local],
        overlaps=tuple(tuple(names[k] for k in sorted(s)) for s in overlaps), start=float(start), end=float(end),
        notes=tuple(notes))
