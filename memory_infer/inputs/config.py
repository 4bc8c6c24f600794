"""Run configurations: TOML read with the standard library, checked key by key against a schema, then typed as
settings (:mod:`.settings`, whose dataclasses hold each setting's default once; its docstring names those kept
elsewhere).

Every problem is one sentence naming the section and key; unknown keys are errors (a typo must
not silently fall back to a default).
"""
from __future__ import annotations

import copy
import os
import tomllib

from ..common.errors import MemoryInferError, close_match
from .settings import (AnalysisSettings, CalibrationSettings, DataSettings, EventSettings, EvidenceSettings,
                       LikelihoodSettings, ModelSettings, SamplerSettings, defaults_of,
                       grid_with_hypotheses)  # noqa: F401  (grid_with_hypotheses: also its callers' name here)

NUMBER = (int, float)
ANY = object

# section -> key -> (type or tuple of types, default); ``REQUIRED`` marks keys without default
REQUIRED = object()


def _section(kind, types: dict, required=()) -> dict:
    """A schema section: each key's type, and its default from the settings dataclass ``kind`` (defined once)."""
    defaults = defaults_of(kind)
    return {key: (types[key], REQUIRED if key in required else defaults[key]) for key in types}


EVIDENCE_SCHEMA = {
    "event": _section(EventSettings, {"label": str, "control": bool}, required=("label",)),
    "data": _section(DataSettings, {
        "kind": str, "detectors": list, "noise_curve": str, "noise_curves": dict, "noise": str, "seed": int,
        "duration": NUMBER, "sampling_rate": NUMBER, "start_time": NUMBER, "minimum_frequency": NUMBER,
        "maximum_frequency": NUMBER, "files": dict, "window_roll_off": NUMBER,
        "resampling": str}),
    "injection": {"*": (NUMBER, None)},
    "model": _section(ModelSettings, {
        "approximant": str, "reference_frequency": NUMBER, "minimum_frequency": NUMBER,
        "early_inspiral_memory": bool, "memory_taper": NUMBER, "modes": list}),
    "priors": {"*": (ANY, None)},
    "likelihood": _section(LikelihoodSettings, {"distance_marginalization": bool, "time_marginalization": bool,
                                                "phase_marginalization": bool}),
    "sampler": _section(SamplerSettings, {"live_points": int, "accepted_walks": int, "pool": int, "seed": int,
                                          "checkpoint_seconds": NUMBER, "progress": bool}),
    "evidence": _section(EvidenceSettings, {
        "methods": list, "nested_hypotheses": list, "reweight_from": list, "samples_file": str,
        "samples_amplitude": NUMBER, "amplitude_grid": list, "free_amplitude_limits": list,
        "minimum_effective_samples": NUMBER, "max_reweight_samples": int, "samples_log_likelihood": str,
        "samples_reference_frequency": NUMBER, "samples_waveform_model": str, "mismatch_threshold": NUMBER,
        "samples_analysis": str}),
    "calibration": _section(CalibrationSettings, {
        "kind": str, "amplitude_sigma": NUMBER, "phase_sigma": NUMBER, "envelope_files": dict,
        "correction_type": str, "spline_nodes": int, "minimum_frequency": NUMBER, "maximum_frequency": NUMBER}),
}
PHASE_REFUSAL = ("analytic phase marginalization is not valid with memory and higher modes (the memory "
                 "does not change by an overall phase); sample the phase instead")


def _type_name(kind) -> str:
    if kind is NUMBER:
        return "a number"
    return {str: "a string", int: "a whole number", bool: "true or false", list: "a list",
            dict: "a table"}.get(kind, "a value")


def load_toml(path: str) -> dict:
    if not os.path.isfile(path):
        raise MemoryInferError(f"configuration file '{path}' does not exist")
    try:
        with open(path, "rb") as handle:
            return tomllib.load(handle)
    except tomllib.TOMLDecodeError as error:
        raise MemoryInferError(f"configuration file '{path}' is not valid TOML ({error})") from None


def apply_schema(raw: dict, schema: dict, source: str) -> dict:
    """Fill defaults and check types; returns a new dict with every section of ``schema``.

    A misspelled key or section is named with its closest known spelling, together with the required key it
    leaves missing."""
    for section in raw:
        if section not in schema:
            raise MemoryInferError(f"unknown section [{section}] in {source}{close_match(section, schema)}; known: "
                                   f"{', '.join(schema)}")
    config = {}
    for section, keys in schema.items():
        given = raw.get(section, {})
        if not isinstance(given, dict):
            raise MemoryInferError(f"[{section}] in {source} must be a table")
        known = [key for key in keys if key != "*"]
        unknown = [key for key in given if key not in keys and "*" not in keys]
        missing = [key for key, (_, default) in keys.items() if default is REQUIRED and key not in given]
        if missing and unknown:
            raise MemoryInferError(f"key '{missing[0]}' is missing from [{section}] of {source}, and '{unknown[0]}' "
                                   f"there is unknown{close_match(unknown[0], known)}")
        if unknown:
            raise MemoryInferError(f"unknown key '{unknown[0]}' in [{section}] of {source}"
                                   f"{close_match(unknown[0], known)}")
        if missing:
            raise MemoryInferError(f"key '{missing[0]}' is missing from [{section}] of {source}")
        values = {}
        for key, value in given.items():
            kind = keys.get(key, keys.get("*"))[0]
            if kind is not ANY:
                ok = isinstance(value, kind) and not (kind in (NUMBER, int) and isinstance(value, bool))
                if not ok:
                    raise MemoryInferError(f"key '{key}' in [{section}] of {source} must be {_type_name(kind)}")
            values[key] = value
        for key, (_, default) in keys.items():
            if key != "*" and key not in values:
                values[key] = copy.deepcopy(default)
        config[section] = values
    return config


