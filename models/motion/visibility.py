"""Which forecast transits can be seen from a site, and the site's nights.

A transit is observable when, over its whole window, ingress less a
baseline to egress plus the baseline, the star stays at or above a minimum
altitude and the Sun at or below a maximum altitude (defaults: 30 deg,
-12 deg (nautical twilight), 1 h). It is partial when it is not observable
but those conditions hold over some part of ingress to egress. The window
is checked at evenly spaced instants at most :data:`CHECK_STEP_MIN` apart.
Times at the site are the barycentric mid-times taken back along the
light's path (:func:`orbitdeck.models.motion.sites.barycentric_to_utc`); instants
around a transit follow from the mid-time's UTC by the same offsets (the
light-travel time changes by milliseconds in a few hours). These are model
estimates: geometric altitudes (no refraction), no weather, no horizon.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from astropy.time import Time

from . import sites
from .earth_orientation import coverage_notes, offline_astropy
from .forecast import DEFAULT_MAX_SUN_ALTITUDE_DEG, Conditions, TransitForecast
from ..files.system import Site, Star

#: largest spacing of the instants at which a window is checked [min]
CHECK_STEP_MIN = 5.0
#: spacing of the Sun's altitudes that find the nights [min]
NIGHT_STEP_MIN = 10.0
_MINUTES_PER_DAY = 1440.0
_HOURS_PER_DAY = 24.0


@dataclass(frozen=True)
class TransitSky:
    """The sky of each forecast transit at one site (arrays over the forecast's transits).

    ``altitude_deg`` and ``airmass`` are shaped (transits, 3): at ingress,
    mid-transit and egress (at mid-transit only, three times, where the
    duration is unknown). The Sun's altitude, the Moon's separation from
    the star and its illuminated fraction are at mid-transit.
    """

    site: Site
    conditions: Conditions
    mid_utc: Time
    ingress_utc: Time
    egress_utc: Time
    altitude_deg: np.ndarray
    airmass: np.ndarray
    sun_altitude_deg: np.ndarray
    moon_separation_deg: np.ndarray
    moon_illuminated_fraction: np.ndarray
    observable: np.ndarray
    partial: np.ndarray
    notes: tuple


def _jd_offsets(utc: Time, days) -> Time:
    """``utc`` (shaped (transits,)) shifted by ``days`` (shaped (transits, k)), kept in UTC."""
    days = np.asarray(days, dtype=float)
    jd2 = utc.jd2[:, None] + days
    return Time(np.broadcast_to(utc.jd1[:, None], jd2.shape), jd2, format="jd", scale="utc")


def _middle_jyear(forecast: TransitForecast) -> float:
    return 2000.0 + (0.5 * (forecast.start + forecast.end) - 2451545.0) / 365.25


def transit_sky(forecast: TransitForecast, star: Star, site: Site, conditions: Conditions = Conditions()) -> TransitSky:
    """Times at the site, altitudes, Sun, Moon and observability of every transit of ``forecast``.

    Parameters
    ----------
    forecast : TransitForecast
    star : Star
        Needs ``ra`` and ``dec`` (proper motion applied to the middle of the range).
    site : Site
    conditions : Conditions
    """
    coord = sites.star_coordinate(star, _middle_jyear(forecast))
    with offline_astropy():
        location = sites.earth_location(site)
        if len(forecast) == 0:
            empty = Time(np.zeros(0), format="jd", scale="utc")
            none, flags = np.zeros((0, 3)), np.zeros(0, dtype=bool)
            return TransitSky(site, conditions, empty, empty, empty, none, none, np.zeros(0), np.zeros(0),
                              np.zeros(0), flags, flags, ())
        mid_utc = sites.barycentric_to_utc(forecast.mid, coord, location)
        half = np.where(np.isfinite(forecast.duration), 0.5 * forecast.duration, 0.0)
        baseline = conditions.baseline_h / _HOURS_PER_DAY
        reach = half + baseline
        samples = int(math.ceil(2.0 * reach.max() * _MINUTES_PER_DAY / CHECK_STEP_MIN)) + 1
        fraction = np.linspace(-1.0, 1.0, max(samples, 3))
        offsets = reach[:, None] * fraction[None, :]                       # (transits, samples) [d]
        grid = _jd_offsets(mid_utc, offsets)
        contacts = _jd_offsets(mid_utc, np.stack([-half, np.zeros_like(half), half], axis=1))
        nodes = sites.track_nodes(float(grid.jd.min()), float(grid.jd.max()))
        star_track = sites.sky_track(coord, location, nodes)
        sun_track = sites.sky_track("sun", location, nodes)
        ok = ((star_track.altitude_deg(grid) >= conditions.min_altitude_deg)
              & (sun_track.altitude_deg(grid) <= conditions.max_sun_altitude_deg))
        observable = ok.all(axis=1)
        in_transit = np.abs(offsets) <= half[:, None] + 1e-12
        partial = ~observable & (ok & in_transit).any(axis=1)
        altitude_deg = star_track.altitude_deg(contacts)
        separation, light = sites.moon_separation_and_light(mid_utc, location, coord, sun_track)
        notes = coverage_notes(grid)
        return TransitSky(
            site=site, conditions=conditions, mid_utc=mid_utc, ingress_utc=contacts[:, 0], egress_utc=contacts[:, 2],
            altitude_deg=altitude_deg, airmass=sites.airmass(altitude_deg),
            sun_altitude_deg=sun_track.altitude_deg(mid_utc), moon_separation_deg=separation,
            moon_illuminated_fraction=light, observable=observable, partial=partial, notes=tuple(notes))


def nights(star: Star, site: Site, start: float, end: float,
           max_sun_altitude_deg: float = DEFAULT_MAX_SUN_ALTITUDE_DEG) -> tuple[np.ndarray, np.ndarray]:
    """Begin and end [BJD_TDB] of each stretch of [start, end] with the Sun at or below ``max_sun_altitude_deg``.

    The Sun's altitude is found every :data:`NIGHT_STEP_MIN` minutes and each
    crossing placed by linear interpolation between the two instants around
    it; the UTC of the crossings is put on the BJD_TDB scale with the star's
    light-travel time, so the nights line up with the forecast's times.
    """
    coord = sites.star_coordinate(star)
    with offline_astropy():
        location = sites.earth_location(site)
        step = NIGHT_STEP_MIN / _MINUTES_PER_DAY
        count = int(math.ceil((end - start) / step)) + 1
        # BJD_TDB and UTC differ by at most ~8.3 min + 69 s here: a grid a few minutes wider covers the range
        first = Time(start - 0.01, format="jd", scale="tdb").utc.jd
        utc = Time(first + step * np.arange(count + 3), format="jd", scale="utc")
        nodes = sites.track_nodes(float(utc.jd[0]), float(utc.jd[-1]))
        sun = sites.sky_track("sun", location, nodes).altitude_deg(utc) - max_sun_altitude_deg
        dark = sun <= 0.0
        change = np.flatnonzero(dark[1:] != dark[:-1])
        # where between samples i and i+1 the altitude crosses the limit
        crossing = utc.jd[change] + step * sun[change] / (sun[change] - sun[change + 1])
        edges = np.concatenate([[utc.jd[0]] if dark[0] else [], crossing, [utc.jd[-1]] if dark[-1] else []])
        if edges.size == 0:
            return np.zeros(0), np.zeros(0)
        bjd = sites.utc_to_barycentric(Time(edges, format="jd", scale="utc"), coord, location)
    begin, finish = np.clip(bjd[0::2], start, end), np.clip(bjd[1::2], start, end)
    keep = finish > begin
    return begin[keep], finish[keep]


def _number(value) -> float | None:
    """A plain float for a document, None where it is not finite."""
    value = float(value)
    return value if math.isfinite(value) else None


def _iso(times: Time) -> list[str]:
    """ISO 8601 UTC texts to the second ("2026-01-01T01:50:12Z")."""
    with offline_astropy():   # quiet about years beyond the leap-second list (the notes say it)
        return [f"{text}Z" for text in Time(times, precision=0).isot]


def forecast_rows(forecast: TransitForecast, sky: TransitSky | None = None) -> list[dict]:
    """One dictionary per transit, the keys of the ``transits`` command's JSON (times BJD_TDB [d], sigmas [min]).

    Always: ``planet``, ``epoch``, ``mid_bjd_tdb``, ``sigma_min`` (one sigma of
    the linear ephemeris), ``ingress_bjd_tdb``, ``egress_bjd_tdb``, ``overlaps``
    (names of the other planets in transit at the same time),
    ``secondary_eclipse_bjd_tdb``, and ``ttv_padding_min`` when a padding
    was given. With ``sky``: ``mid_utc``, ``ingress_utc``, ``egress_utc`` (ISO
    8601), ``altitude_deg`` (at mid-transit), ``altitude_ingress_deg``,
    ``altitude_egress_deg``, ``airmass`` (at mid-transit), ``sun_altitude_deg``
    (at mid-transit), ``moon_separation_deg``, ``moon_illuminated_fraction``,
    ``observable`` and ``partial``. Unknown values are None.
    """
    padded = bool(np.any(forecast.ttv_padding))
    rows = []
    for k in range(len(forecast)):
        row = {"planet": forecast.planet_names[forecast.planet[k]], "epoch": int(forecast.epoch[k]),
               "mid_bjd_tdb": _number(forecast.mid[k]), "sigma_min": _number(forecast.sigma[k] * _MINUTES_PER_DAY),
               "ingress_bjd_tdb": _number(forecast.ingress[k]), "egress_bjd_tdb": _number(forecast.egress[k]),
               "overlaps": list(forecast.overlaps[k]),
               "secondary_eclipse_bjd_tdb": _number(forecast.secondary[k])}
        if padded:
            row["ttv_padding_min"] = _number(forecast.ttv_padding[k] * _MINUTES_PER_DAY)
        rows.append(row)
    if sky is None:
        return rows
    known = np.isfinite(forecast.duration)
    texts = {key: _iso(times) for key, times in
             (("mid_utc", sky.mid_utc), ("ingress_utc", sky.ingress_utc), ("egress_utc", sky.egress_utc))}
    for k, row in enumerate(rows):
        row.update({
            "mid_utc": texts["mid_utc"][k],
            "ingress_utc": texts["ingress_utc"][k] if known[k] else None,
            "egress_utc": texts["egress_utc"][k] if known[k] else None,
            "altitude_deg": _number(sky.altitude_deg[k, 1]),
            "altitude_ingress_deg": _number(sky.altitude_deg[k, 0]) if known[k] else None,
            "altitude_egress_deg": _number(sky.altitude_deg[k, 2]) if known[k] else None,
            "airmass": _number(sky.airmass[k, 1]),
            "sun_altitude_deg": _number(sky.sun_altitude_deg[k]),
            "moon_separation_deg": _number(sky.moon_separation_deg[k]),
            "moon_illuminated_fraction": _number(sky.moon_illuminated_fraction[k]),
            "observable": bool(sky.observable[k]),
            "partial": bool(sky.partial[k]),
        })
    return rows
