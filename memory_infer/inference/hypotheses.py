"""The hypotheses fix the memory amplitude A: ``memory`` (A = 1, general relativity), ``none`` (A = 0),
``flipped`` (A = -1), ``free`` (A with a uniform prior)."""
from __future__ import annotations

import copy

from ..common.errors import MemoryInferError

HYPOTHESES = {"memory": 1.0, "none": 0.0, "flipped": -1.0, "free": None}


def hypothesis_name(amplitude: float) -> str:
    """The hypothesis of a fixed amplitude, or ``A=<value>`` for any other value."""
    for name, value in HYPOTHESES.items():
        if value is not None and abs(value - float(amplitude)) < 1e-12:
            return name
    return f"A={float(amplitude):g}"


def hypothesis_priors(priors, hypothesis: str, free_limits=(-5.0, 5.0)):
    """A copy of ``priors`` with the memory amplitude set for ``hypothesis``."""
    import bilby

    if hypothesis not in HYPOTHESES:
        raise MemoryInferError(f"unknown hypothesis '{hypothesis}'; choose one of {', '.join(HYPOTHESES)}")
    new = copy.deepcopy(priors)
    value = HYPOTHESES[hypothesis]
    if value is None:
        new["memory_amplitude"] = bilby.core.prior.Uniform(free_limits[0], free_limits[1], name="memory_amplitude",
                                                           latex_label="$A$")
    else:
        new["memory_amplitude"] = bilby.core.prior.DeltaFunction(value, name="memory_amplitude")
    return new
