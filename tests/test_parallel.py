"""The work shared between the calling thread and the worker pool."""

import json
import threading

import pytest

from orbitdeck.models import Planet, Star, System, Uncertainty, derive
from orbitdeck.models.parallel import SharedWork


def test_every_task_runs_once_across_batches():
    done, lock = [], threading.Lock()

    def task(k):
        with lock:
            done.append(k)

    work = SharedWork()
    work.add(lambda k=k: task(k) for k in range(50))
    work.add(lambda k=k: task(k) for k in range(50, 80))
    work.finish()
    assert sorted(done) == list(range(80))


def test_an_error_in_a_task_reaches_the_caller():
    work = SharedWork()
    work.add([lambda: None, lambda: 1 / 0, lambda: None])
    with pytest.raises(ZeroDivisionError):
        work.finish()


def test_work_started_from_a_worker_runs_there_without_waiting_for_itself():
    inner_done = []

    def outer():
        inner = SharedWork()
        inner.add(lambda: inner_done.append(threading.current_thread().name) for _ in range(4))
        inner.finish()

    work = SharedWork()
    work.add([outer, outer])
    work.finish()   # would hang if a worker waited on the pool it runs in
    assert len(inner_done) == 8


def test_work_not_threaded_runs_in_the_caller():
    names = []
    work = SharedWork(threaded=False)
    work.add(lambda: names.append(threading.current_thread().name) for _ in range(6))
    work.finish()
    assert names == [threading.current_thread().name] * 6


@pytest.mark.parametrize("threaded", [False, True])
def test_derivations_in_several_threads_at_once_give_the_same_document(threaded, monkeypatch):
    from orbitdeck.models import uncertainty

    # the pool takes a share of even this small system's work, from the start, or none
    monkeypatch.setattr(uncertainty, "SHARED_MIN_PAIR_DRAWS", 0 if threaded else 10**12)
    monkeypatch.setattr(uncertainty, "EARLY_SHARING_MIN_PAIR_DRAWS", 0 if threaded else 10**12)
    star = Star(name="s", mass=0.3, radius=0.3, teff=3300.0)
    star.set_uncertainty("mass", Uncertainty.from_sigma(0.01))
    planets = []
    for name, period in zip("bcd", (2.0, 3.1, 4.9)):
        planet = Planet(name=name, period=period, radius=1.2, mass=2.0, eccentricity=0.02)
        planet.set_uncertainty("eccentricity", Uncertainty.from_sigma(0.01))
        planets.append(planet)
    system = System(name="threads", star=star, planets=planets)
    expected = json.dumps(derive(system, samples=1500, seed=8).to_dict(), sort_keys=True)
    results = [None] * 4

    def run(index):
        results[index] = json.dumps(derive(system, samples=1500, seed=8).to_dict(), sort_keys=True)

    threads = [threading.Thread(target=run, args=(index,)) for index in range(4)]
    for thread in threads:
        thread.start()
    for thread in threads:
        thread.join()
    assert results == [expected] * 4
