"""One event's result: what ``memory-infer evidence`` writes as evidence.json and every later stage reads."""
from __future__ import annotations

from dataclasses import dataclass, field

from .base import ResultFile
from .cautions import EVIDENCE
from .event_blocks import Headline, MemorySNR
from .estimates import AmplitudeCurve, EvidenceEstimate, SignSummary, consistent_sign, event_pair, headline


@dataclass
class EventResult(ResultFile):
    """Bayes factors of one event with their errors and methods, and the data its report draws.

    ``figures`` holds the figures' data (whitened data and models, memory spectrum, importance
    weights), so the report is rebuilt from this result alone.
    """

    KIND = "event"
    FILE = "evidence.json"
    NESTED = {"methods": (list, EvidenceEstimate), "sign": SignSummary, "amplitude_curve": AmplitudeCurve,
              "headline": Headline, "memory_snr": MemorySNR}

    event: str
    headline: Headline | None = None
    methods: list = field(default_factory=list)
    sign: SignSummary | None = None
    memory_snr: MemorySNR | None = None
    amplitude_curve: AmplitudeCurve | None = None
    free_amplitude: dict | None = None
    early_inspiral_memory: dict | None = None
    settings: dict = field(default_factory=dict)
    warnings: list = field(default_factory=list)
    waveform_failures: dict = field(default_factory=lambda: {"count": 0, "treatment": ""})
    caution: str = EVIDENCE
    provenance: dict | None = None
    figures: dict = field(default_factory=dict)
    sample_checks: dict = field(default_factory=dict)  # outside samples: their settings and likelihood mismatch
    injection: dict | None = None  # simulated data: the injected parameters, memory_amplitude among them
    control: str = ""  # why the event is a control kept out of catalog sums ("" for an ordinary event)

    @staticmethod
    def control_reason(flagged: bool, injection: dict | None) -> str:
        """Why an event is a control: injected without memory (A = 0), or marked ``control = true`` in [event]."""
        if injection is not None and float(injection.get("memory_amplitude", 1.0)) == 0.0:
            return "injected without memory (A = 0)"
        return "marked as a control in its configuration ([event] control = true)" if flagged else ""

    def choose_headline(self, signs=None) -> None:
        """Set ``headline`` and ``sign`` by the one rule (:func:`memory_infer.results.estimates.event_pair`):
        the sign table holds the headline's ln BF+ and its ln BF- from the same sample set. ``signs`` are the
        candidate sign summaries in order of preference (default: the present one)."""
        self.headline = headline(self.methods)
        candidates = list(signs) if signs is not None else [self.sign]
        self.sign = consistent_sign(event_pair(self.methods), candidates)
