"""Importance reweighting of posterior samples drawn under A = a0.

``BF(A) = mean_i L(A, th_i) / L(a0, th_i)`` in log space; effective sample size
``(sum w)^2 / sum w^2``; Monte-Carlo error of ln BF ``sqrt(var w / n) / mean w``. Samples whose
waveform failed count as zero likelihood.
"""
from __future__ import annotations

import logging

import numpy as np

from ...common.errors import MemoryInferError, WaveformError
from ...results.estimates import AmplitudeCurve, EvidenceEstimate, SignSummary, grid_index, prior_on_grid, sign_weight
from ..hypotheses import HYPOTHESES, hypothesis_name
from .base import EvidenceMethod, RunState, fixed_values

logger = logging.getLogger("memory_infer")


def log_likelihood_grid(likelihood, samples, amplitudes, progress: bool = False):
    """``ln L(A) - ln L_noise`` for every sample (rows) and amplitude (columns); -inf for failed waveforms."""
    amplitudes = np.asarray(amplitudes, dtype=float)
    records = samples.to_dict("records") if hasattr(samples, "to_dict") else list(samples)
    fixed = fixed_values(likelihood.priors)
    out = np.empty((len(records), amplitudes.size))
    failures = 0
    iterator = records
    if progress:
        from tqdm import tqdm

        iterator = tqdm(records, desc="reweighting", unit="sample", leave=False)
    for i, record in enumerate(iterator):
        point = dict(fixed, **{k: v for k, v in record.items() if isinstance(v, (int, float, np.number))})
        if likelihood.time_marginalization and "time_jitter" not in point:
            point["time_jitter"] = 0.0
        try:
            out[i] = likelihood.log_likelihood_ratio_curve(point, amplitudes)
        except WaveformError:
            out[i] = -np.inf
            failures += 1
    if failures:
        generator = likelihood.waveform_generator
        if hasattr(generator, "failures"):
            generator.failures += failures
        logger.warning("%d of %d samples had a failed waveform and count as zero likelihood", failures, len(records))
    return out


def mean_ratio(log_weights: np.ndarray):
    """(ln mean w, its Monte-Carlo error, effective sample size) from log weights."""
    log_weights = np.asarray(log_weights, dtype=float)
    finite = np.isfinite(log_weights)
    n = log_weights.size
    if not np.any(finite):
        return -np.inf, np.inf, 0.0
    top = np.max(log_weights[finite])
    w = np.where(finite, np.exp(log_weights - top), 0.0)
    mean = w.mean()
    ln_mean = float(np.log(mean) + top)
    error = float(np.sqrt(w.var(ddof=1) / n) / mean) if n > 1 else np.inf
    ess = float(w.sum() ** 2 / np.sum(w ** 2))
    return ln_mean, error, ess


def amplitude_curve(log_likelihoods: np.ndarray, amplitudes, base_amplitude: float) -> AmplitudeCurve:
    """``ln <L(A)/L(a0)>`` on the grid, from a samples x amplitudes table of log likelihoods."""
    amplitudes = np.asarray(amplitudes, dtype=float)
    base = int(np.argmin(np.abs(amplitudes - base_amplitude)))
    if abs(amplitudes[base] - base_amplitude) > 1e-9:
        raise MemoryInferError(f"the amplitude grid must contain the samples' own amplitude {base_amplitude:g}")
    values = [mean_ratio(log_likelihoods[:, k] - log_likelihoods[:, base]) for k in range(amplitudes.size)]
    return AmplitudeCurve(amplitudes=amplitudes.tolist(), ln_mean_ratio=[v[0] for v in values],
                          ln_mean_ratio_err=[v[1] for v in values], effective_sample_size=[v[2] for v in values],
                          base_amplitude=float(base_amplitude), number_of_samples=int(log_likelihoods.shape[0]))


