"""The one decorator for compiled loops (numba): compiled on first use, then cached on disk next to the module
(or where ``NUMBA_CACHE_DIR`` points when the package is read-only). No fast-math: the loops keep the order of
the numpy arithmetic they replace, so results agree with it to rounding."""
from __future__ import annotations

import numba


def compiled(function):
    """``function`` compiled by numba in nopython mode, cached on disk, releasing the GIL, numpy's error model
    (division by zero gives inf or nan as in numpy, not an exception)."""
    return numba.njit(cache=True, nogil=True, error_model="numpy")(function)
