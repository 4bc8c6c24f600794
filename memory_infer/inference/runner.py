"""One event end to end: the configured evidence methods in the strategies' order, what each found filed into
the result (estimates, amplitude curve, the weights figure's data, sign proposals ranked by the families'
preference), the memory SNR at the reference point, the other figures' data, and the headline."""
from __future__ import annotations

import logging
import os

from ..common.errors import MemoryInferError
from ..results.event import EventResult
from ..results.methods import preference_rank
from ..waveform.source import EARLY_INSPIRAL_EFFECT
from .figures import importance_weights, memory_spectrum, whitened_series
from .hypotheses import NONE
from .likelihood import memory_snr
from .methods import STRATEGIES, Found, RunState
from .setup import EventSetup

logger = logging.getLogger("memory_infer")

FAILURE_TREATMENT = "a failed waveform counts as zero likelihood (ln L = -inf)"


def run_methods(setup: EventSetup, outdir: str, names, label: str, progress: bool = True,
                strategies: tuple = STRATEGIES) -> RunState:
    """Run the evidence methods ``names`` (in the order of ``strategies``) on one setup; returns their state."""
    state = RunState(setup=setup, outdir=outdir, progress=progress, result=EventResult(event=label))
    setup.lookup_path = os.path.join(outdir, "runs", "distance_lookup.npz")
    os.makedirs(os.path.join(outdir, "runs"), exist_ok=True)
    for method in strategies:
        if method.name in names:
            file_found(state, method().run(state))
    return state


def file_found(state: RunState, found: Found) -> None:
    """File what one method found into the event's result: its estimates in order, the A posterior, the first
    amplitude curve, each sample set's importance weights (figure data), and its sign summaries as candidates
    ranked by their family's preference rank (the order the preference rule gives families among equal errors;
    a family without a rank is a cross-check and proposes none)."""
    result = state.result
    result.methods.extend(found.estimates)
    if found.free_amplitude is not None:
        result.free_amplitude = found.free_amplitude
    if found.amplitude_curve is not None and result.amplitude_curve is None:
        result.amplitude_curve = found.amplitude_curve
    if found.tables:
        result.figures.setdefault("weights", {}).update(importance_weights(state.setup.grid, found.tables))
    for family, sign in found.signs.items():
        rank = preference_rank(family)
        if rank is not None:
            state.propose_sign(rank, sign)


def run_event(setup: EventSetup, outdir: str, progress: bool = True) -> EventResult:
    """Every configured method on one event, and the result as evidence.json holds it."""
    settings = setup.settings
    failures_before = setup.generator.failures
    label = settings.event.label
    result_warnings = list(setup.notes)
    state = run_methods(setup, outdir, settings.evidence.methods, label, progress)
    result = state.result
    result.warnings[:0] = result_warnings
    point, where = state.reference_point()
    if point is not None:
        if state.memory_snr is None:
            plain, _ = setup.likelihood(NONE, marginalize=False)
            products = plain.inner_products(point)
            if products is None:
                raise MemoryInferError("the waveform failed at the chosen parameter point")
            state.memory_snr = memory_snr(products)
        result.memory_snr = {"value": state.memory_snr, "error": None, "point": where,
                             "method": "optimal network SNR of the memory alone, sqrt(<h_mem, h_mem>), "
                                       "deterministic at that point"}
        result.figures["reference_point"] = point
        result.figures["whitened"] = whitened_series(setup.detectors, setup.generator, point)
        result.figures["spectrum"] = memory_spectrum(setup.detectors, setup.generator, point,
                                                     settings.data.minimum_frequency)
    result.figures["free_amplitude_limits"] = list(settings.evidence.free_amplitude_limits)
    result.choose_headline([state.signs[rank] for rank in sorted(state.signs)])
    result.early_inspiral_memory = {"included": bool(settings.model.early_inspiral_memory),
                                    "method": "leading-order memory accumulated before the model's first sample",
                                    "effect": EARLY_INSPIRAL_EFFECT}
    result.settings = setup.settings_fingerprint()
    result.injection = None if setup.injection is None else {k: float(v) for k, v in setup.injection.items()}
    result.control = EventResult.control_reason(bool(settings.event.control), result.injection)
    failures = setup.generator.failures - failures_before
    result.waveform_failures = {"count": failures, "treatment": FAILURE_TREATMENT}
    if failures:
        result.warnings.append(f"{failures} waveform evaluations failed during sampling or reweighting and were "
                               "counted as zero likelihood")
    return result
