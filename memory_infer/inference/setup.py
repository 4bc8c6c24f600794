"""One event's setup: data, generator, priors and samples built and checked from a configuration
before anything is sampled or written."""
from __future__ import annotations

import os
from dataclasses import dataclass, field

import numpy as np

from ..common.errors import MemoryInferError
from ..inputs.checks import check_samples
from ..inputs.config import amplitude_grid
from ..inputs.event_data import (build_priors, file_detectors, injection_parameters, simulated_detectors,
                                 waveform_arguments)
from ..inputs.readers import read_sample_settings, read_samples
from ..waveform.generator import segment_note, waveform_generator
from .hypotheses import hypothesis_priors
from .likelihood import MemoryTransient
from .methods import REGISTRY


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
    external_settings: dict = field(default_factory=dict)  # how they were drawn, against this run's settings
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


def sampled_columns(priors) -> list:
    """Names of the sampled parameters (not fixed, not constraints, not the memory amplitude)."""
    return [k for k, v in priors.items() if not getattr(v, "is_fixed", False)
            and type(v).__name__ != "Constraint" and k != "memory_amplitude"]


def prepare(config: dict) -> EventSetup:
    """Build and check data, generator and priors; raises MemoryInferError on any bad input."""
    for method in config["evidence"]["methods"]:
        if method not in REGISTRY:
            raise MemoryInferError(f"unknown method '{method}' in [evidence]; choose from {', '.join(REGISTRY)}")
    data = config["data"]
    arguments = waveform_arguments(config)
    generator = waveform_generator(float(data["duration"]), float(data["sampling_rate"]), float(data["start_time"]),
                                   arguments)
    injection, notes = None, []
    if data["kind"] == "simulated":
        injection = injection_parameters(config)
        try:  # the injection must be generable: one sentence if not
            generator.parts(injection, raise_errors=True)
        except MemoryInferError as error:
            raise MemoryInferError(f"the injection cannot be generated: {error}") from None
        note = segment_note(generator, float(data["minimum_frequency"]), injection)
        notes = [f"injection: {note}"] if note else []
        detectors = simulated_detectors(config, injection, generator)
    else:
        detectors = file_detectors(config)
    priors = build_priors(config, injection)
    setup = EventSetup(config=config, detectors=detectors, generator=generator, priors=priors, injection=injection,
                       grid=amplitude_grid(config), notes=notes)
    if config["evidence"]["samples_file"]:
        path = os.path.join(config.get("_directory", "."), config["evidence"]["samples_file"])
        frame = read_samples(path)
        check_samples(frame, sampled_columns(hypothesis_priors(priors, "none")),
                      f"posterior samples in '{os.path.basename(path)}'")
        setup.external_samples = frame
        setup.external_settings = sample_settings(config, path, frame)
    return setup


def sample_settings(config: dict, path: str, frame) -> dict:
    """How outside samples were drawn (configuration keys first, then the file's metadata) against this run, and
    which column holds their own log-likelihood (None when absent: no proposal correction, no mismatch check)."""
    evidence, model = config["evidence"], config["model"]
    metadata = read_sample_settings(path)
    out = {}
    for key, ours in (("reference_frequency", float(model["reference_frequency"])),
                      ("waveform_model", model["approximant"])):
        given = evidence[f"samples_{key}"]
        theirs, source = (given, "configuration") if given is not None else (metadata.get(key), "file metadata")
        out[key] = {"samples": theirs, "this_run": ours, "from": source if theirs is not None else "not given",
                    "differs": None if theirs is None else theirs != ours}
    column = evidence["samples_log_likelihood"] or None
    usable = column is not None and column in frame.columns and np.all(np.isfinite(frame[column].to_numpy(float)))
    out["log_likelihood_column"] = column if usable else None
    return out
