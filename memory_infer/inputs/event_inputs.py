"""Everything an event reads before anything is built: its posterior-samples file and, for a catalog release, the
release's own segment and model settings; then the model resolved. The result is the event's final settings
(new frozen values, each with its origin) and the samples, read once."""
from __future__ import annotations

import dataclasses
import os
from dataclasses import dataclass, field

import numpy as np

from ..waveform.models import DEFAULT_APPROXIMANT
from .readers import is_release, read_sample_file
from .release_settings import apply_release_settings, read_release_settings
from .samples import usable_samples
from .settings import DEFAULT_REFERENCE_FREQUENCY, AnalysisSettings, ModelSettings


@dataclass(frozen=True)
class EventInputs:
    """An event's resolved settings and what its files hold (``frame``: usable posterior samples, or None)."""

    settings: AnalysisSettings
    samples_path: str | None = None
    frame: object = None
    column_settings: dict = field(default_factory=dict)  # settings the samples' own columns carry
    file_settings: dict = field(default_factory=dict)  # reference frequency and model the file's metadata name
    psds: dict = field(default_factory=dict)  # a catalog release's PSDs per detector

    @property
    def samples_name(self) -> str | None:
        return os.path.basename(self.samples_path) if self.samples_path else None


def read_event_inputs(settings: AnalysisSettings) -> EventInputs:
    """Read the samples file (if any) and a release's settings; returns the resolved settings with the files."""
    evidence = settings.evidence
    frame = path = None
    file_settings, psds, columns = {}, {}, {}
    if evidence.samples_file:
        path = os.path.join(settings.data.directory, evidence.samples_file)
        content = read_sample_file(path, evidence.samples_analysis)
        psds = content["psds"]
        file_settings = {k: content[k] for k in ("reference_frequency", "waveform_model") if k in content}
        frame, columns = usable_samples(content["samples"])
    origins = {}
    if path is not None and settings.data.kind == "files" and is_release(path):
        settings, origins = apply_release_settings(settings, read_release_settings(path, evidence.samples_analysis))
    model = resolve_model(settings.model, file_settings, columns or {}, origins)
    settings = dataclasses.replace(settings, model=model, origins=origins)
    return EventInputs(settings=settings, samples_path=path, frame=frame, column_settings=columns or {},
                       file_settings=file_settings, psds=psds)


def resolve_model(model: ModelSettings, file_settings: dict, column_settings: dict,
                  origins: dict | None = None) -> ModelSettings:
    """The model with its reference frequency and approximant chosen, each with where it came from.

    The reference frequency: ``[model] reference_frequency`` (or a release's, ``origins``) when given; else the
    samples file's own (its metadata, then its columns); else 20 Hz. The approximant: ``[model] approximant`` (or
    a release's) when given; else the samples file's own model (so that a release is reweighted with the model it
    was drawn with); else IMRPhenomTHM."""
    origins = origins or {}
    frequency, frequency_from = model.reference_frequency, "configuration"
    if frequency is not None:
        if origins.get("reference_frequency") not in (None, "configuration", "default"):
            frequency_from = origins["reference_frequency"]
    elif file_settings.get("reference_frequency") is not None:
        frequency, frequency_from = float(file_settings["reference_frequency"]), "the samples file's metadata"
    elif column_settings.get("reference_frequency") is not None:
        frequency, frequency_from = float(column_settings["reference_frequency"]), "the samples file's columns"
    else:
        frequency, frequency_from = DEFAULT_REFERENCE_FREQUENCY, "default"
    release_origin = origins.get("waveform_model")
    approximant = model.approximant
    if approximant and release_origin not in (None, "default", "configuration"):
        approximant_from = f"the release ({release_origin})"
    elif approximant:
        approximant_from = "configuration"
    elif file_settings.get("waveform_model"):
        approximant, approximant_from = str(file_settings["waveform_model"]), "the samples file's metadata"
    elif column_settings.get("waveform_approximant"):
        approximant, approximant_from = str(column_settings["waveform_approximant"]), "the samples file's columns"
    else:
        approximant, approximant_from = DEFAULT_APPROXIMANT, "default"
    return dataclasses.replace(model, reference_frequency=frequency, reference_frequency_from=frequency_from,
                               approximant=approximant, approximant_from=approximant_from)


def sample_settings(inputs: EventInputs) -> dict:
    """How outside samples were drawn (configuration keys first, then the file's metadata) against this run, and
    which column holds their own log-likelihood (None when absent: no proposal correction, no mismatch check)."""
    evidence, model = inputs.settings.evidence, inputs.settings.model
    metadata = {key: (value, "file metadata") for key, value in inputs.file_settings.items()}
    columns = inputs.column_settings
    for key, column in (("reference_frequency", "reference_frequency"), ("waveform_model", "waveform_approximant")):
        if key not in metadata and column in columns:
            metadata[key] = (columns[column], "file columns")
    out = {}
    for key, ours in (("reference_frequency", float(model.reference_frequency)), ("waveform_model", model.approximant)):
        given = getattr(evidence, f"samples_{key}")
        theirs, source = (given, "configuration") if given is not None else metadata.get(key, (None, None))
        out[key] = {"samples": theirs, "this_run": ours, "from": source if theirs is not None else "not given",
                    "differs": None if theirs is None else theirs != ours}
    column = evidence.samples_log_likelihood or None
    frame = inputs.frame
    usable = column is not None and column in frame.columns and np.all(np.isfinite(frame[column].to_numpy(float)))
    out["log_likelihood_column"] = column if usable else None
    return out
