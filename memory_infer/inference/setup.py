"""One event's setup: its inputs read and its settings resolved first (:mod:`memory_infer.inputs.event_inputs`),
then data, generator, priors and samples built and checked, before anything is sampled or written."""
from __future__ import annotations

import dataclasses
import logging
from dataclasses import dataclass, field

import numpy as np

from ..common.errors import MemoryInferError
from ..inputs.calibration import attach_calibration
from ..inputs.checks import check_samples, light_binary_caution
from ..inputs.event_data import build_priors, file_detectors, injection_parameters, simulated_detectors
from ..inputs.event_inputs import EventInputs, read_event_inputs, sample_settings
from ..inputs.release_settings import samples_stand_in_priors
from ..inputs.settings import AnalysisSettings
from ..waveform.generator import segment_note, waveform_generator
from .hypotheses import hypothesis_priors
from .likelihood import MemoryTransient
from .methods import STRATEGIES

logger = logging.getLogger("memory_infer")


@dataclass
class EventSetup:
    """Everything built from an event's settings before any sampling (validated inputs)."""

    settings: AnalysisSettings
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
        priors = hypothesis_priors(self.priors, hypothesis, self.settings.evidence.free_amplitude_limits)
        settings = self.settings.likelihood
        distance = bool(settings.distance_marginalization) and marginalize
        time = bool(settings.time_marginalization) and marginalize
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
        settings = self.settings.likelihood
        return bool(settings.distance_marginalization or settings.time_marginalization)

    def parameter_roles(self) -> dict:
        """{"sampled": names, "fixed": {name: value}}: which source parameters the priors sample and which they fix
        (with reweighting alone and no priors, the samples' own columns are what is sampled)."""
        priors = self.priors or {}
        sampled = [name for name in sampled_columns(priors)]
        fixed = {name: float(prior.peak) for name, prior in priors.items()
                 if getattr(prior, "is_fixed", False) and name != "memory_amplitude"
                 and isinstance(getattr(prior, "peak", None), (int, float))}
        return {"sampled": sorted(sampled), "fixed": dict(sorted(fixed.items()))}

    def settings_fingerprint(self) -> dict:
        settings = self.settings
        model, data, likelihood = settings.model, settings.data, settings.likelihood
        calibration = settings.calibration.described()
        if settings.calibration.envelopes:
            calibration["envelope_files"] = {name: f"the release's calibration_envelope/{name}"
                                             for name in settings.calibration.envelopes}
        return {"approximant": model.approximant, "approximant_from": model.approximant_from,
                "reference_frequency": model.reference_frequency,
                "reference_frequency_from": model.reference_frequency_from,
                "early_inspiral_memory": model.early_inspiral_memory, "memory_taper": model.memory_taper,
                "minimum_frequency": data.minimum_frequency,
                "distance_marginalization": likelihood.distance_marginalization,
                "time_marginalization": likelihood.time_marginalization,
                "free_amplitude_limits": list(settings.evidence.free_amplitude_limits),
                "amplitude_grid": [float(x) for x in self.grid],
                "calibration": dict(calibration, detectors=list(self.calibration)),
                "data_notes": list(self.data_notes), "origins": dict(settings.origins),
                "parameters": self.parameter_roles(),
                "segment": {"start_time": data.start_time, "duration": data.duration,
                            "sampling_rate": data.sampling_rate, "maximum_frequency": data.maximum_frequency}}


def sampled_columns(priors) -> list:
    """Names of the sampled parameters (not fixed, not constraints, not the memory amplitude)."""
    return [k for k, v in priors.items() if not getattr(v, "is_fixed", False)
            and type(v).__name__ != "Constraint" and k != "memory_amplitude"]


def prepare(settings: AnalysisSettings, rng=None) -> EventSetup:
    """Read every input and resolve the settings first, then build and check data, generator and priors; raises
    MemoryInferError on any bad input. ``rng`` (a ``numpy.random.Generator``) draws simulated noise; by default
    one seeded with ``[data] seed``."""
    names = [strategy.name for strategy in STRATEGIES]
    for method in settings.evidence.methods:
        if method not in names:
            raise MemoryInferError(f"unknown method '{method}' in [evidence]; choose from {', '.join(names)}")
    inputs = read_event_inputs(settings)
    return build(inputs, np.random.default_rng(settings.data.seed) if rng is None else rng)


