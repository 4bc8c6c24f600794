"""One injection of a campaign: simulate the network's data, inject with a chosen A, recover.

A plain function of a picklable task, so local processes and Dask workers run the same code.
Every detected injection gets the fast estimates at the true parameters on its simulated data (one noise
realization, or none with zero noise) and, for forecasts, the two-point estimator's exact expectation and
spread over Gaussian noise with the network's PSDs (``ln_bf_plus_expected``; see
:mod:`memory_infer.inference.methods.fast`), with the six inner products it depends on (``term_*``) so that
the summary can draw noise realizations. Recovery methods:
- ``fast``: nothing more;
- ``reweighting``: a short nested run with A = 0 over ``free_parameters``, then importance reweighting;
- ``nested``: nested runs for A = +1, 0, -1 and A free.
The fast estimates are computed in every mode, so full methods are calibrated against them.
"""
from __future__ import annotations

import dataclasses
import os
import shutil
import time
from dataclasses import dataclass
from types import MappingProxyType

import numpy as np

from ..results.methods import DESCRIPTIONS, NESTED, REWEIGHTING
from ..waveform.source import combined

NOISE_LABEL = MappingProxyType({"gaussian": "Gaussian noise", "zero": "zero noise"})


@dataclass
class Network:
    """A campaign's waveform generator and detector network, built by :func:`build_network` in the process that
    runs a batch of injections and handed to each of them: each injection sets their segment and data (the
    generator's caches make the estimates that follow an injection cheap)."""

    generator: object
    detectors: object


def build_network(settings) -> Network:
    """The generator and network for a campaign's segment and model (:class:`memory_infer.inputs.settings.
    CampaignSettings`)."""
    from ..inputs.detectors import network_detectors
    from ..waveform.generator import waveform_generator

    data = settings.data
    generator = waveform_generator(data.duration, data.sampling_rate, 0.0, settings.model.waveform_arguments(data))
    return Network(generator, network_detectors(settings.network, data.minimum_frequency))


def noise_seed(campaign_seed: int, index: int) -> int:
    return int(np.random.SeedSequence([int(campaign_seed), int(index)]).generate_state(1)[0])


def _simulate(task, network: Network):
    """The injection's data on ``network`` (noise drawn by bilby from the generator in use, see
    :func:`run_injection`) and its network optimal SNR."""
    settings = task.settings
    data = settings.data
    generator, detectors = network.generator, network.detectors
    start = task.source["geocent_time"] - data.duration + 2.0
    if settings.noise == "zero":
        detectors.set_strain_data_from_zero_noise(data.sampling_rate, data.duration, start)
    else:
        detectors.set_strain_data_from_power_spectral_densities(data.sampling_rate, data.duration, start)
    generator.start_time = start
    # the polarizations injected directly: bilby's inject_signal would first check the signal's duration per
    # detector (a distance-to-redshift solve each time) only to log a warning; the parts stay in the generator's
    # cache for the estimates that follow
    parameters = dict(task.source, memory_amplitude=task.amplitude)
    oscillatory, memory = generator.parts(parameters)
    if oscillatory is not None:
        polarizations = combined(oscillatory, memory, task.amplitude)
        for detector in detectors:
            detector.inject_signal_from_waveform_polarizations(parameters=parameters,
                                                               injection_polarizations=polarizations)
    snr = float(np.sqrt(sum(abs(d.meta_data.get("optimal_SNR", 0.0)) ** 2 for d in detectors)))
    return generator, detectors, snr


def expected_over_noise(likelihood, truth: dict, injected: float) -> dict:
    """The two-point ln BF+- averaged over Gaussian noise (exact quadrature), its spread, its zero-noise value
    (diagnostic only) and the known-sign value ``A_t rho^2 - rho^2/2`` (``rho^2/2`` for A_t = 1)."""
    from ..inference.methods.fast import two_point_noise_average, two_point_terms

    terms = two_point_terms(likelihood, truth)
    out = {f"term_{name}": value for name, value in terms.items()}
    for label, amplitude in (("plus", 1.0), ("minus", -1.0)):
        average = two_point_noise_average(terms, injected, amplitude)
        out[f"ln_bf_{label}_expected"] = average["mean"]
        out[f"ln_bf_{label}_expected_spread"] = average["spread"]
        out[f"ln_bf_{label}_expected_err"] = average["quadrature_error"]
        out[f"ln_bf_{label}_zero_noise"] = average["zero_noise"]
        out[f"ln_bf_{label}_known_sign"] = average["known_sign"]
    return out


