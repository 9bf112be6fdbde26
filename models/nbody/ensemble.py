"""N-body ensembles over a system's uncertainties, run as dask tasks on this machine or a cluster.

All draws are made first, from one seeded generator
(:func:`orbitdeck.models.nbody.setup.draw_ensemble`), then split into
chunks of draws. The integration advances in waves: each wave is one dask
task per chunk that integrates a whole number of blocks (orbits of the
innermost planet), so progress is reported and cancellation checked between
waves (and, when the tasks run in this process, between blocks). A draw's
numbers depend on nothing but its own inputs, so the same seed gives the
same results whatever the chunk size, the wave length or the scheduler.

Schedulers: "threads" (dask's threaded scheduler, on a pool made for the run),
"processes" (dask's multiprocessing scheduler on a pool of spawned
processes made for the run), "synchronous" (one thread, for debugging), or a
dask.distributed cluster given by its scheduler address ("tcp://host:port")
or an open ``distributed.Client``. Every pool, process and connection made
for a run is closed when it ends.

Results are model estimates: point masses under Newtonian gravity (no
tides, no general relativity, no collisions), a fixed step, masses
estimated from radii where not measured.
"""

from __future__ import annotations

import math
import os
import threading
import time
from collections.abc import Callable
from concurrent.futures import ProcessPoolExecutor, ThreadPoolExecutor
from multiprocessing import get_context

import numpy as np

from .chunk import RUNNING, SURVIVED, EnsembleCancelled, Settings, advance, start_chunk
from .results import EnsembleResult
from .setup import chunk_setup, draw_ensemble, transit_capacity

#: local schedulers by name
LOCAL_SCHEDULERS = ("threads", "processes", "synchronous")
DEFAULT_SCHEDULER = "processes"
#: draws per chunk when not given: enough chunks to share out, each large enough for numpy to pay off
DEFAULT_CHUNK_DRAWS = 512
#: waves per run when not given (progress and cancellation are checked between waves)
DEFAULT_WAVES = 50
#: seconds allowed for connecting to a dask.distributed scheduler
CONNECT_TIMEOUT = 10
#: seconds between looks at a cluster's tasks (for transits to record and a cancellation)
POLL_SECONDS = 0.05

ProgressCallback = Callable[[int, int], None]


def chunk_ranges(draws: int, chunk_draws: int) -> list[np.ndarray]:
    """Indices of the draws of each chunk, in order."""
    return [np.arange(start, min(start + chunk_draws, draws)) for start in range(0, draws, chunk_draws)]


def run_ensemble(system, draws: int, orbits: int, seed: int | None = None, *, settings: Settings | None = None,
                 scheduler=DEFAULT_SCHEDULER, chunk_draws: int | None = None, wave_orbits: int | None = None,
                 progress: ProgressCallback | None = None, cancel: threading.Event | None = None) -> EnsembleResult:
    """Integrate ``draws`` Monte Carlo draws of ``system`` for ``orbits`` orbits of the innermost planet.

    Parameters
    ----------
    system : orbitdeck.models.files.system.System
    draws : int
        Number of draws (>= 1).
    orbits : int
        Length of the integration in orbits of each draw's innermost planet (>= 1).
    seed : int or None
        Seed of the one generator behind every draw.
    settings : Settings, optional
        Step, stopping rules and chaos indicator (defaults: 1/20 of the innermost period, one
        mutual Hill radius, ten outermost semi-major axes, energy error 1e-3, MEGNO on).
    scheduler : str or distributed.Client
        "threads", "processes", "synchronous", or a dask.distributed scheduler address or Client.
    chunk_draws : int, optional
        Draws per task (default :data:`DEFAULT_CHUNK_DRAWS`, fewer when there are fewer draws
        than that per worker).
    wave_orbits : int, optional
        Orbits per wave of tasks (default: ``orbits`` / :data:`DEFAULT_WAVES`).
    progress : callable(done, total), optional
        Called from the calling thread with the orbits integrated so far and ``orbits``, at the
        start and after every wave.
    cancel : threading.Event, optional
        When set, the run stops at the next check and :class:`EnsembleCancelled` is raised.

    Returns
    -------
    EnsembleResult
    """
    draws, orbits = _positive_int(draws, "draws"), _positive_int(orbits, "orbits")
    if seed is not None and (isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or seed < 0):
        raise ValueError(f"seed must be a whole number >= 0 or None, got {seed!r}")
    settings = settings or Settings()
    _check_scheduler(scheduler)
    ensemble = draw_ensemble(system, draws, seed)
    capacity = transit_capacity(ensemble, orbits)
    times = np.full((draws, int(capacity.sum())), np.nan)
    offsets = np.concatenate([[0], np.cumsum(capacity)[:-1]])
    wave_orbits = _positive_int(wave_orbits, "wave_orbits") if wave_orbits else max(1, math.ceil(orbits / DEFAULT_WAVES))
    with _Runner(scheduler, cancel) as runner:
        chunk_draws = _positive_int(chunk_draws, "chunk_draws") if chunk_draws else \
            max(1, min(DEFAULT_CHUNK_DRAWS, math.ceil(draws / runner.workers)))
        ranges = chunk_ranges(draws, chunk_draws)
        setups = [chunk_setup(ensemble, idx, settings, capacity) for idx in ranges]
        states = [start_chunk(setup, ensemble.xj[:, :, idx], ensemble.vj[:, :, idx], settings,
                              ensemble.shadow_direction[..., idx]) for setup, idx in zip(setups, ranges)]
        if progress:
            progress(0, orbits)

        def record(chunk: int, found) -> None:
            times[ranges[chunk][found.draw], offsets[found.planet] + found.slot] = found.time

        states = runner.run(setups, states, settings, _waves(orbits, wave_orbits), record, progress)
    return _result(system, ensemble, settings, orbits, seed, states, ranges, times, offsets, capacity)


