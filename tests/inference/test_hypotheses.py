import bilby
import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.inference.hypotheses import (FLIPPED, FREE, MEMORY, NONE, amplitude_label, fixed_at, hypothesis,
                                               hypothesis_priors)


def test_hypotheses_fix_or_free_the_amplitude_without_touching_the_input():
    base = bilby.core.prior.PriorDict({"phase": bilby.core.prior.Uniform(0, 1, "phase")})
    assert hypothesis_priors(base, FLIPPED)["memory_amplitude"].peak == -1.0
    assert hypothesis_priors(base, "memory")["memory_amplitude"].peak == 1.0  # a configuration's name reads too
    free = hypothesis_priors(base, FREE, (-3.0, 2.0))["memory_amplitude"]
    assert isinstance(free, bilby.core.prior.Uniform) and (free.minimum, free.maximum) == (-3.0, 2.0)
    assert "memory_amplitude" not in base
    with pytest.raises(MemoryInferError, match="unknown hypothesis 'maybe'"):
        hypothesis_priors(base, "maybe")


def test_hypotheses_are_values_read_from_their_names():
    assert [hypothesis(n) for n in ("memory", "none", "flipped", "free")] == [MEMORY, NONE, FLIPPED, FREE]
    assert [h.amplitude for h in (MEMORY, NONE, FLIPPED, FREE)] == [1.0, 0.0, -1.0, None]
    assert FREE.free and not NONE.free
    assert f"run_{NONE}" == "run_none"  # file labels and result files hold the name
    assert fixed_at(-1.0) is FLIPPED and fixed_at(0.5) is None


def test_names_of_amplitudes():
    assert [amplitude_label(a) for a in (1.0, 0.0, -1.0, 0.5)] == ["memory", "none", "flipped", "A=0.5"]
