"""Where a star stands in a site's sky: time scales, altitudes, the Sun and the Moon.

astropy does the astronomy: time scales, the barycentric light-travel time
(``Time.light_travel_time``), apparent places in the site's hour-angle frame
(``HADec``), and the Sun and the Moon from its built-in ephemerides
(``get_body``). Nothing here downloads anything: every astropy call runs
inside :func:`~orbitdeck.models.motion.earth_orientation.offline_astropy`, which
for its duration only keeps astropy to the Earth-orientation (IERS) table
and leap seconds bundled with it and to its built-in ephemeris;
:func:`~orbitdeck.models.motion.earth_orientation.coverage_notes` says when a time
lies beyond those tables.

Altitudes at many instants come from a :class:`SkyTrack`: astropy's
apparent hour angle and declination of a body at nodes 2 days apart,
interpolated linearly between them (the declination and the hour angle's
offset from the Earth rotation angle, both slow), then
sin h = sin phi sin delta + cos phi cos delta cos H. Against astropy's
``AltAz`` at every instant the altitudes agree to about 1 arcsec for a star
and 15 arcsec for the Sun (the curvature of its path between nodes, and its
topocentric parallax of 9 arcsec, which follows the nodes' hour angles), at
a small part of the cost. Altitudes are geometric: no atmospheric
refraction.
"""

from __future__ import annotations

import math
import re
import warnings
from dataclasses import dataclass

import astropy.units as u
import numpy as np
from astropy.coordinates import Distance, EarthLocation, HADec, SkyCoord, get_body, get_body_barycentric
from astropy.time import Time

from .earth_orientation import offline_astropy
from ..files.system import DEFAULT_COORDINATE_EPOCH, Site, Star

#: spacing of the nodes of a :class:`SkyTrack` [d]: interpolated linearly, the Sun's altitude stays within
#: about 15 arcsec of astropy's AltAz at 2 d (7 at 1 d, 40 at 4 d), a star's within about 1 arcsec
TRACK_STEP_D = 2.0
#: iterations of t + light_travel_time(t) = BJD_TDB (the second leaves an error of a few microseconds)
LIGHT_TIME_ITERATIONS = 2
#: times given as plain numbers must be full Julian dates between these (years 1900 to 2200)
JD_RANGE = (2415020.5, 2524593.5)
#: the Earth's centre, for light-travel times without a site
GEOCENTRE = EarthLocation.from_geocentric(0.0, 0.0, 0.0, unit=u.m)


def earth_location(site: Site) -> EarthLocation:
    """The site as an astropy ``EarthLocation`` (geodetic, WGS84)."""
    return EarthLocation.from_geodetic(site.longitude * u.deg, site.latitude * u.deg, site.elevation * u.m)


def star_coordinate(star: Star, at_jyear: float | None = None) -> SkyCoord:
    """The star's ICRS position, moved by its proper motion to Julian year ``at_jyear`` when it has one.

    Without proper motions the position is taken as fixed. With them, the
    position of ``coordinate_epoch`` (default J2000.0) is carried to
    ``at_jyear`` by astropy's space motion (its distance when given).
    """
    if not star.has_position:
        raise ValueError("the star has no ra and dec")
    if star.pm_ra is None or at_jyear is None:
        return SkyCoord(star.ra * u.deg, star.dec * u.deg, frame="icrs")
    epoch = star.coordinate_epoch if star.coordinate_epoch is not None else DEFAULT_COORDINATE_EPOCH
    extra = {"distance": Distance(star.distance, u.pc)} if star.distance is not None else {}
    moving = SkyCoord(star.ra * u.deg, star.dec * u.deg, pm_ra_cosdec=star.pm_ra * u.mas / u.yr,
                      pm_dec=star.pm_dec * u.mas / u.yr, obstime=Time(epoch, format="jyear", scale="tdb"),
                      frame="icrs", **extra)
    moved = moving.apply_space_motion(new_obstime=Time(at_jyear, format="jyear", scale="tdb"))
    return SkyCoord(moved.ra, moved.dec, frame="icrs")


