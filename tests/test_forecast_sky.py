"""The sky of forecast transits at a site, against geometry, astropy computed independently, and known dates.

astropy's own ``Time``, ``AltAz`` and ``get_body`` are called here directly
(with its own reading of the bundled IERS table, downloads off) as the
independent computation; the project goes through its interpolated tracks,
its fast reading of the same table and its own light-time iteration.
"""

from __future__ import annotations

import socket

import astropy.units as u
import numpy as np
import pytest
from astropy.coordinates import AltAz, EarthLocation, SkyCoord, get_body, solar_system_ephemeris
from astropy.time import Time
from astropy.utils import iers

from orbitdeck.demo_systems import demo_path
from orbitdeck.models import load_system
from orbitdeck.models.motion import sites
from orbitdeck.models.motion.earth_orientation import bundled_table, offline_astropy
from orbitdeck.models.motion.forecast import forecast_transits
from orbitdeck.models.files.system import Site, Star
from orbitdeck.models.motion.visibility import forecast_rows, nights, transit_sky

SITE = Site("test site", 35.0, -105.0, 2000.0)


@pytest.fixture
def astropy_offline():
    """astropy's defaults but no downloads, for the independent computations of the tests."""
    with iers.conf.set_temp("auto_download", False), iers.conf.set_temp("auto_max_age", None), \
            solar_system_ephemeris.set("builtin"):
        yield


@pytest.fixture
def no_network(monkeypatch):
    """Any attempt to open a network connection fails the test."""
    def refuse(*args, **kwargs):
        raise AssertionError(f"a network connection was attempted: {args}")

    monkeypatch.setattr(socket.socket, "connect", refuse)
    monkeypatch.setattr(socket, "create_connection", refuse)


def moved_star(system, forecast) -> SkyCoord:
    """The demo star carried by its proper motion from its coordinate epoch to the middle of the forecast's range,
    with astropy directly (the project moves it there once per forecast)."""
    star = system.star
    middle = Time((forecast.start + forecast.end) / 2, format="jd", scale="tdb")
    moving = SkyCoord(star.ra * u.deg, star.dec * u.deg, pm_ra_cosdec=star.pm_ra * u.mas / u.yr,
                      pm_dec=star.pm_dec * u.mas / u.yr, distance=star.distance * u.pc,
                      obstime=Time(star.coordinate_epoch, format="jyear", scale="tdb"))
    moved = moving.apply_space_motion(new_obstime=middle)
    return SkyCoord(moved.ra, moved.dec)


def demo_with_sky(start="2026-01-01", days=20.0):
    system = load_system(demo_path())
    begin = Time(start, scale="utc").tdb.jd
    forecast = forecast_transits(system, begin, begin + days)
    return system, forecast, transit_sky(forecast, system.star, SITE)


def test_altitude_at_upper_culmination_is_ninety_less_the_latitude_distance(no_network):
    # geometry: a star crosses the meridian at altitude 90 - |latitude - declination|. RA 6 h, where precession
    # leaves the declination unchanged; aberration and nutation move it by < 30 arcsec, hence 0.01 deg
    for latitude, dec in ((35.0, 12.8), (-30.0, -60.0), (52.0, 70.0)):
        star = Star(name="s", ra=90.0, dec=dec)
        site = Site("s", latitude, 10.0, 100.0)
        with offline_astropy():
            location = sites.earth_location(site)
            times = Time(2461050.5 + np.arange(0.0, 1.0, 1.0 / 1440.0), format="jd", scale="utc")
            track = sites.sky_track(sites.star_coordinate(star), location, sites.track_nodes(times.jd[0], times.jd[-1]))
            altitudes = track.altitude_deg(times)
            # ... when the local sidereal time equals the right ascension (6 h; precession since J2000 moves the
            # apparent RA by a few minutes of time at these declinations), astropy's sidereal time
            sidereal = times[int(np.argmax(altitudes))].sidereal_time("apparent", longitude=site.longitude * u.deg)
        assert altitudes.max() == pytest.approx(90.0 - abs(latitude - dec), abs=0.01)
        assert sidereal.hour == pytest.approx(6.0, abs=5.0 / 60.0)