def _waves(orbits: int, wave_orbits: int) -> list[int]:
    """Orbits (blocks) of each wave."""
    return [min(wave_orbits, orbits - start) for start in range(0, orbits, wave_orbits)]


def _result(system, ensemble, settings, orbits, seed, states, ranges, times, offsets, capacity) -> EnsembleResult:
    draws = ensemble.draws
    outcome = np.empty(draws, dtype=np.int8)
    end_step = np.empty(draws, dtype=np.int64)
    megno, energy_error = np.empty(draws), np.empty(draws)
    for idx, state in zip(ranges, states):
        survived = state.outcome == RUNNING
        outcome[idx] = np.where(survived, SURVIVED, state.outcome)
        end_step[idx] = np.where(survived, state.steps_done, state.end_step)
        megno[idx], energy_error[idx] = state.megno, state.energy_error
    transit_times = tuple(ensemble.epoch + times[:, start:start + size] for start, size in zip(offsets, capacity))
    return EnsembleResult(
        system_name=system.name, names=ensemble.names, epoch=ensemble.epoch, draws=draws, orbits=orbits,
        seed=seed, settings=settings, inner_period=ensemble.inner_period, outcome=outcome,
        survival_orbits=end_step / settings.steps_per_orbit, megno=megno if settings.chaos else np.full(draws, np.nan),
        energy_error=energy_error, transit_times=transit_times, mass_estimated=ensemble.mass_estimated,
        warnings=ensemble.warnings)


def _positive_int(value, name: str) -> int:
    if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 1:
        raise ValueError(f"{name} must be a whole number >= 1, got {value!r}")
    return int(value)


def _check_scheduler(scheduler) -> None:
    """ValueError unless ``scheduler`` names a local scheduler, looks like an address or is a Client."""
    if isinstance(scheduler, str) and (scheduler in LOCAL_SCHEDULERS or ":" in scheduler):
        return
    if type(scheduler).__name__ == "Client" and hasattr(scheduler, "submit"):
        return
    raise ValueError(f"scheduler: expected one of {', '.join(LOCAL_SCHEDULERS)}, a dask scheduler address "
                     f"such as tcp://host:8786 or a distributed.Client, got {scheduler!r}")


