"""A chunk of draws integrated block by block, with its stopping rules, transits and chaos indicator.

A block is one orbit of the innermost planet (``steps_per_orbit`` steps).
Each step checks close encounters and transits; each block ends with the
positions and velocities synchronised, and there the energy and ejection
checks, the chaos indicator and the transit refinement are done and the
draws that stopped are dropped from the arrays. Blocks sit at fixed step
numbers, so how the blocks are grouped into tasks changes nothing.

Stopping rules (a draw's integration ends, as unstable, at the first of):
* close encounter: two planets closer than ``hill_multiple`` times their
  mutual Hill radius at the initial semi-major axes,
  R_H = ((m_i + m_j) / (3 M*))^(1/3) (a_i + a_j) / 2 (Chambers, Wetherill &
  Boss 1996, Icarus 119, 261, eq. 1), checked at every step;
* ejection: a planet farther from the star than ``ejection_multiple`` times
  the initial semi-major axis of the outermost planet, checked per block;
* energy: relative error of the total energy above ``energy_threshold`` (or
  not a number), checked per block: the fixed step no longer follows the
  motion.

Chaos indicator: MEGNO (Cincotta & Simo 2000, A&AS 147, 205),
Y(t) = (2/t) integral_0^t s (d ln delta / ds) ds and its running mean
<Y>(t) = (1/t) integral_0^t Y ds, from a shadow trajectory started
``shadow_offset`` away in phase space (positions in units of a_i,
velocities in units of n_i a_i) and brought back to that distance after
every block (Benettin et al. 1980, Meccanica 15, 9), the finite-difference
stand-in for the variational equations. <Y> tends to 2 for quasi-periodic
motion and grows like lambda t / 2 for chaotic motion (lambda the largest
Lyapunov exponent, per orbit of the innermost planet here).
"""

from __future__ import annotations

import threading
from dataclasses import dataclass, field

import numpy as np

from .integrator import WisdomHolman
from .jacobi import Masses, folded_sum, heliocentric_from_jacobi
from .transits import crossings, refine_transit_times

#: outcome codes of a draw
RUNNING, SURVIVED, CLOSE_ENCOUNTER, EJECTION, ENERGY_ERROR = -1, 0, 1, 2, 3
OUTCOME_NAMES = {SURVIVED: "survived", CLOSE_ENCOUNTER: "close encounter", EJECTION: "ejection",
                 ENERGY_ERROR: "energy error"}


class EnsembleCancelled(RuntimeError):
    """The ensemble was cancelled before it finished."""


@dataclass(frozen=True)
class Settings:
    """Integration settings shared by every chunk (each with its meaning in the module docstring).

    Attributes
    ----------
    steps_per_orbit : int
        Steps per orbit of the innermost planet: the step is 1/steps_per_orbit of its period.
    hill_multiple : float
        Close-encounter distance in mutual Hill radii.
    ejection_multiple : float
        Ejection distance in initial semi-major axes of the outermost planet.
    energy_threshold : float
        Largest relative energy error of a stable draw.
    chaos : bool
        Whether shadow trajectories are integrated for MEGNO (twice the work).
    shadow_offset : float
        Phase-space distance of the shadow trajectory (scaled units).
    """

    steps_per_orbit: int = 20
    hill_multiple: float = 1.0
    ejection_multiple: float = 10.0
    energy_threshold: float = 1e-3
    chaos: bool = True
    shadow_offset: float = 1e-8


@dataclass
class ChunkSetup:
    """Constants of a chunk of draws (planets, draws arrays)."""

    masses: Masses
    step: np.ndarray             # (draws,) [d]
    encounter_r2: np.ndarray     # (pair rows, planets, draws) squared close-encounter distance [au^2]
    ejection_r2: np.ndarray      # (draws,) squared ejection distance [au^2]
    scale_position: np.ndarray   # (planets, draws) a_i [au]
    scale_velocity: np.ndarray   # (planets, draws) n_i a_i [au/d]
    capacity: np.ndarray         # (planets,) transit slots per planet


@dataclass
class ChunkState:
    """Where a chunk stands: the draws still integrated and everything recorded so far.

    ``xj``, ``vj`` hold the Jacobi positions and velocities of the active
    draws, followed by their shadows when the chaos indicator is on.
    """

    active: np.ndarray
    xj: np.ndarray
    vj: np.ndarray
    energy0: np.ndarray
    steps_done: int = 0
    outcome: np.ndarray = None
    end_step: np.ndarray = None
    energy_error: np.ndarray = None
    megno_integral: np.ndarray = None
    megno_mean_integral: np.ndarray = None
    megno: np.ndarray = None
    transit_count: np.ndarray = None
    _map: WisdomHolman = field(default=None, repr=False)

    def __getstate__(self):
        state = dict(self.__dict__)
        state["_map"] = None     # rebuilt where the chunk runs
        return state

    def copy(self) -> "ChunkState":
        """An independent copy (its arrays copied; the cached map left behind)."""
        fields = {name: (value.copy() if isinstance(value, np.ndarray) else value)
                  for name, value in self.__getstate__().items()}
        return ChunkState(**fields)


