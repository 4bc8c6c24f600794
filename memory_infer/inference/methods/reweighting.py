"""Importance reweighting of posterior samples drawn under A = a0.

``BF(A) = mean_i w_i`` with ``w_i = L(A, th_i) / L(a0, th_i)``, in log space, over the n usable samples.

- **Failed waveforms.** A sample whose waveform fails has neither L(A) nor L(a0): it is left out of the mean
  and of n (counting it as zero weight would bias BF down by the failed fraction), and the count is reported.
- **Duplicates.** Posterior files often repeat samples (equal-weight resampling draws the same point several
  times). Identical samples are evaluated once and treated as one draw with multiplicity k_j: with
  ``s_j = k_j w_j`` and ``m = sum_j s_j / n``, the Monte-Carlo variance of m is the cluster (between-sample)
  variance ``J/(J-1) sum_j (s_j - k_j m)^2 / n^2`` over the J distinct samples, and the effective sample size is
  ``(sum_j s_j)^2 / sum_j s_j^2``. Without duplicates these are ``var(w)/n`` and ``(sum w)^2 / sum w^2``.
- The error of ln BF is ``sqrt(var m) / m``; below two effective samples it is undefined (None: one weight
  carries the mean and the variance estimate says nothing), never 0.
"""
from __future__ import annotations

import logging

import numpy as np

from ...common.errors import MemoryInferError, WaveformError
from ...inputs.settings import AMPLITUDE_GRID, FREE_AMPLITUDE_LIMITS
from ...results.estimates import AmplitudeCurve, EvidenceEstimate, SignSummary, grid_index, prior_on_grid, sign_weight
from ...results.estimates import ERROR_UNDEFINED_TEXT as ERROR_UNDEFINED
from ...results.methods import REWEIGHTING as DESCRIPTION
from ..hypotheses import HYPOTHESES, NONE, amplitude_label, fixed_at
from .base import EvidenceMethod, Found, RunState, fixed_values

logger = logging.getLogger("memory_infer")

MINIMUM_FOR_ERROR = 2.0  # effective samples below which the Monte-Carlo error is undefined


def sample_labels(samples) -> np.ndarray:
    """One integer per sample, equal for identical samples (every numeric column equal)."""
    records = samples.to_dict("records") if hasattr(samples, "to_dict") else list(samples)
    keys = [tuple(sorted((k, float(v)) for k, v in r.items() if isinstance(v, (int, float, np.number))))
            for r in records]
    index = {}
    return np.array([index.setdefault(key, len(index)) for key in keys], dtype=int)


def log_likelihood_grid(likelihood, samples, amplitudes, progress: bool = False, labels=None):
    """``ln L(A) - ln L_noise`` for every sample (rows) and amplitude (columns); NaN for failed waveforms.
    Identical samples (``labels``, from :func:`sample_labels` when not given) are evaluated once."""
    amplitudes = np.asarray(amplitudes, dtype=float)
    records = samples.to_dict("records") if hasattr(samples, "to_dict") else list(samples)
    labels = sample_labels(records) if labels is None else np.asarray(labels)
    first = {}
    for i, label in enumerate(labels):
        first.setdefault(int(label), i)
    fixed = fixed_values(likelihood.priors)
    unique = np.empty((len(first), amplitudes.size))
    failures = raised = 0
    generator = likelihood.waveform_generator
    iterator = sorted(first.items())
    if progress:
        from tqdm import tqdm

        iterator = tqdm(iterator, desc="reweighting", unit="sample", leave=False)
    for label, i in iterator:
        record = records[i]
        point = dict(fixed, **{k: v for k, v in record.items() if isinstance(v, (int, float, np.number))})
        if likelihood.time_marginalization:
            # bilby's time grid counts from the segment start, where its sampler holds geocent_time; a sample's
            # own time (reconstructed, or from another run) would shift every grid time by the difference
            point["geocent_time"] = float(likelihood.interferometers.start_time)
            point.setdefault("time_jitter", 0.0)
        caught = getattr(generator, "failures", 0)
        try:
            unique[label] = likelihood.log_likelihood_ratio_curve(point, amplitudes)
        except WaveformError:
            unique[label] = np.nan
            failures += 1
            raised += 1
        else:
            if getattr(generator, "failures", 0) > caught:  # the generator caught it and returned no waveform
                unique[label] = np.nan
                failures += 1
    if failures:
        if hasattr(generator, "failures"):
            generator.failures += raised
        logger.warning("%d of %d distinct samples had a failed waveform and are left out", failures, len(first))
    return unique[labels]


