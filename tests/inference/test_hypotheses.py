import bilby
import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.inference.hypotheses import hypothesis_name, hypothesis_priors


def test_hypotheses_fix_or_free_the_amplitude_without_touching_the_input():
    base = bilby.core.prior.PriorDict({"phase": bilby.core.prior.Uniform(0, 1, "phase")})
    assert hypothesis_priors(base, "flipped")["memory_amplitude"].peak == -1.0
    free = hypothesis_priors(base, "free", (-3.0, 2.0))["memory_amplitude"]
    assert (free.minimum, free.maximum) == (-3.0, 2.0)
    assert "memory_amplitude" not in base
    with pytest.raises(MemoryInferError, match="unknown hypothesis"):
        hypothesis_priors(base, "maybe")


def test_names_of_amplitudes():
    assert [hypothesis_name(a) for a in (1.0, 0.0, -1.0, 0.5)] == ["memory", "none", "flipped", "A=0.5"]