def barycentric_to_utc(bjd_tdb, coord: SkyCoord, location: EarthLocation | None = None) -> Time:
    """The UTC at ``location`` (default the geocentre) at which light reaching the Solar System
    barycentre at ``bjd_tdb`` arrives.

    Solves t + Delta(t) = BJD_TDB for t (TDB at the site) by fixed-point
    iteration, Delta being astropy's barycentric light-travel time towards
    ``coord`` (BJD_TDB as defined by Eastman, Siverd & Gaudi 2010, PASP 122,
    935, section 2), then converts t to UTC.

    Parameters
    ----------
    bjd_tdb : array_like
        Times at the barycentre [BJD_TDB, d].
    coord : SkyCoord
        The star (ICRS).
    location : EarthLocation, optional
    """
    location = GEOCENTRE if location is None else location
    target = Time(np.asarray(bjd_tdb, dtype=float), format="jd", scale="tdb")
    arrival = target
    for _ in range(LIGHT_TIME_ITERATIONS):
        arrival = target - arrival.light_travel_time(coord, "barycentric", location=location)
    return arrival.utc


def utc_to_barycentric(utc: Time, coord: SkyCoord, location: EarthLocation | None = None) -> np.ndarray:
    """BJD_TDB [d] of light from ``coord`` arriving at ``location`` (default the geocentre) at ``utc``."""
    location = GEOCENTRE if location is None else location
    return (utc.tdb + utc.light_travel_time(coord, "barycentric", location=location)).jd


def altitude(hour_angle, declination, latitude):
    """Altitude from hour angle, declination and latitude.

    sin h = sin phi sin delta + cos phi cos delta cos H (Meeus 1998,
    *Astronomical Algorithms*, 2nd ed., eq. 13.6).

    Parameters
    ----------
    hour_angle, declination, latitude : array_like
        [rad].

    Returns
    -------
    ndarray
        Altitude [rad], geometric (no refraction).
    """
    sine = np.sin(latitude) * np.sin(declination) + np.cos(latitude) * np.cos(declination) * np.cos(hour_angle)
    return np.arcsin(np.clip(sine, -1.0, 1.0))


