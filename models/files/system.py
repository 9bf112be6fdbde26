"""Reactive inputs: the star, its planets and the modelling assumptions.

Every input is a ``param`` parameter with bounds and its unit in its doc, so
the dashboard can build widgets from it and watch it. Measured inputs keep
their nominal value in the parameter and their one-sigma spread in the
object's ``uncertainties`` dictionary (field name -> :class:`Uncertainty`);
free-text citations go in ``refs`` (field name -> str).

A :class:`System` keeps its planets ordered by period and increments its
``revision`` whenever anything inside it changes, so one watcher on
``System.param.revision`` sees every edit.

The bounds of the parameters are those within which every derived quantity,
position and sky can be computed (a period of 1e-300 d would give a zero
semi-major axis, a time of 1e308 d an infinite mean anomaly); a system holds
at most :data:`MAX_PLANETS` planets, whose names must show as themselves and
differ on screen (:mod:`orbitdeck.models.files.names`; checked when a system is
built and whenever its planet list is set, not when a name is changed later).
"""

from __future__ import annotations

from dataclasses import dataclass

import param

from .names import display_key, name_problem
from .quantity import Uncertainty

#: heat-redistribution names and the factor f of Teq = Teff sqrt(R/a) [f(1-A)]^(1/4)
REDISTRIBUTION_FACTORS = {"full": 0.25, "dayside": 0.5, "none": 2.0 / 3.0}
#: most planets a system may hold: about ten times the richest known system, and few enough that the
#: N^2 tables of pairs and skies stay small (100 planets with 4000 Monte Carlo draws: about 1 s, 0.2 GB)
MAX_PLANETS = 100
#: range of every time (system epoch, transit times, the time of positions) [BJD_TDB, d]: JD 0 is
#: 4713 BC and 1e7 d is about AD 22,700; negative values leave room for reduced (BJD - 2450000) times
TIME_BOUNDS = (-1.0e7, 1.0e7)
#: range of orbital periods [d]: 1e-3 d is 86 s, far below any planet's period
PERIOD_BOUNDS = (1.0e-3, 1.0e8)


def check_name(name: str, what: str) -> None:
    """ValueError naming ``what`` when ``name`` holds a character that does not show as itself."""
    problem = name_problem(name) if isinstance(name, str) else None
    if problem is not None:
        raise ValueError(f"{what} {name!r}: {problem}")


class PlanetList(param.List):
    """The planets of a system: at most :data:`MAX_PLANETS`, no two whose names look the same."""

    def _validate_bounds(self, value, bounds):
        if value is not None and len(value) > MAX_PLANETS:
            raise ValueError(f"a system holds at most {MAX_PLANETS} planets, not {len(value)}")
        super()._validate_bounds(value, bounds)

    def _validate(self, value):
        super()._validate(value)
        seen: dict[str, str] = {}
        for planet in value or ():
            check_name(planet.name, "planet name")
            key = display_key(planet.name)
            if key in seen:
                raise ValueError(f"the planet names {seen[key]!r} and {planet.name!r} look the same")
            seen[key] = planet.name


class _Body(param.Parameterized):
    """Shared bookkeeping of measured inputs (uncertainties and citations)."""

    #: field name -> default unit (an astropy unit string); None for unitless
    UNITS: dict = {}

    uncertainties = param.Dict(default={}, doc="field name -> Uncertainty (one sigma, same unit as the field)")
    refs = param.Dict(default={}, doc="field name -> free-text citation of the value")

    def __init__(self, **params):
        super().__init__(**params)
        # a plain copy of every value, kept current by a watcher: reading it is
        # far cheaper than a parameter lookup, which matters for large systems
        self._current = {name: getattr(self, name) for name in self.param}
        self.param.watch(self._keep_current, list(self.param))

    def _keep_current(self, *events) -> None:
        for event in events:
            self._current[event.name] = event.new

    def values_of(self, fields) -> list:
        """The current values of ``fields`` (as ``getattr``, faster)."""
        return [self._current[name] for name in fields]

    @classmethod
    def measured_fields(cls) -> list[str]:
        """Names of the numeric inputs that may carry an uncertainty."""
        return list(cls.UNITS)

    def uncertainty(self, field: str) -> Uncertainty | None:
        """The uncertainty of ``field``, or None when it is exact or unknown."""
        return self.uncertainties.get(field)

    def set_uncertainty(self, field: str, spread: Uncertainty | None) -> None:
        """Attach (or with None, remove) the uncertainty of ``field``."""
        if field not in self.UNITS:
            raise KeyError(f"{type(self).__name__} has no measured field {field!r}")
        updated = {k: v for k, v in self.uncertainties.items() if k != field}
        if spread is not None:
            updated[field] = spread
        self.uncertainties = updated


