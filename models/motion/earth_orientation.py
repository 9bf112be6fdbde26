"""astropy without downloads: the bundled Earth-orientation table, leap seconds and ephemeris.

Altitudes and site times need UT1 - UTC and polar motion (the IERS tables)
and leap seconds. astropy would fetch fresh tables from the network when
its bundled ones look old; :func:`offline_astropy` forbids that for the
duration of a ``with`` block (no process-wide setting is changed), and
:func:`coverage_notes` says in words when a time lies beyond the bundled
tables, where the last values are held.

astropy reads its bundled IERS-A file (some 20 000 daily rows, Bulletin A
with a year of predictions, package ``astropy-iers-data``) with a general
table reader, which takes over a second here. :func:`bundled_table` reads
the same file's Bulletin A columns (UT1 - UTC and polar motion, the byte
positions of its ReadMe) into an astropy ``IERS`` table in a few tens of
milliseconds, once per process; the table is never changed afterwards.
"""

from __future__ import annotations

import warnings
from contextlib import ExitStack, contextmanager
from functools import lru_cache
from pathlib import Path

import astropy.units as u
import numpy as np
from astropy.coordinates import solar_system_ephemeris
from astropy.time import Time
from astropy.utils import iers
from astropy.utils.exceptions import AstropyWarning

#: byte ranges (0-based, end excluded) of the Bulletin A columns in finals2000A.all (its ReadMe:
#: MJD bytes 8-15, PM-x 19-27 and PM-y 38-46 [arcsec], UT1-UTC 59-68 [s])
_MJD, _PM_X, _PM_Y, _UT1_UTC = slice(7, 15), slice(18, 27), slice(37, 46), slice(58, 68)


@lru_cache(maxsize=1)
def bundled_table() -> iers.IERS:
    """The bundled IERS-A values (MJD, UT1_UTC, PM_x, PM_y) as an astropy ``IERS`` table, read once."""
    from astropy_iers_data import IERS_A_FILE

    rows = [line for line in Path(IERS_A_FILE).read_text().splitlines()
            if len(line) >= _UT1_UTC.stop and line[_PM_X].strip() and line[_PM_Y].strip() and line[_UT1_UTC].strip()]
    columns = np.array([[float(line[part]) for part in (_MJD, _PM_X, _PM_Y, _UT1_UTC)] for line in rows])
    return iers.IERS({"MJD": columns[:, 0] * u.d, "PM_x": columns[:, 1] * u.arcsec, "PM_y": columns[:, 2] * u.arcsec,
                      "UT1_UTC": columns[:, 3] * u.s})


@contextmanager
def offline_astropy():
    """Run astropy without any download, for the duration of the ``with`` block only.

    The Earth-orientation table is :func:`bundled_table` (held at its last
    values beyond its end), IERS auto-download is off (which also keeps the
    leap seconds to the bundled list), the Sun, Moon and planets come from
    astropy's built-in ephemeris, and astropy's warnings about times beyond
    those tables are silenced: :func:`coverage_notes` reports them once, in
    words.
    """
    with ExitStack() as stack:
        stack.enter_context(iers.conf.set_temp("auto_download", False))
        stack.enter_context(iers.conf.set_temp("auto_max_age", None))
        stack.enter_context(iers.conf.set_temp("iers_degraded_accuracy", "ignore"))
        stack.enter_context(iers.earth_orientation_table.set(bundled_table()))
        stack.enter_context(solar_system_ephemeris.set("builtin"))
        stack.enter_context(warnings.catch_warnings())
        warnings.filterwarnings("ignore", message=".*dubious year", category=UserWarning)   # erfa's, on years past its leap-second table
        warnings.filterwarnings("ignore", message=".*distance overridden", category=UserWarning)
        warnings.filterwarnings("ignore", message="Tried to get polar motions", category=AstropyWarning)
        warnings.filterwarnings("ignore", message=".*leap-second", category=AstropyWarning)
        yield


def coverage_notes(utc: Time) -> list[str]:
    """Sentences for times beyond the bundled IERS table or leap-second list (call inside :func:`offline_astropy`)."""
    if utc.size == 0:
        return []
    jd = utc.jd
    mjd = bundled_table()["MJD"].to_value(u.d)
    first, last = Time(mjd[0], format="mjd", scale="utc"), Time(mjd[-1], format="mjd", scale="utc")
    notes = []
    if jd.max() > last.jd or jd.min() < first.jd:
        notes.append(f"some times lie outside the bundled IERS Earth-orientation table ({first.iso[:10]} to "
                     f"{last.iso[:10]}): UT1-UTC and polar motion are held at their last values there, so "
                     "altitudes may be off by up to about an arcminute")
    expires = iers.LeapSeconds.auto_open().expires
    if jd.max() > expires.jd:
        notes.append(f"UTC after {expires.iso[:10]} (the end of the bundled leap-second list) assumes no further "
                     "leap second: each one added later would shift those UTC times by a second")
    return notes