def load_evidence_settings(path: str) -> AnalysisSettings:
    """The per-event settings from a TOML file: checked, then typed (relative paths are taken from its folder)."""
    raw = load_toml(path)
    return evidence_settings(raw, os.path.basename(path), os.path.dirname(os.path.abspath(path)))


def evidence_settings(raw: dict, source: str, directory: str) -> AnalysisSettings:
    """An event's settings from its TOML mapping (``source`` names it in messages; relative paths are taken from
    ``directory``); the keys the user wrote are kept, so that settings left out can come from a release."""
    return AnalysisSettings.from_checked(evidence_config(raw, source), directory, given_keys(raw))


def given_keys(raw: dict) -> dict:
    return {section: sorted(keys) for section, keys in raw.items() if isinstance(keys, dict)}


def evidence_config(raw: dict, source: str) -> dict:
    """An event's configuration from its TOML mapping, checked, with defaults filled in (``source`` names it in
    messages)."""
    config = apply_schema(raw, EVIDENCE_SCHEMA, source)
    data, evidence = config["data"], config["evidence"]
    if data["kind"] not in ("simulated", "files"):
        raise MemoryInferError("key 'kind' in [data] must be 'simulated' or 'files'")
    if data["noise"] not in ("gaussian", "zero"):
        raise MemoryInferError("key 'noise' in [data] must be 'gaussian' or 'zero'")
    for key in ("duration", "sampling_rate", "minimum_frequency"):
        if not data[key] > 0:
            raise MemoryInferError(f"key '{key}' in [data] must be positive")
    if data["kind"] == "simulated" and not config["injection"]:
        raise MemoryInferError("simulated data need an [injection] section with the source parameters")
    if data["kind"] == "files" and not data["files"]:
        raise MemoryInferError("data of kind 'files' need a [data.files.DETECTOR] table per detector")
    grid = evidence["amplitude_grid"]
    if len(grid) != 3 or not grid[0] < -1 or not grid[1] > 1 or int(grid[2]) < 3:
        raise MemoryInferError("key 'amplitude_grid' in [evidence] must be [minimum below -1, maximum above 1, points]")
    limits = evidence["free_amplitude_limits"]
    if len(limits) != 2 or not limits[0] < 0 < limits[1]:
        raise MemoryInferError("key 'free_amplitude_limits' in [evidence] must be [negative, positive]")
    if config["likelihood"]["phase_marginalization"]:
        raise MemoryInferError(PHASE_REFUSAL)
    check_calibration(config["calibration"])
    check_detector_keys(config)
    return config


def analysis_detectors(data: dict) -> list:
    """The bilby detector names an event's data use: ``detectors`` for simulated data, else those of the files."""
    from .detectors import detector_of

    if data["kind"] == "files":
        return list(dict.fromkeys(detector_of(str(key)) for key in data["files"]))
    return [str(name) for name in data["detectors"]]


def check_detector_keys(config: dict) -> None:
    """Every per-detector table names a detector of the analysis (or one of its interferometers), in one
    sentence otherwise; noise curves are known names."""
    from .detectors import NOISE_CURVES, interferometers_of, per_interferometer

    data = config["data"]
    detectors = analysis_detectors(data)
    curves = per_interferometer(data["noise_curves"], detectors, "noise_curves in [data]")
    for name in (member for detector in detectors for member in interferometers_of(detector)):
        curve = curves.get(name, data["noise_curve"])
        if curve not in NOISE_CURVES:
            raise MemoryInferError(f"unknown noise curve '{curve}' for {name}; choose one of {', '.join(NOISE_CURVES)}")
    per_interferometer(config["calibration"]["envelope_files"], detectors, "envelope_files in [calibration]")
    from .open_data import RESAMPLING

    if data["resampling"] not in RESAMPLING:
        raise MemoryInferError(f"key 'resampling' in [data] must be one of {', '.join(repr(r) for r in RESAMPLING)}")


def check_calibration(settings: dict) -> None:
    """One sentence for a bad [calibration] section."""
    if settings["kind"] not in ("none", "constant", "envelope"):
        raise MemoryInferError("key 'kind' in [calibration] must be 'none', 'constant' or 'envelope'")
    if settings["amplitude_sigma"] < 0 or settings["phase_sigma"] < 0:
        raise MemoryInferError("keys 'amplitude_sigma' and 'phase_sigma' in [calibration] must not be negative")
    if settings["spline_nodes"] < 4:
        raise MemoryInferError("key 'spline_nodes' in [calibration] must be at least 4 (a cubic spline)")
    if settings["correction_type"] not in ("data", "template"):
        raise MemoryInferError("key 'correction_type' in [calibration] must be 'data' or 'template'")
    if settings["kind"] == "envelope" and not settings["envelope_files"]:
        raise MemoryInferError("[calibration] of kind 'envelope' needs envelope_files = { DETECTOR = \"file\" }")
