"""Initial conditions of every Monte Carlo draw of a system, for the N-body ensembles.

Each draw's star mass, planet periods, masses, eccentricities, inclinations
and arguments of periastron come from one call of
:func:`orbitdeck.models.engine.draws.sampled_inputs` (one seeded generator);
a planet without a measured mass gets the Chen & Kipping (2017) mass of its
drawn radius (:func:`orbitdeck.models.physics.composition.mass_from_radius`), an
estimate. The elements are taken as Jacobi osculating elements at the
system epoch, each planet's Kepler problem about the interior mass
G (m_0 + ... + m_i), with the mean anomaly from the nominal transit time
(transit at omega + f = 90 deg, observer on +Z, Winn 2010) and the node of
every orbit on the sky-plane X axis, so that orbits are coplanar unless
their inclinations differ (mutual inclination = difference of
inclinations). Jacobi and heliocentric phases differ by about m / M*, a
shift of the initial transit of about (m / M*) P / (2 pi), below a second
for Earth-mass planets of M dwarfs. Transit-time uncertainties are not
sampled.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..physics.composition import mass_from_radius
from ..physics.dynamics import mutual_hill_radius
from ..constants import EARTH_TO_SUN_MASS, GM_SUN_AU3_D2
from ..motion.kepler import TWO_PI
from ..engine.draws import sampled_inputs
from .chunk import ChunkSetup, Settings
from .integrator import PairLayout
from .jacobi import Masses, cartesian_from_elements, mean_anomaly_from_transit, semi_major_axis

#: extra transit slots per planet beyond the count at its drawn period
_SLOT_MARGIN = 1.1
_SLOT_SPARE = 3


@dataclass
class Ensemble:
    """Initial conditions of all draws: arrays shaped (planets, draws), vectors (3, planets, draws).

    Attributes
    ----------
    names : tuple of str
    epoch : float
        BJD_TDB of the initial conditions [d].
    masses : Masses
    period, a : ndarray
        Drawn periods [d] and Jacobi semi-major axes [au].
    xj, vj : ndarray
        Jacobi positions [au] and velocities [au/d] at the epoch.
    inner_period : ndarray, shape (draws,)
        Shortest period of each draw [d]; the step is a fixed fraction of it.
    mass_estimated : ndarray of bool, shape (planets,)
        Planets whose masses come from their radii.
    shadow_direction : ndarray, shape (2, 3, planets, draws)
        Direction of each shadow trajectory's offset.
    warnings : tuple of str
    """

    names: tuple
    epoch: float
    masses: Masses
    period: np.ndarray
    a: np.ndarray
    xj: np.ndarray
    vj: np.ndarray
    inner_period: np.ndarray
    mass_estimated: np.ndarray
    shadow_direction: np.ndarray
    warnings: tuple

    @property
    def draws(self) -> int:
        return self.period.shape[1]


def draw_ensemble(system, draws: int, seed: int | None) -> Ensemble:
    """Every draw's initial conditions (see the module docstring), from one seeded generator.

    Parameters
    ----------
    system : orbitdeck.models.files.system.System
        The system; it needs at least one planet.
    draws : int
        Number of Monte Carlo draws (>= 1).
    seed : int or None
        Seed of the generator; the same seed gives the same draws.
    """
    planets = list(system.planets)
    if not planets:
        raise ValueError("the system has no planets to integrate")
    inputs = sampled_inputs(system, draws, seed)

    def column(values) -> np.ndarray:
        """A (samples, bodies) input as a double-precision (bodies, draws) array."""
        return np.ascontiguousarray(np.broadcast_to(np.asarray(values, dtype=np.float64),
                                                    (draws, np.shape(values)[1])).T)

    mass_estimated = np.array([p.mass is None for p in planets])
    radius, mass = column(inputs.radius), column(inputs.mass)
    mass_mearth = np.where(np.isnan(mass), mass_from_radius(radius), mass)
    gm_star = GM_SUN_AU3_D2 * column(inputs.star_mass)                    # (1, draws)
    gm = GM_SUN_AU3_D2 * EARTH_TO_SUN_MASS * mass_mearth                  # (planets, draws)
    masses = Masses.of(gm_star, gm)
    period = column(inputs.period)
    e = column(inputs.eccentricity)
    inclination = np.deg2rad(column(inputs.inclination))
    omega = np.deg2rad(column(inputs.omega))
    transit = np.array([system.epoch if p.transit_time is None else p.transit_time for p in planets])[:, None]
    warnings = tuple(f"planet {p.name!r} has no transit_time: its orbital phase at the epoch is arbitrary "
                     "(the epoch is taken as a mid-transit time)" for p in planets if p.transit_time is None)
    warnings += tuple(f"planet {p.name!r} has no measured mass: its mass is estimated from its radius "
                      "(Chen & Kipping 2017)" for p in planets if p.mass is None)
    interior = masses.interior
    a = semi_major_axis(interior, period)
    mean_anomaly = mean_anomaly_from_transit(period, e, omega, transit, system.epoch)
    xj, vj = cartesian_from_elements(interior, a, e, inclination, omega, mean_anomaly)
    direction_rng = np.random.default_rng(None if seed is None else [seed, 0x5AD0])
    shadow_direction = direction_rng.standard_normal((2, 3, len(planets), draws))
    return Ensemble(names=tuple(p.name for p in planets), epoch=float(system.epoch), masses=masses,
                    period=period, a=a, xj=np.ascontiguousarray(xj), vj=np.ascontiguousarray(vj),
                    inner_period=period.min(axis=0), mass_estimated=mass_estimated,
                    shadow_direction=shadow_direction, warnings=warnings)


def transit_capacity(ensemble: Ensemble, orbits: int) -> np.ndarray:
    """Transit slots per planet: its transits in ``orbits`` orbits of the innermost planet, with a margin."""
    most = (ensemble.inner_period / ensemble.period).max(axis=1)
    return (np.ceil(orbits * most * _SLOT_MARGIN) + _SLOT_SPARE).astype(np.int64)


def chunk_setup(ensemble: Ensemble, draws, settings: Settings, capacity) -> ChunkSetup:
    """The constants of the chunk holding ``draws`` (indices into the ensemble)."""
    masses = ensemble.masses.take(draws)
    a = ensemble.a[:, draws]
    pairs = PairLayout(a.shape[0])
    gm_star = masses.gm_star[0]
    # every pair (i, partner) of the offset layout, (pair rows, planets, draws)
    hill = mutual_hill_radius(a[None], a[pairs.partner], masses.gm[None], masses.gm[pairs.partner], gm_star)
    encounter = settings.hill_multiple * hill
    ejection = settings.ejection_multiple * a.max(axis=0)
    return ChunkSetup(
        masses=masses, step=ensemble.inner_period[draws] / settings.steps_per_orbit,
        encounter_r2=encounter * encounter, ejection_r2=ejection * ejection,
        scale_position=a, scale_velocity=TWO_PI * a / ensemble.period[:, draws], capacity=np.asarray(capacity))
