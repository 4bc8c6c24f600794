"""The one decorator for compiled loops (numba): compiled on first use, then cached on disk next to the module
(or in the user's cache directory, or where ``NUMBA_CACHE_DIR`` points, when the package is read-only). No
fast-math: the loops keep the order of the numpy arithmetic they replace, so results agree with it to rounding."""
from __future__ import annotations

import logging

import numba

logger = logging.getLogger("memory_infer")


def compiled(function):
    """``function`` compiled by numba in nopython mode, cached on disk, releasing the GIL, numpy's error model
    (division by zero gives inf or nan as in numpy, not an exception). Where no cache directory is writable it
    is compiled in each process instead (a few seconds at the first call) rather than failing."""
    options = dict(nogil=True, error_model="numpy")
    try:
        return numba.njit(cache=True, **options)(function)
    except RuntimeError as error:  # numba found no writable place for its cache
        logger.debug("compiled loop %s not cached: %s", function.__name__, error)
        return numba.njit(**options)(function)