class _Runner:
    """Runs one wave of chunk tasks on the chosen dask scheduler; owns the pools and clients it makes.

    ``workers`` is how many tasks can run at once (for the default chunk size).
    """

    def __init__(self, scheduler, cancel):
        self.scheduler, self.cancel = scheduler, cancel
        self.pool = self.client = None
        self.own_client = False
        self.workers = 1

    def __enter__(self):
        cores = max(1, os.cpu_count() or 1)
        if isinstance(self.scheduler, str) and self.scheduler in LOCAL_SCHEDULERS:
            if self.scheduler == "threads":
                self.workers = cores
                self.pool = ThreadPoolExecutor(cores, thread_name_prefix="orbitdeck-nbody")
            elif self.scheduler == "processes":
                self.workers = cores
                self.pool = ProcessPoolExecutor(cores, mp_context=get_context("spawn"))
        else:
            self.client, self.own_client = connect(self.scheduler)
            self.workers = max(1, sum(self.client.nthreads().values()))
        return self

    def __exit__(self, *exc):
        if self.pool is not None:
            self.pool.shutdown(wait=True, cancel_futures=True)
        if self.own_client:
            self.client.close()

    def run(self, setups, states, settings, waves, record, progress):
        """Advance every chunk through ``waves`` (blocks per wave); ``record(chunk, events)`` takes the
        transits found and ``progress(done, total)`` hears of the orbits done. Returns the final states."""
        if self.client is not None:
            return self._run_distributed(setups, states, settings, waves, record, progress)
        import dask

        in_process = self.scheduler != "processes"
        cancel = self.cancel if in_process else None   # an Event cannot travel to another process
        options = {} if self.pool is None else {"pool": self.pool, "num_workers": self.workers}
        done, total = 0, sum(waves)
        for blocks in waves:
            self._check_cancel()
            tasks = [dask.delayed(advance, pure=False)(setup, state, settings, blocks, cancel)
                     for setup, state in zip(setups, states)]
            results = dask.compute(*tasks, scheduler=self.scheduler, **options)
            states = [state for state, _ in results]
            for chunk, (_, found) in enumerate(results):
                record(chunk, found)
            done += blocks
            if progress:
                progress(done, total)
        return states

    def _run_distributed(self, setups, states, settings, waves, record, progress):
        """Each chunk's waves as a chain of tasks on the cluster, all submitted at once: a chunk's
        state stays on the cluster between its waves and only the transits found come back."""
        from operator import itemgetter

        client = self.client
        setups = client.scatter(setups)
        # the first task of a chunk carries its state with it, so it runs where its constants are and
        # the chain stays on that worker
        state_futures = list(states)
        pending = {}                     # events future -> (chunk, blocks)
        for blocks in waves:
            for chunk, setup in enumerate(setups):
                both = client.submit(_advance_copy, setup, state_futures[chunk], settings, blocks, pure=False)
                state_futures[chunk] = client.submit(itemgetter(0), both, pure=False)
                pending[client.submit(itemgetter(1), both, pure=False)] = (chunk, blocks)
        work, total = 0, sum(waves) * len(setups)
        try:
            while pending:
                self._check_cancel()
                finished = [future for future in pending if future.done()]
                if not finished:
                    time.sleep(POLL_SECONDS)
                    continue
                for future, found in zip(finished, client.gather(finished)):
                    chunk, blocks = pending.pop(future)
                    record(chunk, found)
                    work += blocks
                if progress:
                    progress(work * sum(waves) // total, sum(waves))
            return client.gather(state_futures)
        finally:
            client.cancel(list(pending) + [future for future in state_futures if hasattr(future, "key")])

    def _check_cancel(self) -> None:
        if self.cancel is not None and self.cancel.is_set():
            raise EnsembleCancelled("the ensemble was cancelled")


def _advance_copy(setup, state, settings, blocks):
    """:func:`advance` on a copy of ``state``: a cluster keeps task inputs as they were."""
    return advance(setup, state.copy(), settings, blocks)


def connect(scheduler):
    """A dask.distributed Client for ``scheduler`` (an address or a Client) and whether we opened it.

    Raises
    ------
    ValueError
        When ``scheduler`` is neither a local scheduler name, an address nor a Client, or no
        scheduler answers at the address within :data:`CONNECT_TIMEOUT` seconds.
    """
    from distributed import Client

    if isinstance(scheduler, Client):
        return scheduler, False
    if not isinstance(scheduler, str) or "://" not in scheduler and ":" not in scheduler:
        raise ValueError(f"scheduler: expected one of {', '.join(LOCAL_SCHEDULERS)} or a dask scheduler "
                         f"address such as tcp://host:8786, got {scheduler!r}")
    try:
        return Client(scheduler, timeout=CONNECT_TIMEOUT, set_as_default=False), True
    except (OSError, TimeoutError, ValueError) as error:
        raise ValueError(f"scheduler: no dask scheduler answered at {scheduler} ({error})") from None