def airmass(altitude_deg):
    """Airmass sec z = 1 / sin h of a plane-parallel atmosphere (common practice); NaN at or below the horizon."""
    h = np.asarray(altitude_deg, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(h > 0.0, 1.0 / np.sin(np.deg2rad(h)), np.nan)


def moon_phase_angle(elongation, sun_distance, moon_distance):
    """Phase angle of the Moon (Sun-Moon-observer angle).

    tan i = R sin psi / (Delta - R cos psi) (Meeus 1998, eq. 48.3), with
    psi the Moon's elongation from the Sun, R the observer-Sun and Delta the
    observer-Moon distance.

    Parameters
    ----------
    elongation : array_like
        psi [rad].
    sun_distance, moon_distance : array_like
        R and Delta, one common length unit.

    Returns
    -------
    ndarray
        i [rad], in [0, pi].
    """
    return np.arctan2(sun_distance * np.sin(elongation), moon_distance - sun_distance * np.cos(elongation))


def illuminated_fraction(phase_angle):
    """Illuminated fraction of a sphere's disc, k = (1 + cos i) / 2 (Meeus 1998, eq. 48.1)."""
    return 0.5 * (1.0 + np.cos(phase_angle))


@dataclass(frozen=True)
class SkyTrack:
    """A body's apparent hour angle and declination at a site, at nodes, ready to interpolate.

    ``offset`` holds E + lambda - H at the nodes (Earth rotation angle plus
    longitude, less the hour angle: the body's apparent right ascension on
    the CIO-based equator, which changes slowly), ``declination`` the
    apparent declination, both [rad], against the nodes' UTC Julian dates
    ``nodes_jd``; ``position`` (for the Sun) the observer-centred GCRS
    position [km], shaped (3, nodes). Between nodes all are interpolated
    linearly.
    """

    nodes_jd: np.ndarray
    offset: np.ndarray
    declination: np.ndarray
    latitude_rad: float
    longitude: u.Quantity
    position: np.ndarray | None = None

    def hour_angle_and_declination(self, utc: Time):
        """Hour angle and declination [rad] at ``utc``."""
        era = utc.earth_rotation_angle(self.longitude).to_value(u.rad)
        jd = utc.jd
        return era - np.interp(jd, self.nodes_jd, self.offset), np.interp(jd, self.nodes_jd, self.declination)

    def altitude_deg(self, utc: Time) -> np.ndarray:
        """Geometric altitude [deg] at ``utc`` (call inside :func:`offline_astropy`)."""
        hour_angle, declination = self.hour_angle_and_declination(utc)
        return np.rad2deg(altitude(hour_angle, declination, self.latitude_rad))

    def position_at(self, utc: Time) -> np.ndarray:
        """The interpolated position [km] at ``utc``, shaped (3, ...)."""
        jd = utc.jd
        return np.stack([np.interp(jd, self.nodes_jd, axis) for axis in self.position])


def track_nodes(first_jd: float, last_jd: float) -> Time:
    """UTC nodes every :data:`TRACK_STEP_D` covering [first_jd, last_jd] with two nodes to spare each side."""
    count = max(int(math.ceil((last_jd - first_jd) / TRACK_STEP_D)), 1) + 5
    return Time(first_jd - 2.0 * TRACK_STEP_D + TRACK_STEP_D * np.arange(count), format="jd", scale="utc")


def sky_track(body, location: EarthLocation, nodes: Time) -> SkyTrack:
    """The :class:`SkyTrack` of ``body`` (a SkyCoord, or "sun" or "moon") at ``location`` over ``nodes``.

    Call inside :func:`offline_astropy`.
    """
    position = None
    if isinstance(body, str):
        body = get_body(body, nodes, location)
        position = body.cartesian.xyz.to_value(u.km)
    frame = HADec(obstime=nodes, location=location)
    apparent = body.transform_to(frame)
    era = nodes.earth_rotation_angle(location.lon).to_value(u.rad)
    offset = np.unwrap(era - apparent.ha.to_value(u.rad))
    return SkyTrack(nodes.jd, offset, apparent.dec.to_value(u.rad), float(location.lat.to_value(u.rad)),
                    location.lon, position)


def moon_separation_and_light(utc: Time, location: EarthLocation, coord: SkyCoord, sun: SkyTrack):
    """The Moon's angular distance from the star [deg] and its illuminated fraction at ``utc``.

    The Moon's position seen from the site is astropy's barycentric Moon
    less the barycentric Earth and the site's geocentric position (all on
    ICRS axes; the Moon's light time, 1.3 s, is neglected: about 1 km); the
    Sun's comes from the track. The separation takes the star's ICRS
    direction (good to its aberration, about 20 arcsec). Call inside
    :func:`offline_astropy`.
    """
    moon = (get_body_barycentric("moon", utc) - get_body_barycentric("earth", utc)).xyz.to_value(u.km)
    moon = moon - location.get_gcrs_posvel(utc)[0].xyz.to_value(u.km)
    sun_xyz = sun.position_at(utc)
    moon_distance = np.sqrt(np.sum(moon * moon, axis=0))
    sun_distance = np.sqrt(np.sum(sun_xyz * sun_xyz, axis=0))
    cos_elongation = np.sum(moon * sun_xyz, axis=0) / (moon_distance * sun_distance)
    elongation = np.arccos(np.clip(cos_elongation, -1.0, 1.0))
    star = coord.cartesian.xyz.value.reshape(3, -1)
    cos_separation = np.sum(moon * star, axis=0) / moon_distance
    separation = np.rad2deg(np.arccos(np.clip(cos_separation, -1.0, 1.0)))
    return separation, illuminated_fraction(moon_phase_angle(elongation, sun_distance, moon_distance))


_NUMBER = re.compile(r"\s*[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?\s*")


def parse_time(text: str, coord: SkyCoord | None = None, location: EarthLocation | None = None):
    """A time given as a BJD_TDB number or an ISO 8601 UTC date or date-time, as (BJD_TDB, note or None).

    An ISO date is an instant in UTC, turned into BJD_TDB with the star's
    barycentric light-travel time at ``location`` (default the geocentre);
    without ``coord`` it is taken as JD_TDB, up to 8.3 minutes off, and the
    note says so. Raises ValueError with the reason.
    """
    text = str(text).strip()
    if _NUMBER.fullmatch(text):
        value = float(text)
        if not JD_RANGE[0] <= value <= JD_RANGE[1]:
            raise ValueError(f"{text} is not a full Julian date between {JD_RANGE[0]} and {JD_RANGE[1]} "
                             "(years 1900 to 2200); give BJD_TDB in days, e.g. 2461041.5, or an ISO date")
        return value, None
    try:
        with warnings.catch_warnings():
            warnings.filterwarnings("ignore", message=".*dubious year", category=UserWarning)   # erfa, past its table
            utc = Time(text, format="isot" if "T" in text else "iso", scale="utc")
    except ValueError:
        raise ValueError(f"{text!r} is neither a BJD_TDB number nor an ISO date (YYYY-MM-DD or "
                         "YYYY-MM-DDThh:mm:ss, UTC)") from None
    if not JD_RANGE[0] <= utc.jd <= JD_RANGE[1]:
        raise ValueError(f"{text!r} lies outside the years 1900 to 2200")
    with offline_astropy():
        if coord is None:
            return float(utc.tdb.jd), (f"{text} taken as JD_TDB: without the star's ra and dec it cannot be "
                                       "corrected to the barycentre (at most 8.3 minutes)")
        return float(utc_to_barycentric(utc, coord, location)), None