def reweighting_estimate(log_likelihoods, amplitudes, base_amplitude: float, numerator: float,
                         denominator: float, minimum_effective_samples: float = 50.0) -> EvidenceEstimate:
    """ln BF(numerator vs denominator) from samples drawn under ``base_amplitude`` (one of the two)."""
    log_ratio = (log_likelihoods[:, grid_index(amplitudes, numerator)]
                 - log_likelihoods[:, grid_index(amplitudes, denominator)])
    if abs(base_amplitude - denominator) < 1e-9:
        ln_bf, error, ess = mean_ratio(log_ratio)
        direction = f"from the A = {denominator:g} posterior"
    elif abs(base_amplitude - numerator) < 1e-9:
        ln_inverse, error, ess = mean_ratio(-log_ratio)
        ln_bf = -ln_inverse
        direction = f"from the A = {numerator:g} posterior (inverse mean)"
    else:
        raise MemoryInferError("reweighting needs samples drawn under one of the two hypotheses compared")
    n = int(log_likelihoods.shape[0])
    reliable = bool(ess >= minimum_effective_samples and np.isfinite(ln_bf))
    if reliable:
        note = f"{ess:.0f} effective of {n} samples"
    elif ess > 0.5 * n:
        note = (f"only {n} samples in all (need {minimum_effective_samples:g} effective): draw more posterior "
                "samples (more live points)")
    else:
        note = (f"only {ess:.1f} effective of {n} samples (need {minimum_effective_samples:g}): the two posteriors "
                "do not overlap enough; use nested sampling or the free-amplitude run for this event")
    return EvidenceEstimate(method=f"importance reweighting {direction}", ln_bf=float(ln_bf), ln_bf_err=float(error),
                            numerator=hypothesis_name(numerator), denominator=hypothesis_name(denominator),
                            effective_sample_size=float(ess), number_of_samples=n, reliable=reliable, note=note,
                            family="reweighting", base_amplitude=float(base_amplitude))


def estimates_from_table(table, grid, base_amplitude: float, minimum_effective_samples: float = 50.0) -> list:
    """ln BF of A = +1 and -1 against 0 from samples drawn under A = 0; of A = a0 against 0 otherwise."""
    pairs = [(1.0, 0.0), (-1.0, 0.0)] if base_amplitude == 0.0 else [(base_amplitude, 0.0)]
    return [reweighting_estimate(table, grid, base_amplitude, numerator, denominator, minimum_effective_samples)
            for numerator, denominator in pairs]


def reweight(likelihood, samples, base_amplitude: float = 0.0, grid=None, minimum_effective_samples: float = 50.0,
             progress: bool = False):
    """Reweight posterior ``samples`` drawn under A = ``base_amplitude`` with a memory ``likelihood``.

    Returns (estimates, amplitude curve): ln BF of A = +1 and A = -1 against A = 0 (or of A = a0 against 0)
    with Monte-Carlo errors and effective sample sizes, and ``ln <L(A)/L(a0)>`` on ``grid``
    (default -4 to 4 in 81 steps, always holding -1, 0 and 1).
    """
    from ...inputs.config import grid_with_hypotheses

    grid = grid_with_hypotheses(-4.0, 4.0, 81) if grid is None else np.asarray(grid, dtype=float)
    table = log_likelihood_grid(likelihood, samples, grid, progress=progress)
    return (estimates_from_table(table, grid, base_amplitude, minimum_effective_samples),
            amplitude_curve(table, grid, base_amplitude))


