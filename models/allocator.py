"""Keep glibc's malloc from handing freed array memory straight back to the system.

glibc serves blocks above its mmap threshold (128 KiB at first, raised on the
fly up to the largest block freed) with fresh mappings, and trims the top of
its heap whenever more than twice that lies free there. A Monte Carlo
derivation works on numpy temporaries of a few hundred KiB to a few MiB,
allocated and freed in turn, so each was paged in afresh (a zero-filled page
fault every 4 KiB), which made it 1.5 to 3 times slower; so does the nominal
derivation of a system of more than about 128 planets (its sky table has
N(N-1) rows: a quarter slower at 1000 planets).
:func:`keep_freed_memory` raises both thresholds once per process (mappings
only above 32 MiB, trimming only above 256 MiB free) with ``mallopt``:
freed memory stays with the process for reuse, and ``malloc_trim`` (which
the dashboard server calls after sessions close) still hands it back.

Nothing changes where the C library is not glibc, or where the user has
chosen the thresholds already (``MALLOC_MMAP_THRESHOLD_`` or
``MALLOC_TRIM_THRESHOLD_`` in the environment).
"""

from __future__ import annotations

import ctypes
import ctypes.util
import os
import platform
import sys

#: mallopt parameters (glibc's malloc.h) and the values set
_M_TRIM_THRESHOLD, _M_MMAP_THRESHOLD = -1, -3
TRIM_THRESHOLD = 256 * 1024 * 1024
MMAP_THRESHOLD = 32 * 1024 * 1024
_raised: bool | None = None   # None: not tried yet


def _applies() -> bool:
    return (sys.platform.startswith("linux") and platform.libc_ver()[0] == "glibc"
            and not {"MALLOC_MMAP_THRESHOLD_", "MALLOC_TRIM_THRESHOLD_"} & set(os.environ))


def keep_freed_memory() -> bool:
    """Raise glibc's mmap and trim thresholds (tried once per process); True if they are raised."""
    global _raised
    if _raised is None:
        _raised = False
        if _applies():
            try:
                mallopt = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6").mallopt
            except (OSError, AttributeError):
                return False
            # setting either threshold stops glibc adjusting them on the fly, so both are set
            _raised = bool(mallopt(_M_TRIM_THRESHOLD, TRIM_THRESHOLD)) and bool(mallopt(_M_MMAP_THRESHOLD, MMAP_THRESHOLD))
    return _raised