def _distinct_sums(labels, *weights):
    """(multiplicity k_j, then the sum of each weight array) per distinct sample j."""
    _, cluster, counts = np.unique(labels, return_inverse=True, return_counts=True)
    return (counts, *(np.bincount(cluster, weights=w) for w in weights))


def mean_ratio(log_weights: np.ndarray, labels=None):
    """(ln mean w, its Monte-Carlo error, effective sample size) from log weights; NaN entries (failed
    waveforms) are left out; ``labels`` mark identical samples (module docstring)."""
    log_weights = np.asarray(log_weights, dtype=float)
    usable = ~np.isnan(log_weights)
    labels = np.arange(log_weights.size) if labels is None else np.asarray(labels)
    log_weights, labels = log_weights[usable], labels[usable]
    n = log_weights.size
    finite = np.isfinite(log_weights)
    if not np.any(finite):
        return -np.inf, None, 0.0
    top = np.max(log_weights[finite])
    w = np.where(finite, np.exp(log_weights - top), 0.0)
    mean = w.mean()
    ln_mean = float(np.log(mean) + top)
    counts, sums = _distinct_sums(labels, w)
    distinct = sums.size
    if distinct > 1:
        variance = distinct / (distinct - 1) * np.sum((sums - counts * mean) ** 2) / n ** 2
        error = float(np.sqrt(variance) / mean)
    else:
        error = None
    ess = float(sums.sum() ** 2 / np.sum(sums ** 2))
    return ln_mean, (error if ess >= MINIMUM_FOR_ERROR else None), ess


def ratio_of_means(log_numerator, log_denominator, labels=None):
    """(ln[mean a / mean b], its Monte-Carlo error, smaller effective sample size) for weights a, b given in logs
    over the same samples: the proposal-corrected Bayes factor ``mean(L_1/L_src) / mean(L_0/L_src)``.

    The error is the delta method over distinct samples j: ``z_j = (S_a,j - k_j m_a)/m_a - (S_b,j - k_j m_b)/m_b``,
    ``var = J/(J-1) sum_j z_j^2 / n^2`` (a and b are correlated, so their errors do not add in quadrature)."""
    log_numerator, log_denominator = np.asarray(log_numerator, float), np.asarray(log_denominator, float)
    usable = ~(np.isnan(log_numerator) | np.isnan(log_denominator))
    labels = np.arange(usable.size) if labels is None else np.asarray(labels)
    log_numerator, log_denominator, labels = log_numerator[usable], log_denominator[usable], labels[usable]
    if not (np.any(np.isfinite(log_numerator)) and np.any(np.isfinite(log_denominator))):
        return np.nan, None, 0.0
    n = log_numerator.size
    a = np.exp(log_numerator - np.max(log_numerator[np.isfinite(log_numerator)]))
    b = np.exp(log_denominator - np.max(log_denominator[np.isfinite(log_denominator)]))
    mean_a, mean_b = a.mean(), b.mean()
    ln_ratio = float(np.log(mean_a) + np.max(log_numerator[np.isfinite(log_numerator)])
                     - np.log(mean_b) - np.max(log_denominator[np.isfinite(log_denominator)]))
    counts, sums_a, sums_b = _distinct_sums(labels, a, b)
    distinct = sums_a.size
    z = (sums_a - counts * mean_a) / mean_a - (sums_b - counts * mean_b) / mean_b
    error = float(np.sqrt(distinct / (distinct - 1) * np.sum(z ** 2)) / n) if distinct > 1 else None
    ess = float(min(sums_a.sum() ** 2 / np.sum(sums_a ** 2), sums_b.sum() ** 2 / np.sum(sums_b ** 2)))
    return ln_ratio, (error if ess >= MINIMUM_FOR_ERROR else None), ess


