"""What every later stage needs to know about an evidence method, described once next to its strategy
(``memory_infer/inference/methods/<method>.py``, registered when ``memory_infer.inference.methods`` is
imported; the stages after inference import it) and read from here by the preference rule
(:mod:`memory_infer.results.estimates`), the catalog combiner and the campaign summary.

A strategy gives one description per family of estimates it makes (the fast approximations make two:
fixed-parameter and two-point); the family is what each :class:`~memory_infer.results.estimates.EvidenceEstimate`
carries and what a result file stores.
"""
from __future__ import annotations

import contextlib
from dataclasses import dataclass

from ..common.errors import MemoryInferError


@dataclass(frozen=True)
class MethodDescription:
    """One family of evidence estimates.

    - ``family``: the name its estimates carry (``EvidenceEstimate.family``);
    - ``label``: the plain-English words its estimates' method text begins with (also how a result written
      before estimates carried their family is read);
    - ``preference``: its rank in the preference rule among equal errors, lower first; the same rank orders
      the candidate sign summaries of an event. ``None``: a cross-check, never preferred;
    - ``column``: the campaign record's columns ``ln_bf_plus_<column>`` and ``ln_bf_minus_<column>`` (None: none);
    - ``monte_carlo_error``: whether its estimates carry a Monte-Carlo error (a "full" method, against which the
      campaign calibrates the error-free approximation);
    - ``amplitude_quantile``: what the campaign's ``amplitude_quantile_<column>`` holds, when the method records
      the injected A's posterior quantile (None: it does not);
    - ``with_curve``: whether an event whose Bayes factors come from this family contributes its amplitude
      curve to the catalog's shared-A posterior.
    """

    family: str
    label: str
    preference: int | None = None
    column: str | None = None
    monte_carlo_error: bool = True
    amplitude_quantile: str | None = None
    with_curve: bool = True


DESCRIPTIONS: dict = {}  # family -> MethodDescription, in the order the strategies registered them


def describe(description: MethodDescription) -> MethodDescription:
    """Register a family; a second, different description of the same family is an error."""
    known = DESCRIPTIONS.get(description.family)
    if known is not None and known != description:
        raise MemoryInferError(f"the evidence family '{description.family}' is described twice, differently")
    DESCRIPTIONS[description.family] = description
    return description


def forget(family: str) -> None:
    """Unregister a family (for tests that register a toy method)."""
    DESCRIPTIONS.pop(family, None)


@contextlib.contextmanager
def described(*descriptions: MethodDescription):
    """The families registered for the duration of a ``with`` block, then unregistered."""
    added = [d for d in descriptions if d.family not in DESCRIPTIONS]
    for description in descriptions:
        describe(description)
    try:
        yield
    finally:
        for description in added:
            forget(description.family)


def _registered() -> dict:
    if not DESCRIPTIONS:
        raise MemoryInferError("no evidence method is registered: the methods register when "
                               "memory_infer.inference.methods is imported")
    return DESCRIPTIONS


def description_of(family: str) -> MethodDescription | None:
    return _registered().get(family)


def preference_order() -> tuple:
    """The families the preference rule may choose, best first among equal errors."""
    ranked = [d for d in _registered().values() if d.preference is not None]
    return tuple(d.family for d in sorted(ranked, key=lambda d: d.preference))


def preference_rank(family: str) -> int | None:
    description = _registered().get(family)
    return None if description is None else description.preference


def family_of(method: str) -> str:
    """The family whose label begins ``method`` (result files written before estimates carried their family)."""
    for description in _registered().values():
        if method.startswith(description.label):
            return description.family
    return ""


def campaign_columns() -> dict:
    """family -> campaign record column, for the families that have one, in registration order."""
    return {d.family: d.column for d in _registered().values() if d.column is not None}
