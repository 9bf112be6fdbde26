"""Shared fixtures: a Solar-System-like reference system and a small system builder.

Planetary values are NASA planetary fact-sheet values (from memory: sidereal
periods Venus 224.701 d, Earth 365.256 d, Jupiter 4332.589 d; Venus mean
radius 6051.8 km and mass 4.8673e24 kg); the Sun, Earth and Jupiter radii and
masses are astropy's IAU 2015 nominal constants.
"""

import astropy.constants as const
import astropy.units as u
import pytest

from orbitdeck.models import Assumptions, Planet, Star, System

#: Venus, Earth and Jupiter in the units of a system file (d, Rearth, Mearth)
VENUS = dict(name="venus", period=224.701, radius=float(6051.8 * u.km / const.R_earth),
             mass=float(4.8673e24 * u.kg / const.M_earth))
EARTH = dict(name="earth", period=365.256, radius=1.0, mass=1.0)
JUPITER = dict(name="jupiter", period=4332.589, radius=float(const.R_jup / const.R_earth),
               mass=float(const.M_jup / const.M_earth))
#: the Sun at its IAU 2015 nominal values (Resolution B3: Teff 5772 K)
SUN = dict(name="sun", mass=1.0, radius=1.0, teff=5772.0)


def build_system(planets, star=None, bond_albedo=0.3, heat_redistribution="full", name="test system"):
    """A System from plain dictionaries of Star and Planet parameters."""
    return System(name=name, star=Star(**(star or SUN)),
                  assumptions=Assumptions(bond_albedo=bond_albedo, heat_redistribution=heat_redistribution),
                  planets=[Planet(**p) for p in planets])


@pytest.fixture
def make_system():
    """The :func:`build_system` factory."""
    return build_system


@pytest.fixture
def solar_system():
    """Sun, Venus, Earth and Jupiter on circular, edge-on orbits; Earth's Bond albedo 0.306."""
    return build_system([VENUS, EARTH, JUPITER], bond_albedo=0.306, name="Solar System (reference)")


def row(table, name, key="name"):
    """The row of a to_dict() table whose ``key`` is ``name``."""
    matches = [r for r in table if r[key] == name]
    assert len(matches) == 1, f"expected one row with {key} == {name!r}"
    return matches[0]


@pytest.fixture
def row_of():
    """The :func:`row` helper."""
    return row


@pytest.fixture(scope="module")
def cli():
    """The ``orbitdeck`` command, each call run in a forked child (see :class:`cli_harness.ForkedCli`), for one
    module."""
    from cli_harness import ForkedCli

    with ForkedCli() as runner:
        yield runner


@pytest.fixture(scope="module")
def browser():
    """Headless Chromium shared by the browser tests of one module."""
    from browser_support import chromium

    with chromium() as b:
        yield b


@pytest.fixture(scope="module")
def demo_url(tmp_path_factory):
    """URL of ``orbitdeck serve`` on the default demo, run in a subprocess for one module."""
    from browser_support import served

    with served(tmp_path_factory.mktemp("serve")) as url:
        yield url
