"""Reactive inputs: the star, its planets and the modelling assumptions.

Every input is a ``param`` parameter with bounds and its unit in its doc, so
the dashboard can build widgets from it and watch it. Measured inputs keep
their nominal value in the parameter and their one-sigma spread in the
object's ``uncertainties`` dictionary (field name -> :class:`Uncertainty`);
free-text citations go in ``refs`` (field name -> str).

A :class:`System` keeps its planets ordered by period and increments its
``revision`` whenever anything inside it changes, so one watcher on
``System.param.revision`` sees every edit.
"""

from __future__ import annotations

import param

from .quantity import Uncertainty

#: heat-redistribution names and the factor f of Teq = Teff sqrt(R/a) [f(1-A)]^(1/4)
REDISTRIBUTION_FACTORS = {"full": 0.25, "dayside": 0.5, "none": 2.0 / 3.0}


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


class Star(_Body):
    """The host star. Luminosity, magnitudes and distance are optional."""

    UNITS = {
        "mass": "Msun", "radius": "Rsun", "teff": "K", "luminosity": "Lsun",
        "j_mag": "mag", "k_mag": "mag", "distance": "pc",
    }

    name = param.String(default="star", constant=False, doc="Name of the star (free text)")
    mass = param.Number(default=1.0, bounds=(1e-3, 300.0), inclusive_bounds=(False, True), doc="Mass [Msun]")
    radius = param.Number(default=1.0, bounds=(1e-3, 2000.0), inclusive_bounds=(False, True), doc="Radius [Rsun]")
    teff = param.Number(default=5772.0, bounds=(500.0, 60000.0), doc="Effective temperature [K]")
    luminosity = param.Number(default=None, allow_None=True, bounds=(0.0, 1e7), inclusive_bounds=(False, True),
                              doc="Bolometric luminosity [Lsun]; None: 4 pi R^2 sigma Teff^4")
    j_mag = param.Number(default=None, allow_None=True, bounds=(-5.0, 30.0), doc="Apparent J magnitude [mag], for TSM")
    k_mag = param.Number(default=None, allow_None=True, bounds=(-5.0, 30.0), doc="Apparent K magnitude [mag], for ESM")
    distance = param.Number(default=None, allow_None=True, bounds=(0.0, 1e6), inclusive_bounds=(False, True),
                            doc="Distance from the Sun [pc]")


class Planet(_Body):
    """One planet, named by its letter as the trade does ("b", "c", ...)."""

    UNITS = {
        "period": "d", "radius": "Rearth", "mass": "Mearth", "eccentricity": None,
        "inclination": "deg", "omega": "deg", "transit_time": "d",
    }

    name = param.String(default="b", constant=False, doc="Planet name, usually its letter")
    period = param.Number(default=10.0, bounds=(0.0, 1e8), inclusive_bounds=(False, True), doc="Orbital period [d]")
    radius = param.Number(default=1.0, bounds=(0.0, 1000.0), inclusive_bounds=(False, True), doc="Radius [Rearth]")
    mass = param.Number(default=None, allow_None=True, bounds=(0.0, 1e5), inclusive_bounds=(False, True),
                        doc="Mass [Mearth]; None: estimated from the radius (Chen & Kipping 2017)")
    eccentricity = param.Number(default=0.0, bounds=(0.0, 1.0), inclusive_bounds=(True, False), doc="Eccentricity e, 0 <= e < 1")
    inclination = param.Number(default=90.0, bounds=(0.0, 180.0), doc="Orbital inclination to the sky plane [deg]")
    omega = param.Number(default=90.0, bounds=(-360.0, 360.0), doc="Argument of periastron [deg]")
    transit_time = param.Number(default=None, allow_None=True, doc="A mid-transit time [BJD_TDB, d]")


class Assumptions(_Body):
    """Modelling assumptions: albedo and heat redistribution (temperatures), free eccentricity (TTVs)."""

    UNITS = {"bond_albedo": None}

    bond_albedo = param.Number(default=0.3, bounds=(0.0, 1.0), inclusive_bounds=(True, False), doc="Bond albedo A, 0 <= A < 1")
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


class System(param.Parameterized):
    """A star, its planets ordered by period, and the assumptions in force."""

    name = param.String(default="unnamed system", constant=False, doc="Name of the system (free text)")
    notes = param.String(default="", doc="Free-text notes")
    epoch = param.Number(default=2461000.0, doc="Default time for positions and skies [BJD_TDB, d]")
    star = param.ClassSelector(class_=Star, instantiate=False, doc="The host star")
    assumptions = param.ClassSelector(class_=Assumptions, instantiate=False, doc="Albedo and heat redistribution")
    planets = param.List(default=[], item_type=Planet, instantiate=True, doc="Planets, kept ordered by period")
    revision = param.Integer(default=0, doc="Incremented on every change to anything in the system")

    def __init__(self, **params):
        params.setdefault("star", Star())
        params.setdefault("assumptions", Assumptions())
        super().__init__(**params)
        self._item_watchers: list = []
        self.param.watch(self._on_own_change, ["name", "notes", "epoch", "star", "assumptions", "planets"])
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
        """Add a planet (the list is re-sorted by period)."""
        if planet.name in self.planet_names:
            raise ValueError(f"a planet named {planet.name!r} already exists")
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
                      assumptions=clone(self.assumptions), planets=[clone(p) for p in self.planets])
