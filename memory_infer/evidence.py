"""Evidence per event: nested sampling, importance reweighting, sign bookkeeping, fast approximations.

Hypotheses fix the memory amplitude A: ``memory`` (A = 1, general relativity), ``none`` (A = 0),
``flipped`` (A = -1), ``free`` (A with a uniform prior).

- Nested sampling: ``ln BF = ln Z_1 - ln Z_0``, error ``sqrt(s_1^2 + s_0^2)`` (dynesty's own errors).
- Reweighting samples drawn under A = a0: ``BF(A) = mean_i L(A, th_i) / L(a0, th_i)`` in log space,
  effective sample size ``(sum w)^2 / sum w^2``, Monte-Carlo error ``sqrt(var w / n) / mean w``.
- Fast: ``ln Lambda = <d - h_osc, h_mem> - <h_mem, h_mem> / 2`` at one point, and the two-point version
  that also weighs the sign-degenerate partner (phase + pi/2, psi + pi/2) by its oscillatory likelihood.
"""
from __future__ import annotations

import copy
import logging
import os
from dataclasses import asdict, dataclass, field

import numpy as np
from scipy.special import logsumexp

from .errors import MemoryInferError
from .likelihood import HYPOTHESES, MemoryTransient, fixed_point_log_ratio

logger = logging.getLogger("memory_infer")

DEFAULT_GRID = np.round(np.linspace(-4.0, 4.0, 81), 10)


@dataclass
class EvidenceEstimate:
    """One ln Bayes factor with its error and how it was made."""

    method: str
    ln_bf: float
    ln_bf_err: float | None
    numerator: str = "memory"
    denominator: str = "none"
    effective_sample_size: float | None = None
    number_of_samples: int | None = None
    reliable: bool = True
    note: str = ""

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass
class AmplitudeCurve:
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
        index = int(np.argmin(np.abs(np.asarray(self.amplitudes) - amplitude)))
        if abs(self.amplitudes[index] - amplitude) > 1e-9:
            raise MemoryInferError(f"the amplitude grid does not contain {amplitude:g}")
        return self.ln_mean_ratio[index], self.ln_mean_ratio_err[index], self.effective_sample_size[index]

    def to_dict(self) -> dict:
        return asdict(self)


@dataclass
class SignSummary:
    """Per-event sign bookkeeping (SPEC section 6)."""

    ln_bf_plus: float
    ln_bf_plus_err: float | None
    ln_bf_minus: float
    ln_bf_minus_err: float | None
    ln_bf_sign: float
    ln_bf_sign_err: float | None
    weight_plus: float
    method: str
    note: str = field(default="")

    def to_dict(self) -> dict:
        return asdict(self)


def hypothesis_priors(priors, hypothesis: str, free_limits=(-5.0, 5.0)):
    """A copy of ``priors`` with the memory amplitude set for ``hypothesis``."""
    import bilby

    if hypothesis not in HYPOTHESES:
        raise MemoryInferError(f"unknown hypothesis '{hypothesis}'; choose one of {', '.join(HYPOTHESES)}")
    new = copy.deepcopy(priors)
    value = HYPOTHESES[hypothesis]
    if value is None:
        new["memory_amplitude"] = bilby.core.prior.Uniform(free_limits[0], free_limits[1], name="memory_amplitude",
                                                           latex_label="$A$")
    else:
        new["memory_amplitude"] = bilby.core.prior.DeltaFunction(value, name="memory_amplitude")
    return new


# ---------------------------------------------------------------- nested sampling

def run_nested(likelihood, priors, label: str, outdir: str, live_points: int = 200, accepted_walks: int = 30,
               pool: int = 1, seed: int | None = None, checkpoint_seconds: float = 60.0, progress: bool = True):
    """One dynesty run through bilby; checkpoints to ``outdir`` and resumes from there when rerun."""
    import bilby

    if checkpoint_exists(outdir, label):
        print(f"resuming nested run '{label}' from its checkpoint in {outdir}", flush=True)
    return bilby.run_sampler(
        likelihood=likelihood, priors=priors, sampler="dynesty", nlive=int(live_points), sample="acceptance-walk",
        naccept=int(accepted_walks), npool=int(pool), outdir=outdir, label=label, resume=True,
        check_point_delta_t=float(checkpoint_seconds), rstate=np.random.default_rng(seed), print_progress=progress,
        save="json", plot=False, check_point_plot=False)