@dataclass
class TransitEvents:
    """Mid-transit times found in some blocks: chunk-local draw, planet, slot, time after the epoch [d]."""

    draw: np.ndarray
    planet: np.ndarray
    slot: np.ndarray
    time: np.ndarray

    @classmethod
    def concatenate(cls, parts) -> "TransitEvents":
        parts = list(parts)
        if not parts:
            empty = np.empty(0, dtype=np.int64)
            return cls(empty, empty, empty, np.empty(0))
        return cls(*(np.concatenate([getattr(p, name) for p in parts]) for name in ("draw", "planet", "slot", "time")))


def start_chunk(setup: ChunkSetup, xj, vj, settings: Settings, shadow_direction=None) -> ChunkState:
    """The state of a chunk at the epoch, its shadows ``shadow_offset`` away along ``shadow_direction``.

    Parameters
    ----------
    setup : ChunkSetup
    xj, vj : ndarray, shape (3, planets, draws)
        Jacobi positions [au] and velocities [au/d] at the epoch.
    settings : Settings
    shadow_direction : ndarray, shape (2, 3, planets, draws), optional
        Direction of the shadow's offset (positions, velocities in scaled units); needed with ``chaos``.
    """
    planets, draws = setup.masses.gm.shape
    wh = WisdomHolman(setup.masses)
    energy0 = wh.energy(xj, vj)
    if settings.chaos:
        norm = np.sqrt(folded_sum((shadow_direction * shadow_direction).reshape(6 * planets, draws), axis=0))
        offset = shadow_direction * (settings.shadow_offset / norm)
        xj = np.concatenate([xj, xj + offset[0] * setup.scale_position], axis=2)
        vj = np.concatenate([vj, vj + offset[1] * setup.scale_velocity], axis=2)
    return ChunkState(
        active=np.arange(draws), xj=np.ascontiguousarray(xj), vj=np.ascontiguousarray(vj), energy0=energy0,
        outcome=np.full(draws, RUNNING, dtype=np.int8), end_step=np.zeros(draws, dtype=np.int64),
        energy_error=np.zeros(draws), megno_integral=np.zeros(draws), megno_mean_integral=np.zeros(draws),
        megno=np.full(draws, np.nan), transit_count=np.zeros((draws, planets), dtype=np.int64))


def advance(setup: ChunkSetup, state: ChunkState, settings: Settings, blocks: int,
            cancel: threading.Event | None = None) -> tuple[ChunkState, TransitEvents]:
    """Integrate a chunk for ``blocks`` more blocks (state updated in place and returned).

    ``cancel`` is checked before every block; when it is set,
    :class:`EnsembleCancelled` is raised.
    """
    found = []
    # a draw on its way to a collision or an ejection may meet a zero distance or an overflow before
    # the end of its block; it is stopped there, and numpy need not warn about it
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        for _ in range(blocks):
            if cancel is not None and cancel.is_set():
                raise EnsembleCancelled("the ensemble was cancelled")
            if state.active.size:
                found.append(_block(setup, state, settings))
            state.steps_done += settings.steps_per_orbit
    return state, TransitEvents.concatenate(found)


def _trajectories(state: ChunkState, settings: Settings) -> np.ndarray:
    """Chunk-local draw of every trajectory in the arrays (mains, then shadows)."""
    return np.concatenate([state.active, state.active]) if settings.chaos else state.active


def _block(setup: ChunkSetup, state: ChunkState, settings: Settings) -> TransitEvents:
    """One block: steps with encounter and transit checks, then the end-of-block work."""
    active, xj, vj = state.active, state.xj, state.vj
    m, steps = active.size, settings.steps_per_orbit
    traj = _trajectories(state, settings)
    if state._map is None or state._map.draws != traj.size:
        state._map = WisdomHolman(setup.masses.take(traj))
    wh = state._map
    h = setup.step[traj]
    half = 0.5 * h
    encounter_r2 = setup.encounter_r2[:, :, active]
    close = np.empty(encounter_r2.shape, dtype=bool)
    acc = wh.accelerations(xj)
    wh.kick(vj, acc, half)
    previous_x = wh.helio[0, :, :m].copy()
    events = []
    for k in range(steps):
        wh.drift(xj, vj, h)
        acc = wh.accelerations(xj)
        if wh.planets > 1 and np.less(wh.pair_r2[:, :, :m], encounter_r2, out=close).any():
            _stop(state, active[close.any(axis=(0, 1))], CLOSE_ENCOUNTER, state.steps_done + k + 1)
        helio = wh.helio
        crossed = crossings(previous_x, helio[0, :, :m], helio[2, :, :m])
        if crossed.any():
            events.append(_crossing_events(setup, state, wh, crossed, previous_x, vj, acc, half,
                                           state.steps_done + k + 1))
        previous_x[...] = helio[0, :, :m]
        wh.kick(vj, acc, half if k == steps - 1 else h)
    end = state.steps_done + steps
    _end_of_block_checks(setup, state, settings, wh, end)
    if settings.chaos:
        _shadow_renormalisation(setup, state, settings, end)
    transits = _refined(events, state, setup)
    running = state.outcome[active] == RUNNING
    if not running.all():
        keep = np.concatenate([running, running]) if settings.chaos else running
        state.active = active[running]
        state.xj, state.vj = np.ascontiguousarray(xj[:, :, keep]), np.ascontiguousarray(vj[:, :, keep])
        state._map = None
    return transits


