"""What an evidence method sees while one event runs, what it hands back, and the interface every method
implements (the methods an event runs, in order, are ``memory_infer.inference.methods.STRATEGIES``)."""
from __future__ import annotations

import logging
from dataclasses import dataclass, field
from typing import ClassVar

import numpy as np

from ...inputs.checks import SOURCE_PARAMETERS
from ...results.estimates import AmplitudeCurve
from ...results.event import EventResult
from ..hypotheses import FREE, MEMORY, NONE

logger = logging.getLogger("memory_infer")


def fixed_values(priors) -> dict:
    """Values of the fixed (delta-function) priors; constraint priors hold no value and are skipped."""
    return {k: float(v.peak) for k, v in (priors or {}).items()
            if getattr(v, "is_fixed", False) and hasattr(v, "peak")}


@dataclass
class RunState:
    """One event's run in progress: its setup, output folder, the result being filled, and what
    earlier methods left for later ones (nested posteriors, the best sample, sign proposals)."""

    setup: object  # memory_infer.inference.setup.EventSetup (or any object with the same attributes)
    outdir: str
    progress: bool
    result: EventResult
    nested: dict = field(default_factory=dict)  # Hypothesis -> bilby Result
    best_sample: tuple | None = None  # (parameters, where they came from)
    signs: dict = field(default_factory=dict)  # preference rank of the family -> SignSummary; the lowest wins
    memory_snr: float | None = None

    @property
    def label(self) -> str:
        return self.result.event

    def warn(self, text: str) -> None:
        self.result.warnings.append(text)

    def propose_sign(self, rank: int, summary) -> None:
        """A candidate sign summary at ``rank`` (its family's preference rank); the first at a rank is kept."""
        self.signs.setdefault(rank, summary)

    def reference_point(self):
        """(point, where) for the fast estimates and the memory SNR: the injection; else the
        maximum-likelihood sample of a nested run; else the best no-memory fit among reweighted samples.
        Samples are used only without distance or time marginalization (their values are then sampled)."""
        setup = self.setup
        if setup.injection is not None:
            return {k: v for k, v in setup.injection.items() if k != "memory_amplitude"}, "the injection"
        if setup.marginalized:
            return None, None
        for hypothesis in (NONE, FREE, MEMORY):
            if hypothesis in self.nested:
                posterior = self.nested[hypothesis].posterior
                best = posterior.iloc[int(np.argmax(posterior["log_likelihood"].to_numpy()))]
                point = {k: float(best[k]) for k in SOURCE_PARAMETERS if k in best}
                point.update({k: v for k, v in fixed_values(setup.priors).items() if k not in point})
                return point, f"the maximum-likelihood sample of the '{hypothesis}' run"
        if self.best_sample is not None:
            sample, where = self.best_sample
            point = fixed_values(setup.priors)
            point.update({k: v for k, v in sample.items() if k in SOURCE_PARAMETERS})
            return point, where
        return None, None


@dataclass
class Found:
    """What one method found on one event; the runner files it into the result.

    ``estimates``: its :class:`~memory_infer.results.estimates.EvidenceEstimate` in order; ``signs``: family ->
    the sign summary that family's estimates give; ``amplitude_curve``: ``ln <L(A)/L(0)>`` on the grid, if the
    method has one; ``free_amplitude``: the posterior of A with A free, if run; ``tables``: per sample set, the
    amplitude the samples were drawn under and their ``ln L - ln L_noise`` on the amplitude grid (rows: samples).
    """

    estimates: list = field(default_factory=list)
    signs: dict = field(default_factory=dict)
    amplitude_curve: AmplitudeCurve | None = None
    free_amplitude: dict | None = None
    tables: dict = field(default_factory=dict)


class EvidenceMethod:
    """One way of estimating the Bayes factors of an event. Subclasses set ``name`` (what ``[evidence] methods``
    lists), ``describes`` (the :class:`~memory_infer.results.methods.MethodDescription` of each family of
    estimates they make, from ``memory_infer.results.methods.DESCRIPTIONS``) and implement :meth:`run`,
    returning what they found."""

    name: ClassVar[str] = ""
    describes: ClassVar[tuple] = ()

    def run(self, state: RunState) -> Found:
        raise NotImplementedError