def nested_bayes_factor(numerator_result, denominator_result, numerator="memory", denominator="none"):
    """``ln Z_1 - ln Z_0`` with dynesty's errors added in quadrature."""
    ln_bf = float(numerator_result.log_evidence - denominator_result.log_evidence)
    error = float(np.hypot(numerator_result.log_evidence_err, denominator_result.log_evidence_err))
    return EvidenceEstimate(method="nested sampling (dynesty through bilby)", ln_bf=ln_bf, ln_bf_err=error,
                            numerator=numerator, denominator=denominator,
                            number_of_samples=int(len(numerator_result.posterior) + len(denominator_result.posterior)),
                            note="ln Z difference of two runs on the same data, priors and sampler settings")


# ---------------------------------------------------------------- reweighting

def log_likelihood_grid(likelihood: MemoryTransient, samples, amplitudes, progress: bool = False):
    """``ln L(A) - ln L_noise`` for every sample (rows) and amplitude (columns); -inf for failed waveforms."""
    from .signal import WaveformError

    amplitudes = np.asarray(amplitudes, dtype=float)
    records = samples.to_dict("records") if hasattr(samples, "to_dict") else list(samples)
    fixed = {k: v.peak for k, v in (likelihood.priors or {}).items() if getattr(v, "is_fixed", False)}
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
            from . import signal

            out[i] = -np.inf
            failures += 1
            signal.failure_count += 1
    if failures:
        logger.warning("%d of %d samples had a failed waveform and count as zero likelihood", failures, len(records))
    return out


def _mean_ratio(log_weights: np.ndarray):
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
    values = [_mean_ratio(log_likelihoods[:, k] - log_likelihoods[:, base]) for k in range(amplitudes.size)]
    return AmplitudeCurve(amplitudes=amplitudes.tolist(), ln_mean_ratio=[v[0] for v in values],
                          ln_mean_ratio_err=[v[1] for v in values], effective_sample_size=[v[2] for v in values],
                          base_amplitude=float(base_amplitude), number_of_samples=int(log_likelihoods.shape[0]))


def reweighting_estimate(log_likelihoods, amplitudes, base_amplitude: float, numerator: float,
                         denominator: float, minimum_effective_samples: float = 50.0) -> EvidenceEstimate:
    """ln BF(numerator vs denominator) from samples drawn under ``base_amplitude`` (one of the two)."""
    amplitudes = np.asarray(amplitudes, dtype=float)

    def column(value):
        index = int(np.argmin(np.abs(amplitudes - value)))
        if abs(amplitudes[index] - value) > 1e-9:
            raise MemoryInferError(f"the amplitude grid does not contain {value:g}")
        return log_likelihoods[:, index]

    names = {v: k for k, v in HYPOTHESES.items() if v is not None}
    log_ratio = column(numerator) - column(denominator)
    if abs(base_amplitude - denominator) < 1e-9:
        ln_bf, error, ess = _mean_ratio(log_ratio)
        direction = f"from the A = {denominator:g} posterior"
    elif abs(base_amplitude - numerator) < 1e-9:
        ln_inverse, error, ess = _mean_ratio(-log_ratio)
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
                            numerator=names.get(numerator, f"A={numerator:g}"),
                            denominator=names.get(denominator, f"A={denominator:g}"),
                            effective_sample_size=float(ess), number_of_samples=n, reliable=reliable, note=note)