def build(inputs: EventInputs, rng) -> EventSetup:
    """The event's objects from its read inputs and resolved settings (nothing more is read from its settings'
    files except strain, PSD and calibration tables)."""
    settings, frame, name = inputs.settings, inputs.frame, inputs.samples_name
    data, model = settings.data, settings.model
    generator = waveform_generator(float(data.duration), float(data.sampling_rate), float(data.start_time),
                                   model.waveform_arguments(data))
    injection, notes = None, []
    if data.kind == "simulated":
        injection = injection_parameters(data, settings.injection)
        try:  # the injection must be generable: one sentence if not
            generator.parts(injection, raise_errors=True)
        except MemoryInferError as error:
            raise MemoryInferError(f"the injection cannot be generated: {error}") from None
        note = segment_note(generator, float(data.minimum_frequency), injection)
        notes = [f"injection: {note}"] if note else []
        detectors = simulated_detectors(data, injection, generator, rng)
    else:
        detectors = file_detectors(data, inputs.psds, name)
        notes = [note for note in getattr(detectors, "input_notes", []) if "without data" in note]
    origins = dict(settings.origins)
    if frame is not None and not settings.priors and "nested" not in settings.evidence.methods:
        priors = samples_stand_in_priors(frame, name)  # reweighting takes the samples' prior
        origins["priors"] = "not needed: reweighting takes the samples' own prior"
    else:
        priors = build_priors(settings.priors, injection)
    check_prior_spins(model.approximant, priors)
    calibration = attach_calibration(settings.calibration, detectors, priors, data.directory)
    settings = dataclasses.replace(settings, origins=origins)
    setup = EventSetup(settings=settings, detectors=detectors, generator=generator, priors=priors, injection=injection,
                       grid=settings.evidence.grid(), notes=notes, calibration=calibration,
                       data_notes=list(getattr(detectors, "input_notes", [])))
    if frame is not None:
        required = [name for name in sampled_columns(hypothesis_priors(priors, "none"))
                    if not name.startswith("recalib_")]  # calibration is drawn from its prior when absent
        check_samples(frame, required, f"posterior samples in '{name}'")
        check_spin_support(model.approximant, frame, f"the posterior samples in '{name}'")
        setup.external_samples = frame
        setup.external_settings = sample_settings(inputs)
    caution = binary_caution(model.approximant, injection, priors, frame)
    if caution:
        logger.info("caution: %s", caution)
        setup.notes.append(caution)
    return setup


def binary_caution(approximant: str, injection: dict | None, priors, frame) -> str | None:
    """The light-binary caution (:func:`light_binary_caution`) for the injection, else the posterior samples'
    median masses, else masses fixed in the priors."""
    if injection is not None:
        return light_binary_caution(injection["mass_1"], injection["mass_2"], approximant, "the injected binary")
    if frame is not None and {"mass_1", "mass_2"} <= set(frame.columns):
        return light_binary_caution(np.median(frame["mass_1"]), np.median(frame["mass_2"]), approximant,
                                    "the posterior samples' binary (medians)")
    fixed = {name: fixed_value(priors.get(name)) for name in ("mass_1", "mass_2", "chirp_mass", "mass_ratio")}
    if fixed["mass_1"] is None and None not in (fixed["chirp_mass"], fixed["mass_ratio"]):
        from bilby.gw.conversion import chirp_mass_and_mass_ratio_to_component_masses

        fixed["mass_1"], fixed["mass_2"] = chirp_mass_and_mass_ratio_to_component_masses(fixed["chirp_mass"],
                                                                                          fixed["mass_ratio"])
    if fixed["mass_1"] is not None and fixed["mass_2"] is not None:
        return light_binary_caution(fixed["mass_1"], fixed["mass_2"], approximant, "the binary")
    return None


def fixed_value(prior) -> float | None:
    """The value of a fixed (delta-function) prior; None for a sampled prior, a constraint or no prior (bilby
    counts a Constraint as fixed, but it holds no value)."""
    if prior is None or not getattr(prior, "is_fixed", False) or not hasattr(prior, "peak"):
        return None
    return float(prior.peak)


def check_prior_spins(approximant: str, priors) -> None:
    """One sentence when the priors sample spin tilts of a non-zero spin but the model takes aligned spins only."""
    from ..waveform.models import takes_precessing_spins

    def free(name):
        prior = priors.get(name)
        return prior is not None and not getattr(prior, "is_fixed", False) and type(prior).__name__ != "Constraint"

    for i in ("1", "2"):
        spin = priors.get(f"a_{i}")
        spinning = free(f"a_{i}") or (fixed_value(spin) or 0.0) > 0
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