def amplitude_curve(log_likelihoods: np.ndarray, amplitudes, base_amplitude: float, labels=None) -> AmplitudeCurve:
    """``ln <L(A)/L(a0)>`` on the grid, from a samples x amplitudes table of log likelihoods."""
    amplitudes = np.asarray(amplitudes, dtype=float)
    base = int(np.argmin(np.abs(amplitudes - base_amplitude)))
    if abs(amplitudes[base] - base_amplitude) > 1e-9:
        raise MemoryInferError(f"the amplitude grid must contain the samples' own amplitude {base_amplitude:g}")
    values = [mean_ratio(log_likelihoods[:, k] - log_likelihoods[:, base], labels) for k in range(amplitudes.size)]
    return AmplitudeCurve(amplitudes=amplitudes.tolist(), ln_mean_ratio=[v[0] for v in values],
                          ln_mean_ratio_err=[v[1] for v in values], effective_sample_size=[v[2] for v in values],
                          base_amplitude=float(base_amplitude), number_of_samples=usable_count(log_likelihoods))


def usable_count(log_likelihoods) -> int:
    """Samples whose waveform did not fail."""
    return int(np.sum(~np.isnan(np.asarray(log_likelihoods)[:, 0])))


def reweighting_estimate(log_likelihoods, amplitudes, base_amplitude: float, numerator: float,
                         denominator: float, minimum_effective_samples: float = 50.0, labels=None) -> EvidenceEstimate:
    """ln BF(numerator vs denominator) from samples drawn under ``base_amplitude`` (one of the two)."""
    log_ratio = (log_likelihoods[:, grid_index(amplitudes, numerator)]
                 - log_likelihoods[:, grid_index(amplitudes, denominator)])
    if abs(base_amplitude - denominator) < 1e-9:
        ln_bf, error, ess = mean_ratio(log_ratio, labels)
        direction = f"from the A = {denominator:g} posterior"
    elif abs(base_amplitude - numerator) < 1e-9:
        ln_inverse, error, ess = mean_ratio(-log_ratio, labels)
        ln_bf = -ln_inverse
        direction = f"from the A = {numerator:g} posterior (inverse mean)"
    else:
        raise MemoryInferError("reweighting needs samples drawn under one of the two hypotheses compared")
    n = usable_count(log_likelihoods)
    failed = int(log_likelihoods.shape[0]) - n
    distinct = n if labels is None else int(np.unique(np.asarray(labels)[~np.isnan(log_likelihoods[:, 0])]).size)
    reliable = bool(ess >= minimum_effective_samples and np.isfinite(ln_bf))
    if reliable:
        note = f"{ess:.0f} effective of {n} samples"
        if distinct < n:
            note += f" ({distinct} distinct)"
    elif ess > 0.5 * n:
        note = (f"only {n} samples in all (need {minimum_effective_samples:g} effective): draw more posterior "
                "samples (more live points)")
    else:
        note = (f"only {ess:.1f} effective of {n} samples (need {minimum_effective_samples:g}): the two posteriors "
                "do not overlap enough; use nested sampling or the free-amplitude run for this event")
    if failed:
        note += f"; {failed} samples with a failed waveform left out"
    if error is None:
        note += f"; {ERROR_UNDEFINED}"
    return EvidenceEstimate(method=f"{DESCRIPTION.label} {direction}", ln_bf=float(ln_bf),
                            ln_bf_err=None if error is None else float(error),
                            numerator=amplitude_label(numerator), denominator=amplitude_label(denominator),
                            effective_sample_size=float(ess), number_of_samples=n, reliable=reliable, note=note,
                            family=DESCRIPTION.family, base_amplitude=float(base_amplitude))