def test_site_times_invert_astropys_barycentric_correction(astropy_offline):
    system, forecast, sky = demo_with_sky()
    star = moved_star(system, forecast)
    location = EarthLocation.from_geodetic(SITE.longitude * u.deg, SITE.latitude * u.deg, SITE.elevation * u.m)
    # independent: astropy forwards, UTC at the site -> TDB + light-travel time to the barycentre
    arrival = Time(sky.mid_utc.jd1, sky.mid_utc.jd2, format="jd", scale="utc", location=location)
    bjd = (arrival.tdb + arrival.light_travel_time(star, "barycentric")).jd
    assert np.abs(bjd - forecast.mid).max() * 86400.0 < 1e-3     # seconds
    # the barycentric correction itself is minutes, so the check would see a wrong sign or a dropped term
    assert np.abs(arrival.tdb.jd - forecast.mid).max() * 1440.0 > 1.0
    rows = forecast_rows(forecast, sky)
    assert [r["mid_utc"] for r in rows] == [f"{t}Z" for t in Time(sky.mid_utc, precision=0).isot]


def test_altitudes_agree_with_astropys_altaz(astropy_offline):
    system, forecast, sky = demo_with_sky()
    star = moved_star(system, forecast)
    location = EarthLocation.from_geodetic(SITE.longitude * u.deg, SITE.latitude * u.deg, SITE.elevation * u.m)
    for column, times in enumerate((sky.ingress_utc, sky.mid_utc, sky.egress_utc)):
        frame = AltAz(obstime=Time(times.jd1, times.jd2, format="jd", scale="utc"), location=location)
        seen = star.transform_to(frame)                   # pressure 0: no refraction, as ours
        assert np.abs(sky.altitude_deg[:, column] - seen.alt.deg).max() < 0.005
        up = seen.alt.deg > 5.0
        assert sky.airmass[up, column] == pytest.approx(seen.secz[up].value, rel=1e-3)
        assert np.isnan(sky.airmass[seen.alt.deg < -0.01, column]).all()
    frame = AltAz(obstime=Time(sky.mid_utc.jd1, sky.mid_utc.jd2, format="jd", scale="utc"), location=location)
    sun = get_body("sun", frame.obstime, location).transform_to(frame).alt.deg
    assert np.abs(sky.sun_altitude_deg - sun).max() < 0.01
    moon = get_body("moon", frame.obstime, location)
    separation = moon.separation(star.transform_to(moon.frame)).deg
    assert np.abs(sky.moon_separation_deg - separation).max() < 0.02


def test_the_suns_altitude_at_a_solstice_noon(no_network):
    # from memory: the June solstice of 2024 fell on 2024-06-20 (20:51 UTC) with the obliquity of the ecliptic
    # 23.44 deg; at local noon that day the Sun stands 90 - |latitude - 23.44| deg high (within ~0.01 deg:
    # its declination changes by < 0.001 deg in the 9 h to the solstice; no refraction here)
    for latitude, longitude in ((0.0, 0.0), (40.0, -75.0), (-33.9, 151.2)):
        site = Site("noon", latitude, longitude, 0.0)
        noon = 2460482.0 - longitude / 360.0      # JD of 2024-06-20 12:00 UTC, shifted to the local meridian
        with offline_astropy():
            times = Time(noon + np.arange(-0.1, 0.1, 1.0 / 1440.0), format="jd", scale="utc")
            sun = sites.sky_track("sun", sites.earth_location(site), sites.track_nodes(times.jd[0], times.jd[-1]))
            highest = sun.altitude_deg(times).max()
        assert highest == pytest.approx(90.0 - abs(latitude - 23.44), abs=0.03)


def test_moon_light_at_a_known_full_and_new_moon(no_network, astropy_offline):
    # from memory: total lunar eclipse of 2022-11-08 (~10:59 UTC, full Moon) and total solar eclipse of
    # 2024-04-08 (~18:17 UTC, new Moon)
    star = SkyCoord(0.0 * u.deg, 0.0 * u.deg)
    site = Site("m", 0.0, 0.0, 0.0)
    for moment, bright in (("2022-11-08T10:59:00", True), ("2024-04-08T18:17:00", False)):
        utc = Time([moment], scale="utc")
        with offline_astropy():
            location = sites.earth_location(site)
            sun = sites.sky_track("sun", location, sites.track_nodes(utc.jd[0], utc.jd[0]))
            _, lit = sites.moon_separation_and_light(utc, location, star, sun)
        assert (lit[0] > 0.995) if bright else (lit[0] < 0.005)


