"""The catalog result: what ``memory-infer combine`` writes as catalog.json."""
from __future__ import annotations

from dataclasses import dataclass, field

from .base import ResultFile
from .cautions import EVIDENCE
from .population import PopulationModels


@dataclass
class CatalogResult(ResultFile):
    """Catalog sums with their errors, the shared-amplitude posterior, per-event entries and bookkeeping."""

    KIND = "catalog"
    FILE = "catalog.json"
    NESTED = {"population": PopulationModels}

    consistent_sign: dict
    wrong_sign: dict
    sign_agnostic: dict
    amplitude: dict
    shared_unknown_sign: dict = field(default_factory=dict)
    events: list = field(default_factory=list)
    ranking: list = field(default_factory=list)
    cumulative_ln_bf_plus: list = field(default_factory=list)
    cumulative_ln_bf_plus_err: list = field(default_factory=list)
    dropped: list = field(default_factory=list)
    expected_vs_observed: dict = field(default_factory=dict)
    controls: list = field(default_factory=list)  # control events (no memory injected, or flagged), not summed
    consistency: dict = field(default_factory=dict)  # each event against the shared amplitude (leave-one-out)
    population: PopulationModels = field(default_factory=PopulationModels)  # models of the amplitudes, with evidences
    method_rule: str = ""
    n_events: int = 0
    event_runs: list = field(default_factory=list)  # a catalog run's events: status, reason, page, wall time
    caution: str = EVIDENCE
    provenance: dict | None = None