PROPOSAL = f"{DESCRIPTION.label} with the proposal correction (the samples' own likelihood)"
CALIBRATION_DRAWN = (f"{DESCRIPTION.label}, calibration drawn per sample from its prior, with the proposal "
                     "correction by ")


def proposal_corrected(table, source, grid, minimum_effective_samples: float, labels=None):
    """Estimates of A = +1 and -1 against 0, and the A curve, from samples drawn under someone else's likelihood:
    ``BF(A) = mean(L(A)/L_src) / mean(L(0)/L_src)`` (:func:`ratio_of_means`); the samples' prior must be ours."""
    corrected = np.asarray(table, float) - np.asarray(source, float)[:, None]
    zero = grid_index(grid, 0.0)
    values = [ratio_of_means(corrected[:, k], corrected[:, zero], labels) for k in range(len(grid))]
    n = usable_count(table)
    estimates = []
    for numerator in (1.0, -1.0):
        ln_bf, error, ess = values[grid_index(grid, numerator)]
        reliable = bool(ess >= minimum_effective_samples and np.isfinite(ln_bf))
        note = (f"{ess:.0f} effective of {n} samples" if reliable else
                f"only {ess:.1f} effective of {n} samples (need {minimum_effective_samples:g}): the samples' "
                "posterior and this run's do not overlap enough")
        note += f"; {ERROR_UNDEFINED}" if error is None else ""
        estimates.append(EvidenceEstimate(method=PROPOSAL, ln_bf=float(ln_bf),
                                          ln_bf_err=None if error is None else float(error),
                                          numerator=amplitude_label(numerator), effective_sample_size=float(ess),
                                          number_of_samples=n, reliable=reliable, note=note,
                                          family=DESCRIPTION.family, base_amplitude=0.0))
    curve = AmplitudeCurve(amplitudes=[float(a) for a in grid], ln_mean_ratio=[v[0] for v in values],
                           ln_mean_ratio_err=[v[1] for v in values], effective_sample_size=[v[2] for v in values],
                           base_amplitude=0.0, number_of_samples=n, method=PROPOSAL)
    return estimates, curve


def likelihood_mismatch(recomputed, source, noise_log_likelihood: float, threshold: float) -> dict:
    """How far this run's ln L at the samples departs from the samples' own: median, spread (standard deviation)
    and worst departure from the median, in nats. The samples' column may hold ln L or ln L - ln L_noise; the
    convention with the smaller median is taken and named."""
    recomputed, source = np.asarray(recomputed, float), np.asarray(source, float)
    usable = np.isfinite(recomputed) & np.isfinite(source)
    ratio = recomputed[usable] - source[usable]
    full = ratio + noise_log_likelihood
    difference, convention = ((ratio, "log-likelihood ratio") if abs(np.median(ratio)) <= abs(np.median(full))
                              else (full, "log-likelihood"))
    median = float(np.median(difference))
    spread = float(np.std(difference))
    worst = float(np.max(np.abs(difference - median))) if difference.size else np.nan
    return {"median": median, "spread": spread, "worst": worst, "samples": int(difference.size),
            "column_convention": convention, "threshold": float(threshold),
            "exceeded": bool(spread > threshold or abs(median) > 10 * threshold)}


MISMATCH_CAUSES = ("the usual causes: another reference frequency (it changes what 'phase' means), another "
                   "waveform model, another PSD, window or segment, a different time convention, or other "
                   "marginalizations")


def estimates_from_table(table, grid, base_amplitude: float, minimum_effective_samples: float = 50.0,
                         labels=None) -> list:
    """ln BF of A = +1 and -1 against 0 from samples drawn under A = 0; of A = a0 against 0 otherwise."""
    pairs = [(1.0, 0.0), (-1.0, 0.0)] if base_amplitude == 0.0 else [(base_amplitude, 0.0)]
    return [reweighting_estimate(table, grid, base_amplitude, numerator, denominator, minimum_effective_samples,
                                 labels) for numerator, denominator in pairs]


