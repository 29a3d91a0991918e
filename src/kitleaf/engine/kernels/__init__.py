"""Compiled inner loops of the large-signal stepper (numba), beside the numpy reference.

The numpy device models (``engine/devices``) stay the reference; each kernel here computes
the same figures for one member at a time, and ``tests/engine/test_kernels.py`` holds them
together. Compiled code is cached beside the sources, or, where the installed package is
read-only, in a user cache folder (set before numba is first imported).
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path


def _cache_folder() -> None:
    """Point numba's cache at a writable folder when the package's own is not."""
    if "NUMBA_CACHE_DIR" in os.environ:
        return
    here = Path(__file__).parent
    cache = here / "__pycache__"
    if os.access(cache if cache.exists() else here, os.W_OK):
        return
    home = Path(os.environ.get("XDG_CACHE_HOME", Path.home() / ".cache"))
    fallback = home / "kitleaf-numba"
    try:
        fallback.mkdir(parents=True, exist_ok=True)
    except OSError:
        fallback = Path(tempfile.gettempdir()) / "kitleaf-numba"
        fallback.mkdir(parents=True, exist_ok=True)
    os.environ["NUMBA_CACHE_DIR"] = str(fallback)


_cache_folder()

import numba  # noqa: E402 (its cache folder is read at import)

# Compiled once and cached on disk; no fast-math, so every result rounds as the plain
# arithmetic it spells (the same bytes on every run). Without numba's runtime (_nrt): a
# kernel allocates nothing (its callers hand it every array), so no array's references are
# counted either, an atomic add and subtract on every view taken and every array passed,
# which cost the steps as much as their arithmetic
kernel = numba.njit(cache=True, nogil=True, error_model="numpy", _nrt=False)
# A kernel handed the device tuples (dozens of arrays): inlined into its caller
inlined = numba.njit(cache=True, nogil=True, error_model="numpy", inline="always",
                     _nrt=False)
