"""The catalog result: what ``memory-infer combine`` writes as catalog.json."""
from __future__ import annotations

from dataclasses import dataclass, field

from .base import ResultFile
from .catalog_blocks import AmplitudePosterior, CatalogSum, Consistency, ExpectedVersusObserved
from .cautions import EVIDENCE
from .population import PopulationModels


@dataclass
class CatalogResult(ResultFile):
    """Catalog sums with their errors, the shared-amplitude posterior, per-event entries and bookkeeping."""

    KIND = "catalog"
    FILE = "catalog.json"
    NESTED = {"consistent_sign": CatalogSum, "wrong_sign": CatalogSum, "sign_agnostic": CatalogSum,
              "amplitude": AmplitudePosterior, "shared_unknown_sign": CatalogSum,
              "expected_vs_observed": ExpectedVersusObserved, "consistency": Consistency,
              "population": PopulationModels}

    consistent_sign: CatalogSum
    wrong_sign: CatalogSum
    sign_agnostic: CatalogSum
    amplitude: AmplitudePosterior
    shared_unknown_sign: CatalogSum = field(default_factory=CatalogSum)
    events: list = field(default_factory=list)
    ranking: list = field(default_factory=list)
    cumulative_ln_bf_plus: list = field(default_factory=list)
    cumulative_ln_bf_plus_err: list = field(default_factory=list)
    dropped: list = field(default_factory=list)
    expected_vs_observed: ExpectedVersusObserved = field(default_factory=ExpectedVersusObserved)
    controls: list = field(default_factory=list)  # control events (no memory injected, or flagged), not summed
    consistency: Consistency = field(default_factory=Consistency)  # each event against the rest (leave-one-out)
    population: PopulationModels = field(default_factory=PopulationModels)  # models of the amplitudes, with evidences
    method_rule: str = ""
    n_events: int = 0
    event_runs: list = field(default_factory=list)  # a catalog run's events: status, reason, page, wall time
    caution: str = EVIDENCE
    provenance: dict | None = None
