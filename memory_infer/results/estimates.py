"""Evidence estimates, amplitude curves and sign summaries, and the one rule that prefers an estimate.

Every number carries its error (None where the method has none, with the reason in ``note``) and the
method that produced it.
"""
from __future__ import annotations

import dataclasses
from dataclasses import asdict, dataclass, field

import numpy as np

from ..common.errors import MemoryInferError
from .methods import family_of, preference_order, preference_rank

RULE = ("ln BF₊ (A = +1 vs 0) and ln BF₋ (A = -1 vs 0) from one family and one sample set that holds both: "
        "the reliable pair with the smallest Monte-Carlo error on ln BF₊ (importance reweighting or nested "
        "sampling); the two-point approximation, which has no error, only when neither is available; ln BF₊ "
        "alone when no sample set holds both; the other estimates are reported as cross-checks")
ERROR_UNDEFINED_TEXT = "error undefined: fewer than two effective samples"


class _FromDict:
    @classmethod
    def from_dict(cls, data: dict):
        names = {f.name for f in dataclasses.fields(cls)}
        return cls(**{k: v for k, v in data.items() if k in names})

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass
class EvidenceEstimate(_FromDict):
    """One ln Bayes factor with its error and how it was made.

    ``family`` is one described in :mod:`memory_infer.results.methods`; ``sample_set`` names the posterior samples a reweighting used
    and ``base_amplitude`` the A they were drawn under.
    """

    method: str
    ln_bf: float
    ln_bf_err: float | None
    numerator: str = "memory"
    denominator: str = "none"
    effective_sample_size: float | None = None
    number_of_samples: int | None = None
    reliable: bool = True
    note: str = ""
    family: str = ""
    sample_set: str | None = None
    base_amplitude: float | None = None

    def __post_init__(self):
        if not self.family:
            self.family = family_of(self.method)
        if self.family == "reweighting" and self.base_amplitude is None and "from the A = " in self.method:
            text = self.method.split("from the A = ", 1)[1].split()[0]
            self.base_amplitude = float(text)


def grid_index(grid, value: float, exact: bool = True) -> int:
    """Index of ``value`` on an amplitude grid; with ``exact`` the grid must hold it (to 1e-9)."""
    grid = np.asarray(grid, dtype=float)
    index = int(np.argmin(np.abs(grid - value)))
    if exact and abs(grid[index] - value) > 1e-9:
        raise MemoryInferError(f"the amplitude grid does not contain {value:g}")
    return index


def normalized_density(grid, ln_values) -> np.ndarray:
    """A density on ``grid`` proportional to ``exp(ln_values)``, normalized by the trapezoid rule."""
    grid, ln_values = np.asarray(grid, dtype=float), np.asarray(ln_values, dtype=float)
    density = np.exp(ln_values - np.max(ln_values))
    return density / np.trapezoid(density, grid)


def prior_on_grid(grid, limits) -> tuple:
    """(low, high, note): a uniform prior's limits cut to the grid's span, and a sentence when they were cut
    (outside the grid the likelihood is unknown, so the prior is limited to the grid, not extrapolated)."""
    grid = np.asarray(grid, dtype=float)
    low, high = max(float(limits[0]), float(grid[0])), min(float(limits[1]), float(grid[-1]))
    note = "" if (low, high) == (float(limits[0]), float(limits[1])) else (
        f"the prior's limits [{limits[0]:g}, {limits[1]:g}] reach beyond the amplitude grid; the prior is "
        f"limited to the grid's span [{low:g}, {high:g}]")
    return low, high, note


def sign_weight(ln_bf_plus: float, ln_bf_minus: float) -> float:
    """``weight_plus`` = BF+ / (BF+ + BF-): the probability of A = +1 against A = -1 at equal prior odds."""
    return float(1 / (1 + np.exp(ln_bf_minus - ln_bf_plus)))


def cumulative_distribution(grid, density) -> np.ndarray:
    """The CDF of a density on ``grid`` (trapezoids), ending at exactly 1."""
    cdf = np.concatenate([[0], np.cumsum(0.5 * (density[1:] + density[:-1]) * np.diff(grid))])
    return cdf / cdf[-1]


@dataclass
class AmplitudeCurve(_FromDict):
    """``ln <L(A)/L(a0)>`` over posterior samples drawn under A = a0, on a grid of A."""

    amplitudes: list
    ln_mean_ratio: list
    ln_mean_ratio_err: list
    effective_sample_size: list
    base_amplitude: float
    number_of_samples: int
    method: str = "importance reweighting of posterior samples"

    def at(self, amplitude: float):
        """(ln ratio, error, effective samples) at one grid value."""
        index = grid_index(self.amplitudes, amplitude)
        return self.ln_mean_ratio[index], self.ln_mean_ratio_err[index], self.effective_sample_size[index]


@dataclass
class SignSummary(_FromDict):
    """Per-event sign bookkeeping (README, "Catalog")."""

    ln_bf_plus: float
    ln_bf_plus_err: float | None
    ln_bf_minus: float
    ln_bf_minus_err: float | None
    ln_bf_sign: float
    ln_bf_sign_err: float | None
    weight_plus: float  # BF+ / (BF+ + BF-): probability of A = +1 against A = -1 at equal prior odds
    method: str
    note: str = field(default="")
    mass_above_zero: float | None = None  # posterior mass of A > 0 with A free (uniform prior), from a curve


