"""One event end to end: data, likelihoods, nested runs, reweighting, fast estimates, sign, memory SNR."""
from __future__ import annotations

import copy
import logging
import os
from dataclasses import dataclass, field

import numpy as np

from .config import amplitude_grid
from .data import (SOURCE_PARAMETERS, build_priors, file_detectors, injection_parameters, simulated_detectors,
                   waveform_arguments)
from .errors import MemoryInferError
from .evidence import (amplitude_curve, fast_estimates, hypothesis_priors, log_likelihood_grid, nested_bayes_factor,
                       reweighting_estimate, run_nested, sign_from_curve, sign_from_nested)
from .likelihood import HYPOTHESES, MemoryTransient, waveform_generator

logger = logging.getLogger("memory_infer")

CAUTION = ("A Bayes factor here is evidence under the stated signal models and noise assumptions (stationary "
           "Gaussian noise with the given PSDs, the named waveform model with its memory); it is not a detection "
           "claim. Glitches, calibration errors and waveform systematics must be checked before any claim.")


@dataclass
class EventSetup:
    """Everything built from a configuration before any sampling (validated inputs)."""

    config: dict
    detectors: object
    generator: object
    priors: object
    injection: dict | None
    grid: np.ndarray
    lookup_path: str | None = None
    external_samples: object = None  # checked posterior samples from samples_file, if any
    notes: list = field(default_factory=list)  # warnings found while preparing (e.g. a segment too short)

    def likelihood(self, hypothesis: str, marginalize: bool = True):
        """(likelihood, priors) for a hypothesis, with the configured marginalizations (or none)."""
        limits = self.config["evidence"]["free_amplitude_limits"]
        priors = hypothesis_priors(self.priors, hypothesis, limits)
        settings = self.config["likelihood"]
        distance = bool(settings["distance_marginalization"]) and marginalize
        time = bool(settings["time_marginalization"]) and marginalize
        extra = {}
        if distance:
            if getattr(priors["luminosity_distance"], "is_fixed", False):
                raise MemoryInferError("distance marginalization needs a distance prior in [priors], not a fixed value")
            extra["distance_marginalization_lookup_table"] = self.lookup_path
        if time and getattr(priors["geocent_time"], "is_fixed", False):
            raise MemoryInferError("time marginalization needs a geocent_time prior in [priors], not a fixed value")
        likelihood = MemoryTransient(self.detectors, self.generator, priors=priors, distance_marginalization=distance,
                                     time_marginalization=time, **extra)
        return likelihood, priors

    @property
    def marginalized(self) -> bool:
        settings = self.config["likelihood"]
        return bool(settings["distance_marginalization"] or settings["time_marginalization"])

    def settings_fingerprint(self) -> dict:
        config = self.config
        return {"approximant": config["model"]["approximant"],
                "early_inspiral_memory": config["model"]["early_inspiral_memory"],
                "memory_taper": config["model"]["memory_taper"],
                "minimum_frequency": config["data"]["minimum_frequency"],
                "distance_marginalization": config["likelihood"]["distance_marginalization"],
                "time_marginalization": config["likelihood"]["time_marginalization"],
                "free_amplitude_limits": list(config["evidence"]["free_amplitude_limits"]),
                "amplitude_grid": [float(x) for x in self.grid]}


def prepare(config: dict) -> EventSetup:
    """Build and check data, generator and priors; raises MemoryInferError on any bad input."""
    data = config["data"]
    arguments = waveform_arguments(config)
    generator = waveform_generator(float(data["duration"]), float(data["sampling_rate"]), float(data["start_time"]),
                                   arguments)
    injection = None
    if data["kind"] == "simulated":
        injection = injection_parameters(config)
        from .signal import signal_parts

        probe = {k: v for k, v in injection.items()}
        try:  # the injection must be generable: one sentence if not
            signal_parts(generator.frequency_array, **probe, **{k: v for k, v in arguments.items()
                                                                 if k != "catch_waveform_errors"})
        except MemoryInferError as error:
            raise MemoryInferError(f"the injection cannot be generated: {error}") from None
        from .signal import segment_note

        note = segment_note(generator.frequency_array, float(data["minimum_frequency"]), **probe,
                            **{k: v for k, v in arguments.items() if k != "catch_waveform_errors"})
        notes = [f"injection: {note}"] if note else []
        detectors = simulated_detectors(config, injection, generator)
    else:
        detectors = file_detectors(config)
    priors = build_priors(config, injection)
    setup = EventSetup(config=config, detectors=detectors, generator=generator, priors=priors, injection=injection,
                       grid=amplitude_grid(config), notes=notes if data["kind"] == "simulated" else [])
    if config["evidence"]["samples_file"]:
        from .io import check_samples, read_samples

        path = os.path.join(config.get("_directory", "."), config["evidence"]["samples_file"])
        frame = read_samples(path)
        check_samples(frame, _sampled_columns(hypothesis_priors(priors, "none")), f"posterior samples in '{os.path.basename(path)}'")
        setup.external_samples = frame
    return setup