def run_injections(tasks: list) -> list:
    """A batch of injections of one campaign in this process: one network built for them all, each injection's
    record in order."""
    network = build_network(tasks[0].settings)
    return [run_injection(task, network) for task in tasks]


def run_injection(task, network: Network) -> dict:
    """Everything one injection produces, as a flat record (JSON-safe). Its random numbers (noise, and a full
    recovery's draws) come from a generator seeded by the campaign's seed and the injection's index."""
    from ..inference.likelihood import MemoryTransient
    from ..inference.methods.fast import FastApproximation
    from ..inputs.event_data import bilby_draws_from

    began = time.perf_counter()
    settings = task.settings
    record = {"index": task.index, "amplitude": task.amplitude, **{k: task.source[k] for k in sorted(task.source)}}
    try:
        with bilby_draws_from(np.random.default_rng(noise_seed(settings.seed, task.index))):
            generator, detectors, snr = _simulate(task, network)
            record["network_snr"] = snr
            record["detected"] = bool(snr >= settings.detection_snr)
            if not record["detected"]:  # below the catalog's threshold: no recovery
                record.update(status="ok", error="", seconds=time.perf_counter() - began)
                return record
            truth = {k: v for k, v in task.source.items() if k != "redshift"}
            likelihood = MemoryTransient(detectors, generator)
            estimates, memory_snr = FastApproximation.estimates(likelihood, truth)
            record["memory_snr"] = memory_snr
            record.update(sign_columns(estimates, FastApproximation.describes))
            record.update(expected_over_noise(likelihood, truth, task.amplitude))
            if settings.method != "fast" and record["detected"]:
                record.update(_full_recovery(task, detectors, generator, truth))
        record["status"] = "ok"
        record["error"] = ""
    except Exception as error:  # one bad injection is recorded and counted, never a crash
        record["status"] = "failed"
        record["error"] = f"{type(error).__name__}: {error}".splitlines()[0][:300]
    record["seconds"] = time.perf_counter() - began
    return record


def sign_columns(estimates, descriptions) -> dict:
    """``ln_bf_plus_<column>`` and ``ln_bf_minus_<column>`` (and their errors, when the family has a Monte-Carlo
    error) of each described family whose estimates hold both signs, keyed by family and numerator."""
    found = {(e.family, e.numerator): e for e in estimates}
    out = {}
    for description in descriptions:
        plus, minus = found.get((description.family, "memory")), found.get((description.family, "flipped"))
        if description.column is None or plus is None or minus is None:
            continue
        column = description.column
        out[f"ln_bf_plus_{column}"] = plus.ln_bf
        if description.monte_carlo_error:
            out[f"ln_bf_plus_{column}_err"] = plus.ln_bf_err
        out[f"ln_bf_minus_{column}"] = minus.ln_bf
        if description.monte_carlo_error:
            out[f"ln_bf_minus_{column}_err"] = minus.ln_bf_err
    return out


def _recovery_priors(truth, free_parameters):
    """Priors of the recovery's free parameters (by default all five that correlate with the memory): phase and
    polarization over their full ranges, inclination isotropic, distance uniform on [0.5, 1.8] times the true
    one and time within 10 ms of it (windows around the truth keep short nested runs affordable; A's own prior
    is the campaign's ``free_amplitude_limits``). Every other parameter is fixed at the truth."""
    import bilby

    prior = bilby.core.prior
    shapes = {
        "phase": lambda v: prior.Uniform(0, 2 * np.pi, "phase", boundary="periodic"),
        "psi": lambda v: prior.Uniform(0, np.pi, "psi", boundary="periodic"),
        "luminosity_distance": lambda v: prior.Uniform(0.5 * v, 1.8 * v, "luminosity_distance"),
        "theta_jn": lambda v: prior.Sine(name="theta_jn"),
        "geocent_time": lambda v: prior.Uniform(v - 0.01, v + 0.01, "geocent_time"),
    }
    priors = prior.PriorDict({k: prior.DeltaFunction(v, name=k) for k, v in truth.items()})
    for name in free_parameters:
        priors[name] = shapes[name](truth[name])
    return priors


