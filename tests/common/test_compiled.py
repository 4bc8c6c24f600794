import numpy as np

from memory_infer.common.compiled import compiled


def test_compiled_functions_run_numpy_arithmetic_and_are_cached_on_disk():
    @compiled
    def ratio_sum(values, divisor):
        total = 0.0
        for value in values:
            total += value / divisor
        return total

    values = np.array([1.0, 2.0, 4.0])
    assert ratio_sum(values, 2.0) == 3.5
    assert np.isinf(ratio_sum(values, 0.0))  # numpy's error model: inf, not ZeroDivisionError
    assert type(ratio_sum._cache).__name__ != "NullCache"  # numba writes the machine code to disk
    assert ratio_sum.targetoptions["nogil"]


def test_without_a_writable_cache_the_loop_still_compiles(monkeypatch):
    # numba raises RuntimeError when none of its cache locators applies (a read-only install, no home directory)
    import numba.core.caching as caching

    monkeypatch.setattr(caching.CacheImpl, "_locator_classes", [])

    @compiled
    def twice(value):
        return 2 * value

    assert twice(3.0) == 6.0
    assert type(twice._cache).__name__ == "NullCache"