def test_moon_phase_angle_against_vector_geometry(astropy_offline):
    # independent: the Sun-Moon-observer angle from astropy's positions by vector algebra, against Meeus eq. 48.3
    utc = Time("2026-03-01T00:00:00", scale="utc") + np.linspace(0.0, 29.0, 30) * u.day
    location = EarthLocation.from_geodetic(0.0 * u.deg, 0.0 * u.deg, 0.0 * u.m)
    moon = get_body("moon", utc, location).cartesian.xyz.to_value(u.km)
    sun = get_body("sun", utc, location).cartesian.xyz.to_value(u.km)
    to_observer, to_sun = -moon, sun - moon
    cos_i = np.sum(to_observer * to_sun, axis=0) / np.linalg.norm(to_observer, axis=0) / np.linalg.norm(to_sun, axis=0)
    expected = np.arccos(cos_i)
    r, delta = np.linalg.norm(sun, axis=0), np.linalg.norm(moon, axis=0)
    elongation = np.arccos(np.sum(moon * sun, axis=0) / (r * delta))
    assert sites.moon_phase_angle(elongation, r, delta) == pytest.approx(expected, abs=1e-9)
    # k = (1 + cos i) / 2: full at i = 0, half at 90 deg, new at 180 deg (Meeus 1998 eq. 48.1)
    assert sites.illuminated_fraction(np.radians([0.0, 90.0, 180.0])) == pytest.approx([1.0, 0.5, 0.0], abs=1e-12)


def test_bundled_table_matches_astropys_own_reading(astropy_offline):
    # astropy's IERS_Auto reads the same bundled file (and substitutes IERS-B values where final)
    table = iers.IERS_Auto.open()
    mjd = np.array([60000.5, 60500.25, 61000.75, 61300.5, 61700.0])
    ours = bundled_table()
    assert ours.ut1_utc(mjd + 2400000.5).to_value(u.s) == pytest.approx(table.ut1_utc(mjd + 2400000.5).to_value(u.s),
                                                                         abs=2e-4)
    for a, b in zip(ours.pm_xy(mjd + 2400000.5), table.pm_xy(mjd + 2400000.5)):
        assert a.to_value(u.arcsec) == pytest.approx(b.to_value(u.arcsec), abs=2e-3)


@pytest.mark.filterwarnings("ignore:ERFA function")   # the test's own UTC of 2030, beyond the leap-second list
def test_a_forecast_with_a_site_opens_no_connection_and_says_when_tables_end(no_network):
    system = load_system(demo_path())
    start = Time("2030-06-01", scale="utc").tdb.jd
    forecast = forecast_transits(system, start, start + 10.0)
    sky = transit_sky(forecast, system.star, SITE)
    assert any("IERS" in note for note in sky.notes)
    assert any("leap second" in note for note in sky.notes)
    near = transit_sky(forecast_transits(system, 2461041.5, 2461045.5), system.star, SITE)
    assert not any("IERS" in note for note in near.notes)


def test_observable_and_partial_follow_the_conditions(no_network):
    system, forecast, sky = demo_with_sky(days=30.0)
    assert sky.observable.any() and sky.partial.any() and (~(sky.observable | sky.partial)).any()
    assert not (sky.observable & sky.partial).any()
    # every observable transit has the star high and the Sun low at ingress, mid-transit and egress
    assert (sky.altitude_deg[sky.observable] >= 30.0).all() and (sky.sun_altitude_deg[sky.observable] <= -12.0).all()
    # the same transits with no altitude limit and the Sun allowed anywhere: all observable
    from orbitdeck.models.motion.forecast import Conditions
    loose = transit_sky(forecast, system.star, SITE, Conditions(-90.0, 90.0, 1.0))
    assert loose.observable.all()


def test_nights_are_dark_and_fill_the_dark_hours(no_network, astropy_offline):
    system = load_system(demo_path())
    start = Time("2026-06-01", scale="utc").tdb.jd
    begin, end = nights(system.star, SITE, start, start + 5.0)
    assert len(begin) in (5, 6)
    hours = (end - begin)[1:-1] * 24.0
    # at 35 deg N in early June the Sun is below -12 deg for about 7.6 h (from memory: astronomical night
    # ~6.5 h, nautical ~8 h); checked against astropy's Sun at the middle of each night below
    assert ((hours > 7.0) & (hours < 8.5)).all()
    location = EarthLocation.from_geodetic(SITE.longitude * u.deg, SITE.latitude * u.deg, SITE.elevation * u.m)
    middle = Time((begin + end) / 2, format="jd", scale="tdb")
    frame = AltAz(obstime=middle, location=location)
    assert (get_body("sun", middle, location).transform_to(frame).alt.deg < -12.0).all()
    # at each edge (BJD_TDB taken back to the site's UTC) astropy's Sun stands at -12 deg
    with offline_astropy():
        edges = sites.barycentric_to_utc(np.concatenate([begin[1:], end[:-1]]),
                                         sites.star_coordinate(system.star), sites.earth_location(SITE))
    edges = Time(edges.jd1, edges.jd2, format="jd", scale="utc")
    frame = AltAz(obstime=edges, location=location)
    assert get_body("sun", edges, location).transform_to(frame).alt.deg == pytest.approx(-12.0, abs=0.05)