def _full_recovery(task, detectors, generator, truth) -> dict:
    """The event's own evidence methods on this injection: a nested run with A = 0 and reweighting,
    or nested runs for every hypothesis as well (``method = "nested"``)."""
    from ..inference.methods import NestedSampling, Reweighting
    from ..inference.runner import run_methods
    from ..inference.setup import EventSetup
    from ..results.estimates import cumulative_distribution

    settings = task.settings
    workdir = os.path.join(task.workdir, f"injection-{task.index}")
    event = recovery_settings(settings, task.index)
    setup = EventSetup(settings=event, detectors=detectors, generator=generator, injection=None,
                       priors=_recovery_priors(truth, settings.recovery.free_parameters), grid=event.evidence.grid())
    strategies = [NestedSampling.name, Reweighting.name]
    result = run_methods(setup, workdir, strategies, f"injection-{task.index}", progress=False).result
    out = sign_columns(result.methods, DESCRIPTIONS)  # every family that left both signs, by its own column
    plus = {(m.family, m.numerator): m for m in result.methods}[(REWEIGHTING.family, "memory")]
    out.update(effective_sample_size=plus.effective_sample_size, reweighting_reliable=plus.reliable)
    curve = result.amplitude_curve
    grid = np.asarray(curve.amplitudes)
    density = np.exp(np.asarray(curve.ln_mean_ratio) - np.max(curve.ln_mean_ratio))
    out[f"amplitude_quantile_{REWEIGHTING.column}"] = float(np.interp(task.amplitude, grid,
                                                                      cumulative_distribution(grid, density)))
    if settings.method == "nested":
        samples = np.asarray(result.free_amplitude["samples"])
        out[f"amplitude_quantile_{NESTED.column}"] = float(np.mean(samples < task.amplitude))
    shutil.rmtree(workdir, ignore_errors=True)
    return out


def recovery_settings(settings, index: int):
    """The event settings of one injection's full recovery: the campaign's segment and model, its A prior and
    recovery sizes, no marginalization, and a sampler seeded by the injection (new values of the defaults)."""
    from ..inputs.settings import AnalysisSettings, EventSettings

    base = AnalysisSettings(event=EventSettings(label=f"injection-{index}"))
    limits = tuple(settings.free_amplitude_limits)
    hypotheses = ("none", "memory", "flipped", "free") if settings.method == "nested" else ("none",)
    recovery = settings.recovery
    evidence = dataclasses.replace(base.evidence, free_amplitude_limits=limits, amplitude_grid=(*limits, 101),
                                   nested_hypotheses=hypotheses, reweight_from=("none",), samples_amplitude=0.0,
                                   minimum_effective_samples=recovery.minimum_effective_samples,
                                   max_reweight_samples=2 ** 62)
    sampler = dataclasses.replace(base.sampler, live_points=recovery.live_points, accepted_walks=recovery.accepted_walks,
                                  pool=1, seed=noise_seed(settings.seed, index) % (2 ** 31), checkpoint_seconds=60.0,
                                  progress=False)
    return dataclasses.replace(base, data=settings.data, model=settings.model, evidence=evidence, sampler=sampler)


def batches(tasks, size: int) -> list:
    return [tasks[i:i + size] for i in range(0, len(tasks), size)]


def execute(tasks, store, executor, progress: bool = True, window: int = 64, batch: int = 8) -> int:
    """Submit what is not yet stored (``store``: :class:`memory_infer.campaign.store.RecordStore`) in batches of
    ``batch`` injections (each batch builds its generator and network once, :func:`run_injections`), at most
    ``window`` injections at a time (:func:`memory_infer.common.drain.drain`); store each record as its batch
    finishes. Returns the number of records written."""
    from ..common.drain import drain

    done = store.done()
    todo = batches([t for t in tasks if t.index not in done], max(1, int(batch)))
    written = []

    def stored(_, records):
        for record in records:
            store.write(record)
        written.append(len(records))
        return len(records)

    drain(executor, run_injections, todo, stored, window=max(1, window // max(1, int(batch))),
          progress=dict(total=len(tasks), initial=len(done), desc="injections", unit="inj", disable=not progress,
                        smoothing=0.05))
    return sum(written)
