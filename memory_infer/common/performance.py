"""Process-wide tuning for the hot path.

glibc hands numpy's large temporaries (over 128 kB, e.g. one 4 s strain array) back to the kernel
on every free, so each new temporary costs page faults; on virtual machines that dominated the
memory computation (0.39 ms of a 0.07 ms derivative). Raising the mmap and trim thresholds keeps
freed blocks for reuse. Called by the command line and the benchmarks, never at import.
"""
from __future__ import annotations

import ctypes
import ctypes.util
from functools import cache


@cache
def tune_allocator(threshold_bytes: int = 64 * 1024 * 1024) -> bool:
    """Keep freed blocks below ``threshold_bytes`` in the heap (glibc only); True if applied (once per process)."""
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6")
        mallopt = libc.mallopt
    except (OSError, AttributeError):
        return False
    m_trim_threshold, m_mmap_threshold = -1, -3
    return bool(mallopt(m_mmap_threshold, threshold_bytes)) and bool(mallopt(m_trim_threshold, 4 * threshold_bytes))