#: proper motions beyond this are refused as typing errors [mas/yr] (the fastest known star moves ~10^4)
MAX_PROPER_MOTION = 1e5
#: Julian year of the coordinates when proper motions are given without a coordinate_epoch
DEFAULT_COORDINATE_EPOCH = 2000.0
#: elevations of observing sites outside this range are refused [m]
SITE_ELEVATION_RANGE = (-500.0, 10000.0)


class Star(_Body):
    """The host star. Luminosity, magnitudes and distance are optional."""

    UNITS = {
        "mass": "Msun", "radius": "Rsun", "teff": "K", "luminosity": "Lsun",
        "j_mag": "mag", "k_mag": "mag", "distance": "pc",
    }

    name = param.String(default="star", constant=False, doc="Name of the star (visible characters)")
    mass = param.Number(default=1.0, bounds=(1e-3, 300.0), inclusive_bounds=(False, True), doc="Mass [Msun]")
    radius = param.Number(default=1.0, bounds=(1e-3, 2000.0), inclusive_bounds=(False, True), doc="Radius [Rsun]")
    teff = param.Number(default=5772.0, bounds=(0.0, 60000.0), inclusive_bounds=(False, True),
                        doc="Effective temperature [K] (any positive value: brown dwarfs and planets can be hosts)")
    luminosity = param.Number(default=None, allow_None=True, bounds=(0.0, 1e7), inclusive_bounds=(False, True),
                              doc="Bolometric luminosity [Lsun]; None: 4 pi R^2 sigma Teff^4")
    j_mag = param.Number(default=None, allow_None=True, bounds=(-5.0, 30.0), doc="Apparent J magnitude [mag], for TSM")
    k_mag = param.Number(default=None, allow_None=True, bounds=(-5.0, 30.0), doc="Apparent K magnitude [mag], for ESM")
    distance = param.Number(default=None, allow_None=True, bounds=(0.0, 1e6), inclusive_bounds=(False, True),
                            doc="Distance from the Sun [pc]")
    # the sky position, optional: needed only for forecasts seen from a site
    ra = param.Number(default=None, allow_None=True, bounds=(0.0, 360.0), inclusive_bounds=(True, False),
                      doc="Right ascension, ICRS [deg]")
    dec = param.Number(default=None, allow_None=True, bounds=(-90.0, 90.0), doc="Declination, ICRS [deg]")
    pm_ra = param.Number(default=None, allow_None=True, bounds=(-MAX_PROPER_MOTION, MAX_PROPER_MOTION),
                         doc="Proper motion in right ascension, mu_alpha cos(dec) [mas/yr]")
    pm_dec = param.Number(default=None, allow_None=True, bounds=(-MAX_PROPER_MOTION, MAX_PROPER_MOTION),
                          doc="Proper motion in declination [mas/yr]")
    coordinate_epoch = param.Number(default=None, allow_None=True, bounds=(1000.0, 3000.0),
                                    doc=f"Epoch of ra and dec when proper motions are given [Julian year]; "
                                        f"None: J{DEFAULT_COORDINATE_EPOCH:.1f}")

    #: the sky-position fields (plain numbers, no uncertainty)
    POSITION_FIELDS = ("ra", "dec", "pm_ra", "pm_dec", "coordinate_epoch")

    @property
    def has_position(self) -> bool:
        """True when the star's right ascension and declination are known."""
        return self.ra is not None and self.dec is not None


