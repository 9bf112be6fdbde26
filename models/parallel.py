"""A small pool of worker threads for array work that releases the GIL.

numpy's ufunc loops and sorts let other threads run while they work on
large arrays, so splitting an array computation into a few parts run on
threads uses both cores of a small machine. One pool is kept per process,
with as many threads as cores, at most two.
"""

from __future__ import annotations

import os
from concurrent.futures import ThreadPoolExecutor

WORKERS = max(1, min(2, os.cpu_count() or 1))
_pool: ThreadPoolExecutor | None = None


def thread_map(function, items) -> list:
    """``[function(item) for item in items]``, run on the pool's threads (in order)."""
    global _pool
    items = list(items)
    if WORKERS == 1 or len(items) < 2:
        return [function(item) for item in items]
    if _pool is None:
        _pool = ThreadPoolExecutor(WORKERS, thread_name_prefix="orbitdeck")
    return list(_pool.map(function, items))
