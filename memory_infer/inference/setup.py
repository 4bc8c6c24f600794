"""One event's setup: data, generator, priors and samples built and checked from a configuration
before anything is sampled or written."""
from __future__ import annotations

import logging
import os
from dataclasses import dataclass, field

import numpy as np

from ..common.errors import MemoryInferError
from ..inputs.calibration import attach_calibration
from ..inputs.checks import check_samples, light_binary_caution
from ..inputs.config import DEFAULT_REFERENCE_FREQUENCY, amplitude_grid
from ..inputs.event_data import (build_priors, file_detectors, injection_parameters, simulated_detectors,
                                 waveform_arguments)
from ..inputs.readers import is_release, read_sample_file
from ..inputs.release_settings import apply_release_settings, read_release_settings, samples_stand_in_priors
from ..inputs.samples import usable_samples
from ..waveform.generator import segment_note, waveform_generator
from ..waveform.models import DEFAULT_APPROXIMANT
from .hypotheses import hypothesis_priors
from .likelihood import MemoryTransient
from .methods import REGISTRY

logger = logging.getLogger("memory_infer")


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
    calibration: list = field(default_factory=list)  # one sentence per detector with a calibration model
    data_notes: list = field(default_factory=list)  # how each strain file became the segment, and its PSD

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
                "approximant_from": config["model"].get("approximant_from", "configuration"),
                "reference_frequency": config["model"]["reference_frequency"],
                "reference_frequency_from": config["model"].get("reference_frequency_from", "configuration"),
                "early_inspiral_memory": config["model"]["early_inspiral_memory"],
                "memory_taper": config["model"]["memory_taper"],
                "minimum_frequency": config["data"]["minimum_frequency"],
                "distance_marginalization": config["likelihood"]["distance_marginalization"],
                "time_marginalization": config["likelihood"]["time_marginalization"],
                "free_amplitude_limits": list(config["evidence"]["free_amplitude_limits"]),
                "amplitude_grid": [float(x) for x in self.grid],
                "calibration": dict(config["calibration"], detectors=list(self.calibration)),
                "data_notes": list(self.data_notes), "origins": dict(self.config.get("_origins") or {}),
                "segment": {"start_time": config["data"]["start_time"], "duration": config["data"]["duration"],
                            "sampling_rate": config["data"]["sampling_rate"],
                            "maximum_frequency": config["data"]["maximum_frequency"]}}


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
    frame = column_settings = path = None
    file_settings, psds = {}, {}
    if config["evidence"]["samples_file"]:
        path = os.path.join(config.get("_directory", "."), config["evidence"]["samples_file"])
        content = read_sample_file(path, config["evidence"]["samples_analysis"])
        psds = content["psds"]
        file_settings = {k: content[k] for k in ("reference_frequency", "waveform_model") if k in content}
        frame, column_settings = usable_samples(content["samples"])
    origins = settings_from_release(config, path)
    resolve_reference_frequency(config, file_settings, column_settings or {})
    if origins.get("reference_frequency") not in (None, "configuration", "default"):
        config["model"]["reference_frequency_from"] = origins["reference_frequency"]
    resolve_model(config, file_settings, column_settings or {}, origins.get("waveform_model"))
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
        detectors = file_detectors(config, psds, os.path.basename(path) if path else None)
        notes = [note for note in getattr(detectors, "input_notes", []) if "without data" in note]
    if frame is not None and not config["priors"] and "nested" not in config["evidence"]["methods"]:
        priors = samples_stand_in_priors(frame, os.path.basename(path))  # reweighting takes the samples' prior
        origins["priors"] = "not needed: reweighting takes the samples' own prior"
    else:
        priors = build_priors(config, injection)
    check_prior_spins(config["model"]["approximant"], priors)
    calibration = release_calibration(config, detectors, priors)
    setup = EventSetup(config=config, detectors=detectors, generator=generator, priors=priors, injection=injection,
                       grid=amplitude_grid(config), notes=notes, calibration=calibration,
                       data_notes=list(getattr(detectors, "input_notes", [])))
    config["_origins"] = origins
    if frame is not None:
        required = [name for name in sampled_columns(hypothesis_priors(priors, "none"))
                    if not name.startswith("recalib_")]  # calibration is drawn from its prior when absent
        check_samples(frame, required, f"posterior samples in '{os.path.basename(path)}'")
        check_spin_support(config["model"]["approximant"], frame, f"the posterior samples in "
                                                                  f"'{os.path.basename(path)}'")
        setup.external_samples = frame
        setup.external_settings = sample_settings(config, file_settings, frame, column_settings)
    caution = binary_caution(config, injection, priors, frame)
    if caution:
        logger.info("caution: %s", caution)
        setup.notes.append(caution)
    return setup