class Planet(_Body):
    """One planet, named by its letter as the trade does ("b", "c", ...)."""

    UNITS = {
        "period": "d", "radius": "Rearth", "mass": "Mearth", "eccentricity": None,
        "inclination": "deg", "omega": "deg", "transit_time": "d", "tidal_q": None,
    }

    name = param.String(default="b", constant=False, doc="Planet name, usually its letter (visible characters)")
    period = param.Number(default=10.0, bounds=PERIOD_BOUNDS, doc="Orbital period [d]")
    radius = param.Number(default=1.0, bounds=(0.0, 1000.0), inclusive_bounds=(False, True), doc="Radius [Rearth]")
    mass = param.Number(default=None, allow_None=True, bounds=(0.0, 1e5), inclusive_bounds=(False, True),
                        doc="Mass [Mearth]; None: estimated from the radius (Chen & Kipping 2017)")
    eccentricity = param.Number(default=0.0, bounds=(0.0, 1.0), inclusive_bounds=(True, False), doc="Eccentricity e, 0 <= e < 1")
    inclination = param.Number(default=90.0, bounds=(0.0, 180.0), doc="Orbital inclination to the sky plane [deg]")
    omega = param.Number(default=90.0, bounds=(-360.0, 360.0), doc="Argument of periastron [deg]")
    transit_time = param.Number(default=None, allow_None=True, bounds=TIME_BOUNDS, doc="A mid-transit time [BJD_TDB, d]")
    tidal_q = param.Number(default=None, allow_None=True, bounds=(0.0, 1e12), inclusive_bounds=(False, True),
                           doc="Modified tidal quality factor Q' of this planet; None: the assumption's")


class Assumptions(_Body):
    """Modelling assumptions that derived temperatures, interiors, atmospheres and TTVs depend on."""

    UNITS = {"bond_albedo": None, "tidal_q": None, "mean_molecular_weight": None, "eclipse_wavelength_um": "um",
             "xuv_flux": None, "escape_efficiency": None}

    bond_albedo = param.Number(default=0.3, bounds=(0.0, 1.0), inclusive_bounds=(True, False), doc="Bond albedo A, 0 <= A < 1")
    # Q' = 100 is a common choice for rocky bodies (common practice, not a measurement)
    tidal_q = param.Number(default=100.0, bounds=(0.0, 1e12), inclusive_bounds=(False, True),
                           doc="Modified tidal quality factor Q' = 3 Q / (2 k2) of every planet without its own")
    mean_molecular_weight = param.Number(default=2.3, bounds=(0.0, 1000.0), inclusive_bounds=(False, True),
                                         doc="Mean molecular weight of the atmospheres [u] (2.3: H2/He, solar)")
    eclipse_wavelength_um = param.Number(default=15.0, bounds=(0.0, 1e4), inclusive_bounds=(False, True),
                                         doc="Wavelength of the secondary-eclipse depth [um]")
    xuv_flux = param.Number(default=1e-4, bounds=(0.0, 1.0), doc="XUV (X-ray + extreme-UV) flux at each planet "
                            "as a fraction of the bolometric flux there, L_XUV / L_bol of the star")
    escape_efficiency = param.Number(default=0.1, bounds=(0.0, 1.0), inclusive_bounds=(False, True),
                                     doc="Heating efficiency of energy-limited escape, 0 < epsilon <= 1")
    heat_redistribution = param.Selector(default="full", objects=list(REDISTRIBUTION_FACTORS),
                                         doc="full: f=1/4; dayside: f=1/2; none: f=2/3")
    free_eccentricity_amplitude = param.Number(
        default=0.0, bounds=(0.0, 1.0), inclusive_bounds=(True, False),
        doc="|Z_free|, the free-eccentricity combination f z_free + g z'_free of the TTV amplitudes "
            "(Lithwick, Xie & Wu 2012), 0 <= |Z_free| < 1")
    free_eccentricity_angle = param.Number(default=0.0, bounds=(-360.0, 360.0),
                                           doc="arg Z_free, the angle of the free eccentricity [deg]")

    @property
    def redistribution_factor(self) -> float:
        """The factor f of the equilibrium-temperature formula."""
        return REDISTRIBUTION_FACTORS[self.heat_redistribution]


@dataclass(frozen=True)
class Site:
    """An observing site on the Earth.

    ``latitude`` and ``longitude`` are geodetic [deg], longitude positive to
    the east; ``elevation`` is the height [m] (above the WGS84 ellipsoid,
    for which a height above sea level serves: the tens of metres between
    the two change no altitude noticeably).
    """

    name: str
    latitude: float
    longitude: float
    elevation: float = 0.0

    def problems(self) -> list[tuple[str, str]]:
        """(field, reason) for every coordinate out of range; empty when the site is valid."""
        found = []
        checks = (("latitude", self.latitude, -90.0, 90.0, "deg"), ("longitude", self.longitude, -180.0, 360.0, "deg"),
                  ("elevation", self.elevation, *SITE_ELEVATION_RANGE, "m"))
        for field, value, low, high, unit in checks:
            if not (isinstance(value, (int, float)) and not isinstance(value, bool)):
                found.append((field, f"must be a number, not {type(value).__name__}"))
            elif not low <= value <= high:
                found.append((field, f"must be between {low:g} and {high:g} {unit}, not {value:g}"))
        return found