def test_iso_dates_become_bjd_with_astropys_correction(astropy_offline):
    star = SkyCoord(62.0 * u.deg, 12.0 * u.deg)
    value, note = sites.parse_time("2026-01-01", star)
    geocentre = EarthLocation.from_geocentric(0.0, 0.0, 0.0, unit=u.m)
    utc = Time("2026-01-01", scale="utc", location=geocentre)
    assert value == pytest.approx((utc.tdb + utc.light_travel_time(star, "barycentric")).jd, abs=1e-9)
    assert note is None
    value, note = sites.parse_time("2026-01-01T12:00:00")
    assert value == pytest.approx(Time("2026-01-01T12:00:00", scale="utc").tdb.jd, abs=1e-9) and "JD_TDB" in note
    assert sites.parse_time("2461041.5") == (2461041.5, None)
    for bad in ("61041.5", "yesterday", "2026-13-01"):
        with pytest.raises(ValueError):
            sites.parse_time(bad)


def test_observable_transits_against_astropys_altaz_over_the_whole_window(astropy_offline):
    # the stated conditions (star at or above 30 deg, Sun at or below -12 deg from ingress less 1 h to egress
    # plus 1 h) checked with astropy's own AltAz of the star and get_body Sun at 5-minute steps; transits within
    # 0.05 deg of a limit (the tracks' interpolation is good to ~15 arcsec) are left out as undecidable
    system, forecast, sky = demo_with_sky(days=30.0)
    star = moved_star(system, forecast)
    location = EarthLocation.from_geodetic(SITE.longitude * u.deg, SITE.latitude * u.deg, SITE.elevation * u.m)
    # ingress and egress at the site lie half T14 either side of mid-transit (Winn 2010 contacts; the
    # light-travel time changes by milliseconds in a few hours)
    spans = (sky.egress_utc.jd - sky.ingress_utc.jd) * 86400.0
    assert spans == pytest.approx(forecast.duration * 86400.0, abs=0.05)
    assert (sky.mid_utc.jd - sky.ingress_utc.jd) * 86400.0 == pytest.approx(forecast.duration * 43200.0, abs=0.05)
    reach = 0.5 * forecast.duration + 1.0 / 24.0
    steps = np.linspace(-1.0, 1.0, 2 * int(np.ceil(reach.max() * 1440.0 / 5.0)) + 1)
    times = Time(sky.mid_utc.jd[:, None] + reach[:, None] * steps[None, :], format="jd", scale="utc")
    frame = AltAz(obstime=times, location=location)
    star_margin = (star.transform_to(frame).alt.deg - 30.0).min(axis=1)
    sun_margin = (-12.0 - get_body("sun", times, location).transform_to(frame).alt.deg).min(axis=1)
    expected = (star_margin >= 0.0) & (sun_margin >= 0.0)
    clear = (np.abs(star_margin) > 0.05) & (np.abs(sun_margin) > 0.05)
    assert clear.sum() > 0.8 * len(forecast) and expected[clear].any() and (~expected[clear]).any()
    np.testing.assert_array_equal(sky.observable[clear], expected[clear])


def test_tracks_over_a_whole_year_agree_with_astropys_altaz(astropy_offline):
    # a year of nodes: the Earth rotation angle and the hour angles wrap round many times between them, and the
    # Sun's right ascension goes once round the sky; at random instants the interpolated altitudes stay within
    # the tracks' stated accuracy (~1 arcsec for a star, ~15 arcsec for the Sun) of astropy's own AltAz
    start = Time("2026-01-01", scale="utc").jd
    rng = np.random.default_rng(12)
    times = Time(start + np.sort(rng.uniform(0.0, 365.0, 400)), format="jd", scale="utc")
    location = EarthLocation.from_geodetic(SITE.longitude * u.deg, SITE.latitude * u.deg, SITE.elevation * u.m)
    star = SkyCoord(201.0 * u.deg, -11.0 * u.deg)
    with offline_astropy():
        nodes = sites.track_nodes(times.jd[0], times.jd[-1])
        ours_star = sites.sky_track(star, location, nodes).altitude_deg(times)
        ours_sun = sites.sky_track("sun", location, nodes).altitude_deg(times)
    frame = AltAz(obstime=times, location=location)
    assert np.abs(ours_star - star.transform_to(frame).alt.deg).max() < 0.002
    assert np.abs(ours_sun - get_body("sun", times, location).transform_to(frame).alt.deg).max() < 0.01
