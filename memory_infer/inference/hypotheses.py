"""The hypotheses fix the memory amplitude A: ``memory`` (A = 1, general relativity), ``none`` (A = 0),
``flipped`` (A = -1), ``free`` (A with a uniform prior).

A hypothesis is a :class:`Hypothesis` value; its name is what configurations, file names and result files
hold (``EvidenceEstimate.numerator``), and :func:`hypothesis` reads one from its name.
"""
from __future__ import annotations

import copy
from dataclasses import dataclass
from types import MappingProxyType

from ..common.errors import MemoryInferError
from ..inputs.settings import FREE_AMPLITUDE_LIMITS


@dataclass(frozen=True)
class Hypothesis:
    """One hypothesis about the memory amplitude: fixed at ``amplitude``, or free (``amplitude`` None)."""

    name: str
    amplitude: float | None

    @property
    def free(self) -> bool:
        return self.amplitude is None

    def __str__(self) -> str:
        return self.name


MEMORY = Hypothesis("memory", 1.0)
NONE = Hypothesis("none", 0.0)
FLIPPED = Hypothesis("flipped", -1.0)
FREE = Hypothesis("free", None)
HYPOTHESES = MappingProxyType({h.name: h for h in (MEMORY, NONE, FLIPPED, FREE)})


def hypothesis(value) -> Hypothesis:
    """The hypothesis named ``value`` (a :class:`Hypothesis` is returned as it is)."""
    if isinstance(value, Hypothesis):
        return value
    if value not in HYPOTHESES:
        raise MemoryInferError(f"unknown hypothesis '{value}'; choose one of {', '.join(HYPOTHESES)}")
    return HYPOTHESES[value]


def fixed_at(amplitude: float) -> Hypothesis | None:
    """The hypothesis that fixes A at ``amplitude`` (to 1e-12), or None when none does."""
    for item in HYPOTHESES.values():
        if item.amplitude is not None and abs(item.amplitude - float(amplitude)) < 1e-12:
            return item
    return None


def amplitude_label(amplitude: float) -> str:
    """The name of the hypothesis of a fixed amplitude, or ``A=<value>`` for any other value."""
    found = fixed_at(amplitude)
    return found.name if found is not None else f"A={float(amplitude):g}"


def hypothesis_priors(priors, chosen, free_limits=FREE_AMPLITUDE_LIMITS):
    """A copy of ``priors`` with bilby's ``memory_amplitude`` set for the hypothesis ``chosen`` (or its name)."""
    import bilby

    chosen = hypothesis(chosen)
    new = copy.deepcopy(priors)
    if chosen.free:
        new["memory_amplitude"] = bilby.core.prior.Uniform(free_limits[0], free_limits[1], name="memory_amplitude",
                                                           latex_label="$A$")
    else:
        new["memory_amplitude"] = bilby.core.prior.DeltaFunction(chosen.amplitude, name="memory_amplitude")
    return new
