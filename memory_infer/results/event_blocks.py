"""An event result's headline and memory SNR as typed blocks (:func:`memory_infer.results.estimates.headline` and
the runner compute them; the event page, the commands' summaries and the catalog read them). The JSON keeps its
keys and their order; a field at :data:`.base.ABSENT` is a key not written."""
from __future__ import annotations

from dataclasses import dataclass

from .base import ABSENT, Block


@dataclass(frozen=True)
class CrossCheck(Block):
    """The best other estimate of ln BF+ with an error, and how far it lies from the headline (also in combined
    standard errors; None when both errors are zero)."""

    method: str
    ln_bf: float
    ln_bf_err: float | None
    difference: float
    difference_in_errors: float | None


@dataclass(frozen=True)
class Headline(Block):
    """The event's headline ln BF+ (memory against none) with its error and method, ln BF- from the same sample
    set beside it (None when none holds both), the rule that chose them, and a cross-check (None without one)."""

    ln_bf: float
    ln_bf_err: float | None
    method: str
    sample_set: str = ABSENT
    ln_bf_minus: float | None = ABSENT
    ln_bf_minus_err: float | None = ABSENT
    rule: str = ABSENT
    cross_check: CrossCheck | None = ABSENT

    NESTED = {"cross_check": CrossCheck}


@dataclass(frozen=True)
class MemorySNR(Block):
    """The optimal network SNR of the memory alone, where it was taken, and how (``error`` None: deterministic)."""

    value: float | None
    error: float | None = ABSENT
    point: str = ABSENT
    method: str = ABSENT