@dataclass
class EventOutcome:
    label: str
    methods: list = field(default_factory=list)
    sign: dict | None = None
    memory_snr: dict | None = None
    amplitude_curve: dict | None = None
    free_amplitude: dict | None = None
    headline: dict | None = None
    warnings: list = field(default_factory=list)
    nested_results: dict = field(default_factory=dict)
    reweighting_weights: dict = field(default_factory=dict)
    reference_point: dict | None = None
    waveform_failures: int = 0


def _sampled_columns(priors) -> list:
    return [k for k, v in priors.items() if not getattr(v, "is_fixed", False)
            and type(v).__name__ != "Constraint" and k != "memory_amplitude"]


def run_event(setup: EventSetup, outdir: str, progress: bool = True) -> EventOutcome:
    config = setup.config
    methods = config["evidence"]["methods"]
    sampler = config["sampler"]
    outcome = EventOutcome(label=config["event"]["label"])
    outcome.warnings.extend(setup.notes)
    setup.lookup_path = os.path.join(outdir, "runs", "distance_lookup.npz")
    os.makedirs(os.path.join(outdir, "runs"), exist_ok=True)

    from . import signal

    failures_before = signal.failure_count
    results = {}
    best_samples = {}
    if "nested" in methods:
        for index, hypothesis in enumerate(config["evidence"]["nested_hypotheses"]):
            if hypothesis not in HYPOTHESES:
                raise MemoryInferError(f"unknown hypothesis '{hypothesis}' in [evidence] nested_hypotheses")
            likelihood, priors = setup.likelihood(hypothesis)
            print(f"{outcome.label}: nested sampling, hypothesis '{hypothesis}'", flush=True)
            results[hypothesis] = run_nested(
                likelihood, priors, label=f"{outcome.label}_{hypothesis}", outdir=os.path.join(outdir, "runs"),
                live_points=sampler["live_points"], accepted_walks=sampler["accepted_walks"], pool=sampler["pool"],
                seed=int(sampler["seed"]) + index, checkpoint_seconds=sampler["checkpoint_seconds"],
                progress=bool(sampler["progress"]) and progress)
        outcome.nested_results = results
        for numerator in ("memory", "flipped"):
            if numerator in results and "none" in results:
                outcome.methods.append(nested_bayes_factor(results[numerator], results["none"], numerator, "none"))
        if "free" in results:
            values = results["free"].posterior["memory_amplitude"].to_numpy()
            low, median, high = np.quantile(values, [0.05, 0.5, 0.95])
            outcome.free_amplitude = {"median": float(median), "lower_90": float(low), "upper_90": float(high),
                                      "samples": values.tolist(),
                                      "method": "nested sampling with A free, equal-weight posterior samples"}

    if "reweighting" in methods:
        sample_sets = {}
        for hypothesis in config["evidence"]["reweight_from"]:
            if hypothesis in results:
                sample_sets[hypothesis] = (results[hypothesis].posterior, HYPOTHESES[hypothesis])
        if setup.external_samples is not None:
            frame = setup.external_samples
            amplitude = float(config["evidence"]["samples_amplitude"])
            names = {v: k for k, v in HYPOTHESES.items() if v is not None}
            sample_sets[f"file ({names.get(amplitude, amplitude)})"] = (frame, amplitude)
        if not sample_sets:
            outcome.warnings.append("reweighting asked for, but there are no posterior samples (run 'nested' for the "
                                    "'none' or 'memory' hypothesis, or give samples_file)")
        limit = int(config["evidence"]["max_reweight_samples"])
        for name, (frame, base) in sample_sets.items():
            if len(frame) > limit:
                frame = frame.sample(n=limit, random_state=int(sampler["seed"]))
            hypothesis = {v: k for k, v in HYPOTHESES.items() if v is not None}.get(base, "none")
            likelihood, _ = setup.likelihood(hypothesis)
            print(f"{outcome.label}: reweighting {len(frame)} samples drawn under A = {base:g}", flush=True)
            table = log_likelihood_grid(likelihood, frame, setup.grid, progress=progress)
            minimum = float(config["evidence"]["minimum_effective_samples"])
            pairs = [(1.0, 0.0), (-1.0, 0.0)] if base == 0.0 else [(base, 0.0)]
            for numerator, denominator in pairs:
                estimate = reweighting_estimate(table, setup.grid, base, numerator, denominator, minimum)
                estimate.method += f" [{name}]"
                outcome.methods.append(estimate)
                if not estimate.reliable:
                    outcome.warnings.append(f"{outcome.label}: {estimate.note}")
            index_one = int(np.argmin(np.abs(setup.grid - (1.0 if base == 0 else 0.0))))
            base_index = int(np.argmin(np.abs(setup.grid - base)))
            outcome.reweighting_weights[name] = (table[:, index_one] - table[:, base_index]).tolist()
            zero_index = int(np.argmin(np.abs(setup.grid)))
            if np.any(np.isfinite(table[:, zero_index])):
                best = frame.iloc[int(np.nanargmax(np.where(np.isfinite(table[:, zero_index]), table[:, zero_index], -np.inf)))]
                best_samples.setdefault("best", ({k: float(best[k]) for k in frame.columns
                                                  if isinstance(best[k], (int, float, np.number))},
                                                 f"the best no-memory fit among the reweighted samples [{name}]"))
            if base == 0.0 and outcome.amplitude_curve is None:
                curve = amplitude_curve(table, setup.grid, 0.0)
                outcome.amplitude_curve = curve.to_dict()
                outcome.sign = sign_from_curve(curve, config["evidence"]["free_amplitude_limits"]).to_dict()
                if min(curve.at(1.0)[2], curve.at(-1.0)[2]) < minimum:
                    outcome.sign["note"] += "; too few effective samples at A = +-1: treat with care"

    if outcome.sign is None:
        plus = next((m for m in outcome.methods if m.method.startswith("nested") and m.numerator == "memory"), None)
        minus = next((m for m in outcome.methods if m.method.startswith("nested") and m.numerator == "flipped"), None)
        if plus and minus:
            outcome.sign = sign_from_nested(plus, minus).to_dict()

    point, where = reference_point(setup, results)
    if point is None and "reweighting" in methods and best_samples and not setup.marginalized:
        sample, where = best_samples["best"]
        point = {k: float(v.peak) for k, v in setup.priors.items() if getattr(v, "is_fixed", False)}
        point.update({k: v for k, v in sample.items() if k in SOURCE_PARAMETERS})
    outcome.reference_point = point
    if point is not None:
        plain, _ = setup.likelihood("none", marginalize=False)
        estimates, snr = fast_estimates(plain, point)
        if "fast" in methods:
            outcome.methods.extend(estimates)
        outcome.memory_snr = {"value": snr, "error": None, "point": where,
                              "method": "optimal network SNR of the memory alone, sqrt(<h_mem, h_mem>), "
                                        "deterministic at that point"}
        if outcome.sign is None and "fast" in methods:
            two = [e for e in estimates if e.method.startswith("two-point")]
            outcome.sign = {"ln_bf_plus": two[0].ln_bf, "ln_bf_plus_err": None, "ln_bf_minus": two[1].ln_bf,
                            "ln_bf_minus_err": None, "ln_bf_sign": two[0].ln_bf - two[1].ln_bf, "ln_bf_sign_err": None,
                            "weight_plus": float(1 / (1 + np.exp(two[1].ln_bf - two[0].ln_bf))),
                            "method": two[0].method, "note": "from the fast two-point approximation only"}
    outcome.headline = choose_headline(outcome.methods)
    failures = signal.failure_count - failures_before
    outcome.waveform_failures = failures
    if failures:
        outcome.warnings.append(f"{failures} waveform evaluations failed during sampling or reweighting and were "
                                "counted as zero likelihood")
    return outcome


