"""An event's segment and model from its posterior release: every setting the user leaves out is read from the
release's own configuration (``config_file/config``, as pesummary stores the run's configuration) and metadata
(``meta_data/meta_data``, ``approximant``, ``calibration_envelope``), and each value's origin is recorded."""
from __future__ import annotations

import ast
import dataclasses
import os
import re

import numpy as np

from ..common.errors import MemoryInferError
from .readers import release_group, scalar_text
from .release_layout import CALIBRATION_ENVELOPES, PLACES, SAMPLES
from .settings import DEFAULT_POST_TRIGGER

MARGINALIZATIONS = ("distance_marginalization", "time_marginalization", "phase_marginalization")
TEXT_SETTINGS = ("waveform_model", "mode_array", "waveform_arguments", "resampling_method", *MARGINALIZATIONS)
EMPTY_TEXT = ("", "none", "None", "{}", "[]")
ORIGIN_USER = "configuration"


def _text(dataset):
    value = np.asarray(dataset[()]).ravel()
    if value.size == 0:
        return None
    item = value[0]
    return item.decode() if isinstance(item, bytes) else item


def _per_detector(value):
    """A number, or a per-detector mapping written as text (``{ 'H1': 20, 'L1': 20 }`` or ``{H1: 20}``)."""
    if isinstance(value, str) and value.strip().startswith("{"):
        pairs = re.findall(r"['\"]?([A-Za-z0-9]+)['\"]?\s*:\s*([^,}]+)", value)
        try:
            return {key: float(number) for key, number in pairs}
        except ValueError:
            return None
    return scalar_text(np.asarray([value]))


def _detector_list(value) -> list | None:
    if value is None:
        return None
    try:
        parsed = ast.literal_eval(value) if isinstance(value, str) and value.strip().startswith("[") else None
    except (ValueError, SyntaxError):
        parsed = None
    if parsed is None:
        parsed = re.findall(r"[A-Z][A-Z0-9]", str(value))
    return [str(item) for item in parsed] or None


def read_release_settings(path: str, analysis: str | None = None) -> dict:
    """setting -> (value, where in the file) for what the release says; numbers as floats, per-detector
    frequencies as mappings, detectors as a list, calibration envelopes as 7-column arrays per detector."""
    import h5py

    name = os.path.basename(path)
    found = {}
    try:
        with h5py.File(path, "r") as handle:
            why = []
            group, analysis = release_group(handle, name, analysis, why)
            found["analysis"] = (analysis, f"{name}: {why[0]}")
            for setting, places in PLACES.items():
                for place in places:
                    if place in group and isinstance(group[place], h5py.Dataset):
                        raw = _text(group[place])
                        if setting == "detectors":
                            value = _detector_list(raw)
                        elif setting in ("minimum_frequency", "maximum_frequency"):
                            value = _per_detector(raw)
                        elif setting in TEXT_SETTINGS:
                            value = str(raw).strip() if raw is not None and str(raw).strip() not in EMPTY_TEXT else None
                        else:
                            value = scalar_text(np.asarray([raw]))
                            value = float(value) if isinstance(value, float) else None
                        if value is not None:
                            found[setting] = (value, f"{name}: {analysis}/{place}")
                            break
            envelopes = group.get(CALIBRATION_ENVELOPES)
            if isinstance(envelopes, h5py.Group):
                tables = {det: np.asarray(data[()], float) for det, data in envelopes.items()
                          if isinstance(data, h5py.Dataset) and np.ndim(data) == 2 and data.shape[1] == 7}
                if tables:
                    found["calibration_envelopes"] = (tables, f"{name}: {analysis}/{CALIBRATION_ENVELOPES}")
            if "trigger_time" not in found and SAMPLES in group:
                table = group[SAMPLES]
                if table.dtype.names and "geocent_time" in table.dtype.names:
                    found["trigger_time"] = (float(np.median(table["geocent_time"])),
                                             f"{name}: median geocent_time of {analysis}'s samples")
    except OSError:
        raise MemoryInferError(f"catalog release '{name}' is not a readable HDF5 file") from None
    return found


def _resampling(method: str) -> str:
    """The release's resampling method (bilby_pipe's ``lal`` or ``gwpy``, applied to the segment alone)."""
    if str(method).lower() not in ("lal", "gwpy"):
        raise MemoryInferError(f"the release's resampling method '{method}' is not one this tool follows (lal, gwpy)")
    return str(method).lower()


def _mode_array(text: str, where: str) -> tuple:
    """A release's mode array (``[[2, 2], [2, -2], ...]``) as ``((l, m), ...)``; one sentence when it is not one."""
    try:
        modes = tuple((int(l), int(m)) for l, m in ast.literal_eval(text))
    except (ValueError, SyntaxError, TypeError):
        raise MemoryInferError(f"the release's mode array '{text}' ({where}) is not a list of [l, m] pairs") from None
    if not modes or any(l < 2 or abs(m) > l for l, m in modes):
        raise MemoryInferError(f"the release's mode array '{text}' ({where}) names no valid (l, m) mode")
    return modes


def _band_value(value, detectors, pick):
    if isinstance(value, dict):
        chosen = [value[d] for d in detectors if d in value] or list(value.values())
        return float(pick(chosen))
    return float(value)