def reweight(likelihood, samples, base_amplitude: float = 0.0, grid=None, minimum_effective_samples: float = 50.0,
             progress: bool = False):
    """Reweight posterior ``samples`` drawn under A = ``base_amplitude`` with a memory ``likelihood``.

    Returns (estimates, amplitude curve): ln BF of A = +1 and A = -1 against A = 0 (or of A = a0 against 0)
    with Monte-Carlo errors and effective sample sizes, and ``ln <L(A)/L(a0)>`` on ``grid``
    (default -4 to 4 in 81 steps, always holding -1, 0 and 1).
    """
    from ...inputs.config import grid_with_hypotheses

    grid = grid_with_hypotheses(*AMPLITUDE_GRID) if grid is None else np.asarray(grid, dtype=float)
    labels = sample_labels(samples)
    table = log_likelihood_grid(likelihood, samples, grid, progress=progress, labels=labels)
    return (estimates_from_table(table, grid, base_amplitude, minimum_effective_samples, labels),
            amplitude_curve(table, grid, base_amplitude, labels))


def sign_from_curve(curve: AmplitudeCurve, free_limits=FREE_AMPLITUDE_LIMITS) -> SignSummary:
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
    sign_err = None if plus_err is None or minus_err is None else float(np.hypot(plus_err, minus_err))
    return SignSummary(ln_bf_plus=plus, ln_bf_plus_err=plus_err, ln_bf_minus=minus, ln_bf_minus_err=minus_err,
                       ln_bf_sign=plus - minus, ln_bf_sign_err=sign_err,
                       weight_plus=sign_weight(plus, minus), method=curve.method, note=note,
                       mass_above_zero=float(positive / total) if total > 0 else 0.5)