class System(param.Parameterized):
    """A star, its planets ordered by period, and the assumptions in force."""

    name = param.String(default="unnamed system", constant=False, doc="Name of the system (visible characters)")
    notes = param.String(default="", doc="Free-text notes")
    epoch = param.Number(default=2461000.0, bounds=TIME_BOUNDS, doc="Default time for positions and skies [BJD_TDB, d]")
    star = param.ClassSelector(class_=Star, instantiate=False, doc="The host star")
    assumptions = param.ClassSelector(class_=Assumptions, instantiate=False, doc="Albedo and heat redistribution")
    planets = PlanetList(default=[], item_type=Planet, instantiate=True,
                         doc=f"Planets, kept ordered by period (at most {MAX_PLANETS}, names that look different)")
    sites = param.List(default=[], item_type=Site, instantiate=True, doc="Observing sites named in the file")
    revision = param.Integer(default=0, doc="Incremented on every change to anything in the system")

    def __init__(self, **params):
        params.setdefault("star", Star())
        params.setdefault("assumptions", Assumptions())
        super().__init__(**params)
        check_name(self.name, "system name")
        check_name(self.star.name, "star name")
        self._item_watchers: list = []
        self.param.watch(self._on_own_change, ["name", "notes", "epoch", "star", "assumptions", "planets", "sites"])
        self._sort_planets()
        self._watch_items()

    # -- bookkeeping -------------------------------------------------------
    def _sort_planets(self) -> bool:
        """Re-sort the planets by period; True when the order changed (which counts as a revision)."""
        ordered = sorted(self.planets, key=lambda p: p.period)
        if ordered != list(self.planets):
            self.planets = ordered
            return True
        return False

    def _watch_items(self) -> None:
        for obj, watcher in self._item_watchers:
            obj.param.unwatch(watcher)
        self._item_watchers = []
        for obj in [self.star, self.assumptions, *self.planets]:
            self._item_watchers.append((obj, obj.param.watch(self._on_item_change, list(obj.param))))

    def _on_item_change(self, *events) -> None:
        if any(e.name == "period" for e in events) and self._sort_planets():
            return  # the re-sort already counted this change
        self.revision += 1

    def _on_own_change(self, *events) -> None:
        if any(e.name in ("planets", "star", "assumptions") for e in events):
            self._sort_planets()
            self._watch_items()
        self.revision += 1

    # -- conveniences ------------------------------------------------------
    @property
    def planet_names(self) -> list[str]:
        """Planet names in period order."""
        return [p.name for p in self.planets]

    def planet(self, name: str) -> Planet:
        """The planet called ``name``."""
        for p in self.planets:
            if p.name == name:
                return p
        raise KeyError(f"no planet named {name!r} in {self.name!r}")

    def add_planet(self, planet: Planet) -> None:
        """Add a planet (the list is re-sorted by period); ValueError when its name looks like another's
        or the system holds :data:`MAX_PLANETS` planets already."""
        twins = [name for name in self.planet_names if display_key(name) == display_key(planet.name)]
        if twins:
            raise ValueError(f"a planet named {twins[0]!r} already exists"
                             + ("" if twins[0] == planet.name else f" (it looks the same as {planet.name!r})"))
        self.planets = [*self.planets, planet]

    def remove_planet(self, name: str) -> None:
        """Remove the planet called ``name``."""
        self.planet(name)
        self.planets = [p for p in self.planets if p.name != name]

    def copy(self) -> "System":
        """An independent deep copy (new param objects, same values)."""
        def clone(obj):
            return type(obj)(**{n: getattr(obj, n) for n in obj.param})

        return System(name=self.name, notes=self.notes, epoch=self.epoch, star=clone(self.star),
                      assumptions=clone(self.assumptions), planets=[clone(p) for p in self.planets],
                      sites=list(self.sites))

    def site(self, name: str) -> Site:
        """The site called ``name`` (sites are named in the file's ``[[sites]]``)."""
        for site in self.sites:
            if site.name == name:
                return site
        raise KeyError(f"no site named {name!r} in {self.name!r}")
