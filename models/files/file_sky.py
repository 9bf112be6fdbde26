"""Reading the star's sky position and the observing sites of a system file.

Part of the system-file checker (:mod:`orbitdeck.models.files.system_file`): ``[star]``
``ra`` and ``dec`` as degrees or sexagesimal strings, optional proper
motions and their epoch, and the optional ``[[sites]]`` array. Every
problem names its field, as everywhere in the format.
"""

from __future__ import annotations

import json
import re

from .system import Site, Star

_SITE_KEYS = {"name", "latitude", "longitude", "elevation"}
#: sexagesimal angles: sign, then two or three fields separated by colons or spaces ("hh:mm:ss.s", "+dd:mm:ss")
_SEXAGESIMAL = re.compile(r"\s*([+-]?)(\d+)[:\s]+(\d+(?:\.\d*)?)(?:[:\s]+(\d+(?:\.\d*)?))?\s*")


def _join(path: str, key: str) -> str:
    if not re.fullmatch(r"[A-Za-z0-9_-]+", key):
        key = json.dumps(key)
    return f"{path}.{key}" if path else key


def _kind(value) -> str:
    return {bool: "a boolean", str: "a string", dict: "a table", list: "an array",
            int: "an integer", float: "a number"}.get(type(value), type(value).__name__)


class SkyFields:
    """Checker methods for the sky position and the sites (mixed into the file checker, which
    provides ``fail``, ``number``, ``text``, ``table`` and ``in_bounds``)."""

    def position(self, raw: dict, path: str) -> dict:
        """The star's sky position fields (ra, dec in degrees; proper motions; their epoch)."""
        values = {}
        for key, unit_hours in (("ra", True), ("dec", False)):
            if key in raw:
                angle = self.angle(raw[key], _join(path, key), unit_hours)
                if angle is not None and self.in_bounds(Star.param[key], angle, _join(path, key), "deg"):
                    values[key] = angle
        for key, unit in (("pm_ra", "mas/yr"), ("pm_dec", "mas/yr"), ("coordinate_epoch", "Julian year")):
            if key in raw:
                number = self.number(raw[key], _join(path, key))
                if number is not None and self.in_bounds(Star.param[key], number, _join(path, key), unit):
                    values[key] = number
        for given, needed in (("ra", "dec"), ("dec", "ra"), ("pm_ra", "pm_dec"), ("pm_dec", "pm_ra")):
            if given in raw and needed not in raw:
                self.fail(_join(path, needed), f"is required when {given} is given")
        for key in ("pm_ra", "pm_dec", "coordinate_epoch"):
            if key in raw and not ("ra" in raw and "dec" in raw):
                self.fail(_join(path, key), "needs the star's ra and dec")
        return values

    def angle(self, raw, path: str, hours: bool) -> float | None:
        """An angle in degrees from a number of degrees or a sexagesimal string (hours when ``hours``)."""
        if not isinstance(raw, str):
            return self.number(raw, path)
        form = "'hh:mm:ss.s' (hours)" if hours else "'+dd:mm:ss.s' (degrees)"
        match = _SEXAGESIMAL.fullmatch(raw)
        if match is None:
            self.fail(path, f"{raw!r} is not a number of degrees nor a sexagesimal angle {form}")
            return None
        sign, whole, minutes, seconds = match.groups()
        minutes, seconds = float(minutes), float(seconds or 0.0)
        if minutes >= 60.0 or seconds >= 60.0:
            self.fail(path, f"{raw!r}: minutes and seconds must be below 60")
            return None
        value = int(whole) + minutes / 60.0 + seconds / 3600.0
        if hours:
            if sign == "-" or value >= 24.0:
                self.fail(path, f"{raw!r}: a right ascension lies from 00:00:00 up to (not including) 24:00:00")
                return None
            return value * 15.0
        return -value if sign == "-" else value

    def site(self, raw, path: str) -> Site | None:
        """One entry of the ``[[sites]]`` array."""
        if self.table(raw, path, _SITE_KEYS, ("name", "latitude", "longitude")) is None:
            return None
        before = len(self.problems)
        name = self.text(raw, path, "name", required=True)
        numbers = {key: self.number(raw[key], _join(path, key)) for key in ("latitude", "longitude", "elevation")
                   if key in raw}
        if None in numbers.values() or not {"latitude", "longitude"} <= set(numbers):
            return None
        site = Site(name=name or "", **numbers)
        for key, reason in site.problems():
            self.fail(_join(path, key), reason)
        return None if len(self.problems) > before else site

    def sites(self, raw) -> list[Site]:
        if not isinstance(raw, list):
            self.fail("sites", f"must be an array of tables ([[sites]]), not {_kind(raw)}")
            return []
        sites, seen = [], {}
        for i, entry in enumerate(raw):
            site = self.site(entry, f"sites[{i}]")
            if site is None:
                continue
            if site.name in seen:
                self.fail(f"sites[{i}].name", f"duplicate site name {site.name!r} (also sites[{seen[site.name]}])")
                continue
            seen[site.name] = i
            sites.append(site)
        return sites