class Reweighting(EvidenceMethod):
    """Reweights the nested runs named in ``[evidence] reweight_from`` and the samples of ``samples_file``
    (at most ``max_reweight_samples`` of each, drawn with the sampler's seed). Leaves the best no-memory fit
    among the samples in ``state`` for later methods."""

    name = "reweighting"
    describes = (DESCRIPTION,)

    def run(self, state: RunState) -> Found:
        from ...inputs.calibration import calibration_names, draw_calibration  # bilby: loaded when run

        setup = state.setup
        evidence, seed = setup.settings.evidence, int(setup.settings.sampler.seed)
        sample_sets = {}
        for name in evidence.reweight_from:
            hypothesis = HYPOTHESES.get(name)
            if hypothesis in state.nested:
                sample_sets[hypothesis.name] = (state.nested[hypothesis].posterior, hypothesis.amplitude, None)
        if setup.external_samples is not None:
            amplitude = float(evidence.samples_amplitude)
            sample_sets[f"file ({amplitude_label(amplitude)})"] = (
                setup.external_samples, amplitude, setup.external_settings.get("log_likelihood_column"))
        if not sample_sets:
            state.warn("reweighting asked for, but there are no posterior samples (run 'nested' for the "
                       "'none' or 'memory' hypothesis, or give samples_file)")
        limit, minimum = int(evidence.max_reweight_samples), float(evidence.minimum_effective_samples)
        grid, found = setup.grid, Found()
        for name, (frame, base, column) in sample_sets.items():
            if len(frame) > limit:
                frame = frame.sample(n=limit, random_state=seed)
            likelihood, _ = setup.likelihood(fixed_at(base) or NONE)
            logger.info("%s: reweighting %d samples drawn under A = %g", state.label, len(frame), base)
            labels = sample_labels(frame)
            missing = [n for n in calibration_names(likelihood.priors) if n not in frame.columns]
            nominal = None
            if missing:  # samples without calibration parameters: one draw per sample from the prior
                frame = frame.assign(**draw_calibration({n: likelihood.priors[n] for n in missing}, len(frame),
                                                        seed))
                nominal = log_likelihood_grid(likelihood, frame.drop(columns=missing), [base], labels=labels)[:, 0]
                table = log_likelihood_grid(likelihood, frame, grid, progress=state.progress,
                                            labels=np.arange(len(frame)))
            else:
                table = log_likelihood_grid(likelihood, frame, grid, progress=state.progress, labels=labels)
            corrected_curve = None
            if column is not None or nominal is not None:
                source = frame[column].to_numpy(dtype=float) if column is not None else nominal
                estimates, corrected_curve = proposal_corrected(table, source, grid, minimum, labels)
                if nominal is not None:
                    corrected_curve.method = CALIBRATION_DRAWN + (
                        "the samples' own likelihood" if column else "this run's likelihood at nominal calibration")
                    for estimate in estimates:
                        estimate.method = corrected_curve.method
                if column is not None:
                    recomputed = nominal if nominal is not None else table[:, grid_index(grid, base, exact=False)]
                    self._check_file_samples(state, name, recomputed, source, likelihood.noise_log_likelihood())
                if missing:
                    state.result.sample_checks.setdefault(name, dict(setup.external_settings, mismatch=None))[
                        "calibration"] = (f"{len(missing)} calibration parameters drawn per sample from their prior "
                                          "(the samples carry none); proposal correction against the samples at "
                                          "nominal calibration")
                    state.warn(f"{state.label}: samples [{name}] carry no calibration parameters: drawn per sample "
                               "from the calibration prior, Bayes factors by the proposal correction")
            else:
                estimates = estimates_from_table(table, grid, base, minimum, labels)
                if name.startswith("file"):
                    state.result.sample_checks[name] = dict(
                        setup.external_settings, mismatch=None,
                        note="no log-likelihood column: the samples are taken as drawn under this run's own model "
                             "and settings, which cannot be checked")
            for estimate in estimates:
                estimate.method += f" [{name}]"
                estimate.sample_set = name
                found.estimates.append(estimate)
                if not estimate.reliable:
                    state.warn(f"{state.label}: {estimate.note}")
            found.tables[name] = (base, table)
            zero = table[:, grid_index(grid, 0.0, exact=False)]
            if np.any(np.isfinite(zero)) and state.best_sample is None:
                best = frame.iloc[int(np.nanargmax(np.where(np.isfinite(zero), zero, -np.inf)))]
                state.best_sample = ({k: float(best[k]) for k in frame.columns
                                      if isinstance(best[k], (int, float, np.number))},
                                     f"the best no-memory fit among the reweighted samples [{name}]")
            if (base == 0.0 or corrected_curve is not None) and found.amplitude_curve is None:
                found.amplitude_curve = corrected_curve or amplitude_curve(table, grid, 0.0, labels)
                sign = sign_from_curve(found.amplitude_curve, evidence.free_amplitude_limits)
                if min(found.amplitude_curve.at(1.0)[2], found.amplitude_curve.at(-1.0)[2]) < minimum:
                    sign.note += "; too few effective samples at A = +-1: treat with care"
                found.signs[DESCRIPTION.family] = sign
        return found

    @staticmethod
    def _check_file_samples(state: RunState, name: str, recomputed, source, noise_log_likelihood: float) -> None:
        """Record and, past the threshold, warn how far this run's likelihood departs from the samples' own."""
        setup = state.setup
        check = likelihood_mismatch(recomputed, source, noise_log_likelihood,
                                    float(setup.settings.evidence.mismatch_threshold))
        state.result.sample_checks[name] = dict(setup.external_settings, mismatch=check)
        if check["exceeded"]:
            differs = [f"{key.replace('_', ' ')} {value['samples']} (this run {value['this_run']})"
                       for key, value in setup.external_settings.items()
                       if isinstance(value, dict) and value.get("differs")]
            state.warn(f"{state.label}: this run's ln L at the samples departs from their own by "
                       f"{check['median']:+.3g} nats (median), spread {check['spread']:.3g}, worst {check['worst']:.3g} "
                       f"(threshold {check['threshold']:g}); the proposal correction keeps the Bayes factor valid "
                       f"while the effective sample size holds; {MISMATCH_CAUSES}"
                       + (f"; the samples differ in {', '.join(differs)}" if differs else ""))