def sign_from_curve(curve: AmplitudeCurve, free_limits=(-5.0, 5.0)) -> SignSummary:
    """ln BF+, ln BF-, the sign Bayes factor, ``weight_plus`` = BF+ / (BF+ + BF-), and the posterior mass of
    A > 0 for a uniform prior on ``free_limits`` (limited to the grid's span, and said so)."""
    plus, plus_err, _ = curve.at(1.0)
    minus, minus_err, _ = curve.at(-1.0)
    amplitudes = np.asarray(curve.amplitudes)
    low, high, cut = prior_on_grid(amplitudes, free_limits)
    inside = (amplitudes >= low) & (amplitudes <= high)
    grid = amplitudes[inside]
    ln_values = np.asarray(curve.ln_mean_ratio)[inside]
    density = np.exp(ln_values - np.max(ln_values))
    total = np.trapezoid(density, grid)
    above = grid >= 0
    positive = np.trapezoid(density[above], grid[above]) if np.count_nonzero(above) > 1 else 0.0
    note = (f"weight_plus = BF+ / (BF+ + BF-); mass_above_zero: posterior mass of A > 0 for a uniform prior on "
            f"[{low:g}, {high:g}] from the amplitude curve" + (f" ({cut})" if cut else ""))
    return SignSummary(ln_bf_plus=plus, ln_bf_plus_err=plus_err, ln_bf_minus=minus, ln_bf_minus_err=minus_err,
                       ln_bf_sign=plus - minus, ln_bf_sign_err=float(np.hypot(plus_err, minus_err)),
                       weight_plus=sign_weight(plus, minus), method=curve.method, note=note,
                       mass_above_zero=float(positive / total) if total > 0 else 0.5)


class Reweighting(EvidenceMethod):
    """Reweights the nested runs named in ``[evidence] reweight_from`` and the samples of ``samples_file``
    (at most ``max_reweight_samples`` of each, drawn with the sampler's seed)."""

    name = "reweighting"

    def run(self, state: RunState) -> None:
        setup = state.setup
        evidence, seed = setup.config["evidence"], int(setup.config["sampler"]["seed"])
        sample_sets = {}
        for hypothesis in evidence["reweight_from"]:
            if hypothesis in state.nested:
                sample_sets[hypothesis] = (state.nested[hypothesis].posterior, HYPOTHESES[hypothesis])
        if setup.external_samples is not None:
            amplitude = float(evidence["samples_amplitude"])
            sample_sets[f"file ({hypothesis_name(amplitude)})"] = (setup.external_samples, amplitude)
        if not sample_sets:
            state.warn("reweighting asked for, but there are no posterior samples (run 'nested' for the "
                       "'none' or 'memory' hypothesis, or give samples_file)")
        limit, minimum = int(evidence["max_reweight_samples"]), float(evidence["minimum_effective_samples"])
        grid = setup.grid
        for name, (frame, base) in sample_sets.items():
            if len(frame) > limit:
                frame = frame.sample(n=limit, random_state=seed)
            hypothesis = hypothesis_name(base) if hypothesis_name(base) in HYPOTHESES else "none"
            likelihood, _ = setup.likelihood(hypothesis)
            logger.info("%s: reweighting %d samples drawn under A = %g", state.label, len(frame), base)
            table = log_likelihood_grid(likelihood, frame, grid, progress=state.progress)
            for estimate in estimates_from_table(table, grid, base, minimum):
                estimate.method += f" [{name}]"
                estimate.sample_set = name
                state.result.methods.append(estimate)
                if not estimate.reliable:
                    state.warn(f"{state.label}: {estimate.note}")
            index_one = grid_index(grid, 1.0 if base == 0 else 0.0, exact=False)
            base_index = grid_index(grid, base, exact=False)
            state.result.figures.setdefault("weights", {})[name] = (table[:, index_one] - table[:, base_index]).tolist()
            zero = table[:, grid_index(grid, 0.0, exact=False)]
            if np.any(np.isfinite(zero)) and state.best_sample is None:
                best = frame.iloc[int(np.nanargmax(np.where(np.isfinite(zero), zero, -np.inf)))]
                state.best_sample = ({k: float(best[k]) for k in frame.columns
                                      if isinstance(best[k], (int, float, np.number))},
                                     f"the best no-memory fit among the reweighted samples [{name}]")
            if base == 0.0 and state.result.amplitude_curve is None:
                curve = amplitude_curve(table, grid, 0.0)
                state.result.amplitude_curve = curve
                sign = sign_from_curve(curve, evidence["free_amplitude_limits"])
                if min(curve.at(1.0)[2], curve.at(-1.0)[2]) < minimum:
                    sign.note += "; too few effective samples at A = +-1: treat with care"
                state.propose_sign(0, sign)
