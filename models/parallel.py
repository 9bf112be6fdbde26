"""A small pool of worker threads for array work that releases the GIL.

numpy's ufunc loops and sorts let other threads run while they work on
large arrays, so splitting an array computation into independent tasks
shared between the calling thread and a worker uses both cores of a small
machine. One pool is kept per process, with as many threads as cores, at
most two.
"""

from __future__ import annotations

import os
import threading
from collections import deque
from concurrent.futures import ThreadPoolExecutor

WORKERS = max(1, min(2, os.cpu_count() or 1))
_pool: ThreadPoolExecutor | None = None
_pool_lock = threading.Lock()
_PREFIX = "orbitdeck-worker"


def _the_pool() -> ThreadPoolExecutor:
    global _pool
    with _pool_lock:
        if _pool is None:
            _pool = ThreadPoolExecutor(WORKERS, thread_name_prefix=_PREFIX)
        return _pool


class SharedWork:
    """Zero-argument tasks that the calling thread and the pool's threads take in turn.

    :meth:`add` queues tasks and lets the pool's threads (all but one of
    ``WORKERS``: the caller is the other) begin on them while the caller goes
    on; :meth:`finish` makes the caller take tasks too until none is left,
    then waits for the tasks still running and re-raises the first error.
    Tasks may be added in several batches; each is taken by one thread.
    From one of the pool's own threads, with one core, or when ``threaded``
    is false, every task runs in the caller.
    """

    def __init__(self, threaded: bool = True):
        self._queue: deque = deque()
        self._helpers: list = []
        self._inline = not threaded or WORKERS == 1 or threading.current_thread().name.startswith(_PREFIX)

    @property
    def shared(self) -> bool:
        """Whether another thread takes part (else every task runs in the caller, at :meth:`finish`)."""
        return not self._inline

    def add(self, tasks) -> None:
        self._queue.extend(tasks)
        if self._inline:
            return
        while len([h for h in self._helpers if not h.done()]) < WORKERS - 1:
            self._helpers.append(_the_pool().submit(self._take_all))

    def _take_all(self) -> None:
        while True:
            try:
                task = self._queue.popleft()   # one thread gets each task (deque operations are atomic)
            except IndexError:
                return
            task()

    def finish(self) -> None:
        try:
            self._take_all()
        finally:
            for helper in self._helpers:
                if not helper.cancel():   # a helper still queued behind other work is not waited for
                    helper.result()