def apply_release_settings(settings, found: dict):
    """New settings (:class:`memory_infer.inputs.settings.AnalysisSettings`) with every segment and model setting
    the user left out taken from ``found`` (:func:`read_release_settings`), and setting -> origin for every one of
    them (``configuration``, the release's place, or ``default``)."""
    given = settings.given
    data, model, calibration = settings.data, settings.model, settings.calibration
    detectors = list(data.files) or list(data.detectors)
    origins, changes = {}, {"data": {}, "model": {}, "calibration": {}, "evidence": {}}

    def take(section, key, setting, convert=float):
        if key in given.get(section, []):
            origins[setting] = ORIGIN_USER
        elif setting in found:
            changes[section][key] = convert(found[setting][0])
            origins[setting] = found[setting][1]
        else:
            origins[setting] = "default"

    take("data", "duration", "duration")
    take("data", "sampling_rate", "sampling_rate")
    take("data", "minimum_frequency", "minimum_frequency", lambda v: _band_value(v, detectors, max))
    take("data", "maximum_frequency", "maximum_frequency", lambda v: _band_value(v, detectors, min))
    take("model", "reference_frequency", "reference_frequency")
    take("data", "window_roll_off", "tukey_roll_off")
    take("data", "resampling", "resampling_method", _resampling)
    if "analysis" in found:
        origins["analysis"] = f"{found['analysis'][0]} ({found['analysis'][1]})"
    if "waveform_arguments" in found:
        text, where = found["waveform_arguments"]
        raise MemoryInferError(f"the release's waveform arguments {text} ({where}) change the model, and this tool "
                               "cannot yet pass them to both the oscillatory signal and the memory's modes; this "
                               "release is refused rather than reweighted with another model")
    marginalized = [name.split("_")[0] for name in MARGINALIZATIONS
                    if str(found.get(name, ("", ""))[0]).strip().lower() in ("true", "1", "yes")]
    if marginalized:
        where = found[f"{marginalized[0]}_marginalization"][1]
        if "samples_log_likelihood" in given.get("evidence", []):
            origins["samples_log_likelihood"] = ORIGIN_USER
        else:  # its column is a marginalized likelihood, not the joint one at each (reconstructed) sample
            changes["evidence"]["samples_log_likelihood"] = ""
            origins["samples_log_likelihood"] = (
                f"not used: the release marginalized over {' and '.join(marginalized)} ({where}), so its "
                "log_likelihood column is a marginalized likelihood, not the joint one at each sample; reweighting "
                "takes L(A)/L(0) at each sample of the joint posterior the release reconstructs, and no departure "
                "from the column is computed")
    if "modes" in given.get("model", []):
        origins["mode_array"] = ORIGIN_USER
    elif "mode_array" in found:
        changes["model"]["modes"] = _mode_array(*found["mode_array"])
        origins["mode_array"] = found["mode_array"][1]
    if "start_time" in given.get("data", []):
        origins["start_time"] = ORIGIN_USER
    elif "trigger_time" in found:
        post, post_from = found.get("post_trigger_duration", (DEFAULT_POST_TRIGGER, "default"))
        duration = changes["data"].get("duration", data.duration)
        changes["data"]["start_time"] = float(found["trigger_time"][0]) + float(post) - float(duration)
        origins["start_time"] = (f"trigger time ({found['trigger_time'][1]}) + post-trigger duration "
                                 f"({post_from}) - duration")
    else:
        origins["start_time"] = "default"
    if "approximant" in given.get("model", []):
        origins["waveform_model"] = ORIGIN_USER
    elif "waveform_model" in found:
        from ..waveform.models import FREQUENCY_DOMAIN, SUPPORTED

        name, where = found["waveform_model"]
        runs = tuple(SUPPORTED) + tuple(FREQUENCY_DOMAIN)
        if name not in runs:
            raise MemoryInferError(f"the release's model '{name}' ({where}) is not one this tool runs "
                                   f"({', '.join(runs)}); set [model] approximant to choose one")
        changes["model"]["approximant"] = name
        origins["waveform_model"] = where
    else:
        origins["waveform_model"] = "default"
    if given.get("calibration"):
        origins["calibration"] = ORIGIN_USER
    elif "calibration_envelopes" in found and all(d in found["calibration_envelopes"][0] for d in detectors):
        changes["calibration"] = {"kind": "envelope",
                                  "envelopes": {d: found["calibration_envelopes"][0][d] for d in detectors}}
        origins["calibration"] = found["calibration_envelopes"][1]
    else:
        origins["calibration"] = "none (the release holds no envelope for every detector)"
    resolved = dataclasses.replace(settings, data=dataclasses.replace(data, **changes["data"]),
                                   model=dataclasses.replace(model, **changes["model"]),
                                   calibration=dataclasses.replace(calibration, **changes["calibration"]),
                                   evidence=dataclasses.replace(settings.evidence, **changes["evidence"]))
    return resolved, origins


def samples_stand_in_priors(frame, name: str):
    """Priors for reweighting without [priors]: each source parameter the samples hold is marked as sampled
    (uniform over the samples' range; reweighting never evaluates it, the samples carry their own prior), the
    spins they lack are fixed at zero, and any other missing parameter is refused in one sentence."""
    import bilby

    from .checks import SOURCE_PARAMETERS, ZERO_DEFAULTS

    priors = bilby.core.prior.PriorDict()
    for key in SOURCE_PARAMETERS:
        if key in frame.columns:
            values = frame[key].to_numpy(float)
            low, high = float(values.min()), float(values.max())
            if high > low:
                priors[key] = bilby.core.prior.Uniform(low, high, name=key)
            else:
                priors[key] = bilby.core.prior.DeltaFunction(low, name=key)
        elif key in ZERO_DEFAULTS:
            priors[key] = bilby.core.prior.DeltaFunction(0.0, name=key)
        else:
            raise MemoryInferError(f"the posterior samples in '{name}' lack the column '{key}', and there is no "
                                   "[priors] entry to fix it")
    return priors
