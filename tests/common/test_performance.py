import platform

import pytest

from memory_infer.common.performance import tune_allocator


@pytest.mark.skipif(platform.system() != "Linux", reason="glibc's mallopt only")
def test_allocator_tuning_applies_once_and_is_idempotent():
    assert tune_allocator() is True
    assert tune_allocator() is True
    assert tune_allocator.cache_info().currsize >= 1
