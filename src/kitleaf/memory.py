"""Keeping freed array memory in the process, so batched solves do not fault pages back in.

A Monte Carlo run allocates and frees many arrays of a few megabytes. glibc's malloc serves
each of those with a fresh mapping, or trims the heap after it, so every run faults its
pages in again (about 4000 page faults, 10 ms, per run of a three-stage chain). Raising the
two thresholds keeps up to TRIM_THRESHOLD of freed heap for the next array instead. The
kitleaf command and the build's workers turn this on; the engine itself never does, since
it is a process-wide setting of the C library. (Here, not in the engine package, so the
command can call it before importing numpy.)
"""

from __future__ import annotations

import ctypes
import sys

MMAP_THRESHOLD = 8 << 20  # bytes: smaller blocks come from the heap, not fresh mappings
TRIM_THRESHOLD = 16 << 20  # bytes of freed heap kept before any is handed back
# mallopt's parameter numbers, from glibc's <malloc.h>
_M_TRIM_THRESHOLD = -1
_M_MMAP_THRESHOLD = -3


def keep_freed_memory() -> bool:
    """Set glibc's malloc thresholds (see the module docstring); False where the C library
    is not glibc or refuses, and nothing changes then."""
    if not sys.platform.startswith("linux"):
        return False
    try:
        mallopt = ctypes.CDLL(None).mallopt
    except (OSError, AttributeError):  # not glibc (musl has no mallopt)
        return False
    mallopt.argtypes, mallopt.restype = [ctypes.c_int, ctypes.c_int], ctypes.c_int
    return bool(mallopt(_M_MMAP_THRESHOLD, MMAP_THRESHOLD)) and bool(
        mallopt(_M_TRIM_THRESHOLD, TRIM_THRESHOLD))
