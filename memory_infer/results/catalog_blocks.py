"""The catalog result's blocks as typed parts: its sums, the shared-amplitude posterior, the expected against
observed sum and each event's consistency with the rest (:mod:`memory_infer.catalog.combine` and
:mod:`memory_infer.catalog.consistency` compute them; the catalog page reads them). The JSON keeps its keys and
their order; a field at :data:`.base.ABSENT` is a key not written (by this version, or by an older one)."""
from __future__ import annotations

from dataclasses import dataclass

from .base import ABSENT, Block


@dataclass(frozen=True)
class CatalogSum(Block):
    """One combination of the events' ln BF (consistent sign, wrong sign, sign-agnostic, shared unknown sign): its
    value, error, formula, and for the shared unknown sign the weight of A = +1."""

    ln_bf: float = ABSENT
    ln_bf_err: float | None = ABSENT
    formula: str = ABSENT
    weight_plus: float = ABSENT
    note: str = ABSENT


@dataclass(frozen=True)
class FlaggedCurve(Block):
    """An event whose amplitude curve has fewer effective samples than the threshold on part of the grid."""

    label: str
    fewest: float
    below_threshold_from: float
    below_threshold_to: float
    inside_catalog_90: bool


@dataclass(frozen=True)
class EffectiveSampleCheck(Block):
    threshold: float
    flagged: list
    note: str

    NESTED = {"flagged": (list, FlaggedCurve)}


@dataclass(frozen=True)
class AmplitudePosterior(Block):
    """The posterior of one amplitude shared by every event on the common grid: median and 90% interval with
    replica errors, posterior over prior density at A = 0 and 1, the curves it multiplies, its prior and method;
    with no amplitude curve the numbers are None and ``note`` says so."""

    median: float | None = ABSENT
    lower_90: float | None = ABSENT
    upper_90: float | None = ABSENT
    density_ratio_at_zero: float | None = ABSENT
    density_ratio_at_one: float | None = ABSENT
    median_err: float = ABSENT
    lower_90_err: float = ABSENT
    upper_90_err: float = ABSENT
    events: int = ABSENT
    note: str = ABSENT
    grid: list = ABSENT
    ln_density: list = ABSENT
    event_curves: dict = ABSENT  # event label -> ln <L(A)/L(0)> on the grid
    prior: str = ABSENT
    prior_note: str = ABSENT
    density_ratio_note: str = ABSENT
    effective_samples: EffectiveSampleCheck = ABSENT
    method: str = ABSENT

    NESTED = {"effective_samples": EffectiveSampleCheck}


@dataclass(frozen=True)
class ExpectedVersusObserved(Block):
    """The consistent-sign sum against sum rho^2/2 and its spread under GR memory (None without memory SNRs);
    ``expected_spread`` is absent from a catalog.json written before it was recorded."""

    expected_ln_bf_plus: float | None = ABSENT
    expected_spread: float | None = ABSENT
    observed_ln_bf_plus: float = ABSENT
    observed_err: float | None = ABSENT
    events_with_snr: int = ABSENT
    expected_without_memory: float = ABSENT
    standard_deviations: float | None = ABSENT
    p_value: float | None = ABSENT
    method: str = ABSENT


@dataclass(frozen=True)
class EventConsistency(Block):
    """One event's amplitude posterior against that of all the others (leave-one-out)."""

    p_value: float
    probability_above_rest: float
    median: float
    rest_median: float


@dataclass(frozen=True)
class Consistency(Block):
    """Each event against the rest of the catalog, the events in tension at ``level``, the method, and a note."""

    events: dict = ABSENT  # event label -> EventConsistency
    in_tension: list = ABSENT
    level: float | None = ABSENT
    method: str = ABSENT
    note: str = ABSENT

    NESTED = {"events": (dict, EventConsistency)}