def _stop(state: ChunkState, draws, reason: int, step: int) -> None:
    """Record that ``draws`` stopped for ``reason`` at ``step`` (the first reason met counts)."""
    draws = draws[state.outcome[draws] == RUNNING]
    state.outcome[draws] = reason
    state.end_step[draws] = step


def _crossing_events(setup, state, wh, crossed, previous_x, vj, acc, half, step) -> dict:
    """The planets that crossed in this step, with the heliocentric state to refine their times."""
    planet, local = np.nonzero(crossed)
    draws = np.unique(local)
    # synchronised velocities of those draws: the drift left v(t) + h/2 a(t); add h/2 a(t + h)
    velocity = vj[:, :, draws] + half[draws] * acc[:, :, draws]
    helio_velocity = heliocentric_from_jacobi(velocity, wh.ratio[:, draws])
    column = np.searchsorted(draws, local)
    draw = state.active[local]
    slot = state.transit_count[draw, planet]
    room = slot < setup.capacity[planet]
    state.transit_count[draw[room], planet[room]] += 1
    gm = wh.masses.gm_star[0, local] + wh.masses.gm[planet, local]
    return {"draw": draw[room], "planet": planet[room], "slot": slot[room], "step": np.full(room.sum(), step),
            "position": wh.helio[:, planet, local][:, room], "velocity": helio_velocity[:, planet, column][:, room],
            "gm": gm[room], "previous_x": previous_x[planet, local][room], "h": 2.0 * half[local][room]}


def _refined(events: list, state: ChunkState, setup: ChunkSetup) -> TransitEvents:
    """Mid-transit times of the crossings of a block; none after the step at which a draw stopped."""
    if not events:
        return TransitEvents.concatenate([])
    e = {key: np.concatenate([ev[key] for ev in events], axis=-1) for key in events[0]}
    stopped = state.outcome[e["draw"]] != RUNNING
    keep = ~stopped | (e["step"] <= state.end_step[e["draw"]])
    e = {key: value[..., keep] for key, value in e.items()}
    tau = refine_transit_times(e["position"], e["velocity"], e["gm"], e["previous_x"], e["h"])
    time = e["step"] * setup.step[e["draw"]] + tau
    return TransitEvents(e["draw"], e["planet"], e["slot"], time)


def _end_of_block_checks(setup, state, settings, wh, end: int) -> None:
    """Energy error and ejection of the active draws at the synchronised end of a block."""
    active, m = state.active, state.active.size
    energy = wh.energy(state.xj, state.vj, count=m)
    error = np.abs(energy / state.energy0[active] - 1.0)
    state.energy_error[active] = error
    _stop(state, active[~(error <= settings.energy_threshold)], ENERGY_ERROR, end)
    helio = wh.helio[:, :, :m]          # positions at the end of the block (the last kick's)
    r2 = helio[0] * helio[0] + helio[1] * helio[1] + helio[2] * helio[2]
    _stop(state, active[(r2 > setup.ejection_r2[active]).any(axis=0)], EJECTION, end)


def _shadow_renormalisation(setup, state, settings, end: int) -> None:
    """MEGNO from the growth of each shadow's distance over the block, then the shadow brought back."""
    active, m = state.active, state.active.size
    xj, vj = state.xj, state.vj
    dx = xj[:, :, m:] - xj[:, :, :m]
    dv = vj[:, :, m:] - vj[:, :, :m]
    sx = dx / setup.scale_position[:, active]
    sv = dv / setup.scale_velocity[:, active]
    planets = xj.shape[1]
    squares = np.concatenate([(sx * sx).reshape(3 * planets, m), (sv * sv).reshape(3 * planets, m)])
    distance = np.sqrt(folded_sum(squares, axis=0))
    with np.errstate(divide="ignore", invalid="ignore"):
        growth = np.log(distance / settings.shadow_offset)
        block = settings.steps_per_orbit
        t_end, t_mid = end / block, (end - 0.5 * block) / block        # in orbits of the innermost planet
        state.megno_integral[active] += t_mid * growth
        y = 2.0 * state.megno_integral[active] / t_end
        state.megno_mean_integral[active] += y
        state.megno[active] = state.megno_mean_integral[active] / t_end
        factor = settings.shadow_offset / distance
    xj[:, :, m:] = xj[:, :, :m] + dx * factor
    vj[:, :, m:] = vj[:, :, :m] + dv * factor