def sign_from_curve(curve: AmplitudeCurve, free_limits=(-5.0, 5.0)) -> SignSummary:
    """ln BF+, ln BF-, the sign Bayes factor and the free-A posterior weight of A > 0."""
    plus, plus_err, _ = curve.at(1.0)
    minus, minus_err, _ = curve.at(-1.0)
    amplitudes = np.asarray(curve.amplitudes)
    inside = (amplitudes >= free_limits[0]) & (amplitudes <= free_limits[1])
    density = np.exp(np.asarray(curve.ln_mean_ratio)[inside] - np.max(np.asarray(curve.ln_mean_ratio)[inside]))
    grid = amplitudes[inside]
    total = np.trapezoid(density, grid)
    above = grid >= 0
    positive = np.trapezoid(density[above], grid[above]) if np.count_nonzero(above) > 1 else 0.0
    weight_plus = float(positive / total) if total > 0 else 0.5
    return SignSummary(ln_bf_plus=plus, ln_bf_plus_err=plus_err, ln_bf_minus=minus, ln_bf_minus_err=minus_err,
                       ln_bf_sign=plus - minus, ln_bf_sign_err=float(np.hypot(plus_err, minus_err)),
                       weight_plus=weight_plus, method=curve.method,
                       note=f"weight_plus: posterior mass of A > 0 for a uniform prior on "
                            f"[{free_limits[0]:g}, {free_limits[1]:g}] from the amplitude curve")


def sign_from_nested(plus: EvidenceEstimate, minus: EvidenceEstimate) -> SignSummary:
    """The same bookkeeping from two nested-sampling Bayes factors (A = +1 and A = -1 against 0)."""
    weight = float(1 / (1 + np.exp(minus.ln_bf - plus.ln_bf)))
    return SignSummary(ln_bf_plus=plus.ln_bf, ln_bf_plus_err=plus.ln_bf_err, ln_bf_minus=minus.ln_bf,
                       ln_bf_minus_err=minus.ln_bf_err, ln_bf_sign=plus.ln_bf - minus.ln_bf,
                       ln_bf_sign_err=None, weight_plus=weight, method=plus.method,
                       note="weight_plus = BF+ / (BF+ + BF-); the sign error is not given because both "
                            "share the A = 0 run")


# ---------------------------------------------------------------- fast approximations

def sign_partner(point: dict) -> dict:
    """The point whose (2, +-2) strain is the same and whose memory flips: phase + pi/2, psi + pi/2."""
    partner = dict(point)
    partner["phase"] = (point.get("phase", 0.0) + np.pi / 2) % (2 * np.pi)
    partner["psi"] = (point.get("psi", 0.0) + np.pi / 2) % np.pi
    return partner


def fast_estimates(likelihood: MemoryTransient, point: dict):
    """Fixed-parameter and two-point ln BF (A = 1 vs 0) at ``point``; also ln BF- and the memory SNR."""
    products = likelihood.inner_products(point)
    if products is None:
        raise MemoryInferError("the waveform failed at the chosen parameter point")
    fixed = fixed_point_log_ratio(products)
    fixed_minus = float(-np.real(products.d_mem) + products.osc_mem - products.mem_mem / 2)
    partner_products = likelihood.inner_products(sign_partner(point))
    curve_here = likelihood.curve_from_products(products, point, [0.0, 1.0, -1.0])
    curve_partner = likelihood.curve_from_products(partner_products, sign_partner(point), [0.0, 1.0, -1.0])
    osc = np.array([curve_here[0], curve_partner[0]])
    two_plus = float(logsumexp(osc + np.array([curve_here[1] - curve_here[0], curve_partner[1] - curve_partner[0]]))
                     - logsumexp(osc))
    two_minus = float(logsumexp(osc + np.array([curve_here[2] - curve_here[0], curve_partner[2] - curve_partner[0]]))
                      - logsumexp(osc))
    note = "deterministic approximation at one point: no Monte-Carlo error; its bias is measured by campaigns"
    estimates = [
        EvidenceEstimate(method="fixed-parameter approximation", ln_bf=fixed, ln_bf_err=None, note=note),
        EvidenceEstimate(method="fixed-parameter approximation", ln_bf=fixed_minus, ln_bf_err=None,
                         numerator="flipped", note=note),
        EvidenceEstimate(method="two-point approximation (with the sign-degenerate partner)", ln_bf=two_plus,
                         ln_bf_err=None, note=note),
        EvidenceEstimate(method="two-point approximation (with the sign-degenerate partner)", ln_bf=two_minus,
                         ln_bf_err=None, numerator="flipped", note=note),
    ]
    return estimates, float(np.sqrt(max(products.mem_mem, 0.0)))


def checkpoint_exists(outdir: str, label: str) -> bool:
    return os.path.exists(os.path.join(outdir, f"{label}_resume.pickle"))