def _candidates(methods, numerators):
    """Every complete group ``{numerator: estimate}`` of one family and one sample set, reliable estimates only."""
    groups, families = {}, preference_order()
    for estimate in methods:
        if estimate.family in families and estimate.denominator == "none" and estimate.reliable \
                and estimate.numerator in numerators:
            groups.setdefault((estimate.family, estimate.sample_set), {}).setdefault(estimate.numerator, estimate)
    return [g for g in groups.values() if all(n in g for n in numerators)]


def _order(group, numerators):
    first = group[numerators[0]]
    error = first.ln_bf_err if first.ln_bf_err is not None and np.isfinite(first.ln_bf_err) else np.inf
    return (error, preference_rank(first.family), -(first.effective_sample_size or 0.0))


def preferred(methods, numerators=("memory",)) -> dict | None:
    """The preferred estimates of ``numerators`` against 'none', all from one family and one sample set.

    The rule (``RULE``): only reliable estimates, in groups of one family and one sample set that hold every
    numerator; the group whose first numerator has the smallest error (the two-point approximation has none, so
    it comes last); among equal errors the families' preference ranks (each method's description,
    :mod:`memory_infer.results.methods`), then the most effective samples. A second-generation event's memory
    ln BF is 1e-3 to 1e-2, below nested sampling's 0.1-0.3, so reweighting (errors ~0.004) is the number that is
    summed there. Returns ``{numerator: estimate}`` or None when no group has them all.
    """
    candidates = _candidates(methods, numerators)
    return min(candidates, key=lambda g: _order(g, numerators)) if candidates else None


def event_pair(methods) -> dict | None:
    """The event's ln BF+ and ln BF- by ``RULE``: ``{"memory": estimate, "flipped": estimate}`` from one family
    and one sample set, or ``{"memory": estimate}`` when no sample set holds both; None when nothing is usable.
    The index, the event headline, the sign table, the catalog table and events.csv all show this pair."""
    return preferred(methods, ("memory", "flipped")) or preferred(methods, ("memory",))


def sample_set_name(estimate: EvidenceEstimate) -> str:
    """The estimate's method named with its sample set (the method text carries it for reweighting)."""
    return estimate.method


def same_pair(sign: SignSummary, pair: dict) -> bool:
    """Whether a sign summary holds exactly the ln BF+ and ln BF- of ``pair``."""
    if "flipped" not in pair:
        return False
    return bool(np.isclose(sign.ln_bf_plus, pair["memory"].ln_bf, rtol=0, atol=1e-12)
                and np.isclose(sign.ln_bf_minus, pair["flipped"].ln_bf, rtol=0, atol=1e-12))


def consistent_sign(pair: dict | None, candidates) -> SignSummary | None:
    """The sign summary that holds the event's preferred pair (:func:`event_pair`): the first candidate with the
    same ln BF+ and ln BF- (relabelled with the pair's method and sample set), else one built from the pair."""
    if pair is None or "flipped" not in pair:
        return None
    plus, minus = pair["memory"], pair["flipped"]
    for sign in candidates:
        if sign is not None and same_pair(sign, pair):
            sign.method = sample_set_name(plus)
            return sign
    error = (None if plus.ln_bf_err is None or minus.ln_bf_err is None
             else float(np.hypot(plus.ln_bf_err, minus.ln_bf_err)))
    return SignSummary(ln_bf_plus=plus.ln_bf, ln_bf_plus_err=plus.ln_bf_err, ln_bf_minus=minus.ln_bf,
                       ln_bf_minus_err=minus.ln_bf_err, ln_bf_sign=plus.ln_bf - minus.ln_bf, ln_bf_sign_err=error,
                       weight_plus=sign_weight(plus.ln_bf, minus.ln_bf), method=sample_set_name(plus),
                       note="weight_plus = BF+ / (BF+ + BF-); sign error: the two errors in quadrature")


def headline(methods) -> dict | None:
    """The event's headline ln BF (memory vs none): ln BF+ of :func:`event_pair`, with ln BF- beside it, and the
    best other estimate that has an error (another family first, else another sample set) as a cross-check:
    difference and its size in combined standard errors."""
    chosen = event_pair(methods)
    if chosen is None:
        return None
    estimate = chosen["memory"]
    minus = chosen.get("flipped")
    out = {"ln_bf": estimate.ln_bf, "ln_bf_err": estimate.ln_bf_err, "method": sample_set_name(estimate),
           "sample_set": estimate.sample_set, "ln_bf_minus": None if minus is None else minus.ln_bf,
           "ln_bf_minus_err": None if minus is None else minus.ln_bf_err, "rule": RULE, "cross_check": None}
    others = [g for g in _candidates(methods, ("memory",))
              if g["memory"] is not estimate and g["memory"].ln_bf_err is not None]
    if others:
        other = min(others, key=lambda g: (g["memory"].family == estimate.family, _order(g, ("memory",))))["memory"]
        difference = other.ln_bf - estimate.ln_bf
        combined = float(np.hypot(other.ln_bf_err, estimate.ln_bf_err or 0.0))
        out["cross_check"] = {"method": other.method, "ln_bf": other.ln_bf, "ln_bf_err": other.ln_bf_err,
                              "difference": difference,
                              "difference_in_errors": difference / combined if combined > 0 else None}
    return out