def choose_headline(methods) -> dict | None:
    """The stated rule: nested sampling if run; else reliable reweighting with the most effective samples;
    else the two-point approximation."""
    plus = [m for m in methods if m.numerator == "memory" and m.denominator == "none"]
    order = ([m for m in plus if m.method.startswith("nested")],
             sorted([m for m in plus if m.method.startswith("importance") and m.reliable],
                    key=lambda m: -(m.effective_sample_size or 0)),
             [m for m in plus if m.method.startswith("two-point")])
    for group in order:
        if group:
            chosen = group[0]
            return {"ln_bf": chosen.ln_bf, "ln_bf_err": chosen.ln_bf_err, "method": chosen.method,
                    "rule": "nested sampling if run; else reliable reweighting with the most effective samples; "
                            "else the two-point approximation"}
    return None


def reference_point(setup: EventSetup, results: dict):
    """The point for fast estimates and the memory SNR: the injection, else the best no-memory sample."""
    if setup.injection is not None:
        return {k: v for k, v in setup.injection.items() if k != "memory_amplitude"}, "the injection"
    for hypothesis in ("none", "free", "memory"):
        if hypothesis in results and not setup.marginalized:
            posterior = results[hypothesis].posterior
            best = posterior.iloc[int(np.argmax(posterior["log_likelihood"].to_numpy()))]
            point = {k: float(best[k]) for k in SOURCE_PARAMETERS if k in best}
            point.update({k: float(v.peak) for k, v in setup.priors.items()
                          if getattr(v, "is_fixed", False) and k not in point})
            return point, f"the maximum-likelihood sample of the '{hypothesis}' run"
    return None, None


def copy_config_for_output(config: dict) -> dict:
    clean = copy.deepcopy(config)
    clean.pop("_directory", None)
    return clean
