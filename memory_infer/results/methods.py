"""What every stage needs to know about an evidence method, as static data: one description per family of
estimates, read by the strategies that make them (``memory_infer/inference/methods/``), the preference rule
(:mod:`memory_infer.results.estimates`), the catalog combiner, the campaign and the reports.

A strategy makes one or more families (the fast approximations make two: fixed-parameter and two-point); the
family is what each :class:`~memory_infer.results.estimates.EvidenceEstimate` carries and what a result file
stores. A new method adds its description to ``DESCRIPTIONS`` here and its strategy to
``memory_infer.inference.methods.STRATEGIES`` (a test checks that the two lists agree).
"""
from __future__ import annotations

from dataclasses import dataclass


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


NESTED = MethodDescription(
    family="nested", label="nested sampling", preference=1, column="nested", monte_carlo_error=True,
    amplitude_quantile="nested sampling with A free")
REWEIGHTING = MethodDescription(
    family="reweighting", label="importance reweighting", preference=0, column="reweighting",
    monte_carlo_error=True, amplitude_quantile="reweighted A curve from the A = 0 posterior")
FIXED_POINT = MethodDescription(family="fixed-point", label="fixed-parameter approximation", preference=None,
                                column="fixed", monte_carlo_error=False, with_curve=False)
TWO_POINT = MethodDescription(family="two-point", label="two-point approximation", preference=2, column="fast",
                              monte_carlo_error=False, with_curve=False)

# every family, in the order an event's strategies make them (nested sampling, reweighting, the fast pair): the
# order of the campaign's columns and of its full methods
DESCRIPTIONS = (NESTED, REWEIGHTING, FIXED_POINT, TWO_POINT)


def description_of(family: str) -> MethodDescription | None:
    return next((d for d in DESCRIPTIONS if d.family == family), None)


def preference_order() -> tuple:
    """The families the preference rule may choose, best first among equal errors."""
    ranked = [d for d in DESCRIPTIONS if d.preference is not None]
    return tuple(d.family for d in sorted(ranked, key=lambda d: d.preference))


def preference_rank(family: str) -> int | None:
    description = description_of(family)
    return None if description is None else description.preference


def family_of(method: str) -> str:
    """The family whose label begins ``method`` (result files written before estimates carried their family)."""
    for description in DESCRIPTIONS:
        if method.startswith(description.label):
            return description.family
    return ""


def campaign_columns() -> dict:
    """family -> campaign record column, for the families that have one, in ``DESCRIPTIONS`` order."""
    return {d.family: d.column for d in DESCRIPTIONS if d.column is not None}


def full_columns() -> list:
    """Columns of the families with a Monte-Carlo error (the "full" methods), in ``DESCRIPTIONS`` order."""
    return [d.column for d in DESCRIPTIONS if d.column is not None and d.monte_carlo_error]


def approximate_column() -> str:
    """The column of the preferred family without a Monte-Carlo error (the approximation campaigns calibrate)."""
    return next(d.column for d in DESCRIPTIONS
                if d.column is not None and d.family in preference_order() and not d.monte_carlo_error)


def quantile_columns() -> dict:
    """``amplitude_quantile_<column>`` -> what it holds, for the families that record it, in ``DESCRIPTIONS`` order."""
    return {f"amplitude_quantile_{d.column}": d.amplitude_quantile for d in DESCRIPTIONS
            if d.column is not None and d.amplitude_quantile is not None}