def binary_caution(config: dict, injection: dict | None, priors, frame) -> str | None:
    """The light-binary caution (:func:`light_binary_caution`) for the injection, else the posterior samples'
    median masses, else masses fixed in the priors."""
    approximant = config["model"]["approximant"]
    if injection is not None:
        return light_binary_caution(injection["mass_1"], injection["mass_2"], approximant, "the injected binary")
    if frame is not None and {"mass_1", "mass_2"} <= set(frame.columns):
        return light_binary_caution(np.median(frame["mass_1"]), np.median(frame["mass_2"]), approximant,
                                    "the posterior samples' binary (medians)")
    fixed = [priors.get(name) for name in ("mass_1", "mass_2")]
    if all(prior is not None and getattr(prior, "is_fixed", False) for prior in fixed):
        return light_binary_caution(fixed[0].peak, fixed[1].peak, approximant, "the binary")
    return None


def resolve_reference_frequency(config: dict, file_settings: dict, column_settings: dict) -> None:
    """``[model] reference_frequency`` when given; else the samples file's own (its metadata, then its columns);
    else 20 Hz. The choice and its source are recorded in ``config["model"]["reference_frequency_from"]``."""
    model = config["model"]
    if model["reference_frequency"] is not None:
        model["reference_frequency_from"] = "configuration"
    elif file_settings.get("reference_frequency") is not None:
        model["reference_frequency"] = float(file_settings["reference_frequency"])
        model["reference_frequency_from"] = "the samples file's metadata"
    elif column_settings.get("reference_frequency") is not None:
        model["reference_frequency"] = float(column_settings["reference_frequency"])
        model["reference_frequency_from"] = "the samples file's columns"
    else:
        model["reference_frequency"] = DEFAULT_REFERENCE_FREQUENCY
        model["reference_frequency_from"] = "default"


def resolve_model(config: dict, file_settings: dict, column_settings: dict, release_origin: str | None = None) -> None:
    """``[model] approximant`` when given; else the samples file's own model (its metadata, then its columns), so
    that a release is reweighted with the model it was drawn with; else IMRPhenomTHM. Recorded in
    ``config["model"]["approximant_from"]``; ``release_origin`` is where a release's settings put the model."""
    model = config["model"]
    if model.get("approximant") and release_origin not in (None, "default", "configuration"):
        model["approximant_from"] = f"the release ({release_origin})"
    elif model.get("approximant"):
        model["approximant_from"] = "configuration"
    elif file_settings.get("waveform_model"):
        model["approximant"] = str(file_settings["waveform_model"])
        model["approximant_from"] = "the samples file's metadata"
    elif column_settings.get("waveform_approximant"):
        model["approximant"] = str(column_settings["waveform_approximant"])
        model["approximant_from"] = "the samples file's columns"
    else:
        model["approximant"] = DEFAULT_APPROXIMANT
        model["approximant_from"] = "default"


def check_prior_spins(approximant: str, priors) -> None:
    """One sentence when the priors sample spin tilts of a non-zero spin but the model takes aligned spins only."""
    from ..waveform.models import takes_precessing_spins

    def free(name):
        prior = priors.get(name)
        return prior is not None and not getattr(prior, "is_fixed", False) and type(prior).__name__ != "Constraint"

    for i in ("1", "2"):
        spin = priors.get(f"a_{i}")
        spinning = free(f"a_{i}") or (spin is not None and getattr(spin, "is_fixed", False) and spin.peak > 0)
        if spinning and (free(f"tilt_{i}") or free("phi_12") or free("phi_jl")) \
                and not takes_precessing_spins(approximant):
            raise MemoryInferError(f"the [priors] sample precessing spins (a_{i} with free tilts or azimuths), but "
                                   f"the model '{approximant}' takes aligned spins only; set [model] approximant to "
                                   "a precessing model such as IMRPhenomTPHM")


def check_spin_support(approximant: str, values, where: str) -> None:
    """One sentence when ``values`` (a table or priors' samples) hold in-plane spins the model cannot take."""
    from ..waveform.models import takes_precessing_spins

    in_plane = 0.0
    for i in ("1", "2"):
        if f"a_{i}" in values and f"tilt_{i}" in values:
            in_plane = max(in_plane, float(np.max(np.abs(np.asarray(values[f"a_{i}"], float)
                                                        * np.sin(np.asarray(values[f"tilt_{i}"], float))))))
    if in_plane > 1e-6 and not takes_precessing_spins(approximant):
        raise MemoryInferError(f"{where} hold precessing spins (in-plane spin up to {in_plane:.2g}), but the model "
                               f"'{approximant}' takes aligned spins only; set [model] approximant to a precessing "
                               "model such as IMRPhenomTPHM")


def sample_settings(config: dict, file_settings: dict, frame, column_settings: dict | None = None) -> dict:
    """How outside samples were drawn (configuration keys first, then the file's metadata) against this run, and
    which column holds their own log-likelihood (None when absent: no proposal correction, no mismatch check)."""
    evidence, model = config["evidence"], config["model"]
    metadata = {key: (value, "file metadata") for key, value in file_settings.items()}
    columns = column_settings or {}
    for key, column in (("reference_frequency", "reference_frequency"), ("waveform_model", "waveform_approximant")):
        if key not in metadata and column in columns:
            metadata[key] = (columns[column], "file columns")
    out = {}
    for key, ours in (("reference_frequency", float(model["reference_frequency"])),
                      ("waveform_model", model["approximant"])):
        given = evidence[f"samples_{key}"]
        theirs, source = (given, "configuration") if given is not None else metadata.get(key, (None, None))
        out[key] = {"samples": theirs, "this_run": ours, "from": source if theirs is not None else "not given",
                    "differs": None if theirs is None else theirs != ours}
    column = evidence["samples_log_likelihood"] or None
    usable = column is not None and column in frame.columns and np.all(np.isfinite(frame[column].to_numpy(float)))
    out["log_likelihood_column"] = column if usable else None
    return out


def settings_from_release(config: dict, path: str | None) -> dict:
    """File data with a catalog release as samples: every segment and model setting the user left out comes from
    the release (:mod:`memory_infer.inputs.release_settings`); returns setting -> origin (empty otherwise)."""
    if path is None or config["data"]["kind"] != "files" or not is_release(path):
        return {}
    return apply_release_settings(config, read_release_settings(path, config["evidence"]["samples_analysis"]))


def release_calibration(config: dict, detectors, priors) -> list:
    """attach_calibration, with a release's own envelopes written to a temporary folder for bilby's reader."""
    import tempfile

    settings = config["calibration"]
    envelopes = settings.pop("_envelopes", None)
    if not envelopes:
        return attach_calibration(settings, detectors, priors, config.get("_directory", "."))
    with tempfile.TemporaryDirectory() as folder:
        settings["envelope_files"] = {}
        for name, table in envelopes.items():
            np.savetxt(os.path.join(folder, f"{name}.txt"), table)
            settings["envelope_files"][name] = os.path.join(folder, f"{name}.txt")
        notes = attach_calibration(settings, detectors, priors, folder)
    settings["envelope_files"] = {name: f"the release's calibration_envelope/{name}" for name in envelopes}
    return notes
