"""What a stored run depends on, as short digests (SHA-256 of a canonical text or of array bytes): its priors, its
data (each detector's strain, PSD and band), its model and likelihood settings, and its sampler settings. A
checkpoint is resumed only when every digest matches; otherwise the names of the parts that changed say why not."""
from __future__ import annotations

import hashlib
import json

import numpy as np

from ..common.writing import JSONEncoder


def digest_of(value) -> str:
    """SHA-256 (first 16 hex digits) of ``value``: arrays by their bytes, shape and type; anything else by its
    canonical JSON (keys sorted)."""
    hasher = hashlib.sha256()
    _feed(hasher, value)
    return hasher.hexdigest()[:16]


def _feed(hasher, value) -> None:
    if isinstance(value, np.ndarray):
        array = np.ascontiguousarray(value)
        hasher.update(f"array {array.dtype.str} {array.shape}".encode())
        hasher.update(array.tobytes())
    elif isinstance(value, dict):
        for key in sorted(value, key=str):
            hasher.update(f"key {key!s}".encode())
            _feed(hasher, value[key])
    elif isinstance(value, (list, tuple)):
        hasher.update(f"list {len(value)}".encode())
        for item in value:
            _feed(hasher, item)
    else:
        hasher.update(json.dumps(value, sort_keys=True, cls=JSONEncoder, default=repr).encode())


def priors_digest(priors) -> str:
    """Every prior by name, type and bilby's own description of it (its parameters)."""
    return digest_of({name: f"{type(prior).__name__}: {prior!r}" for name, prior in priors.items()})


def data_digest(detectors) -> str:
    """Each detector's name, segment, band, strain (frequency domain, windowed as analysed) and PSD."""
    parts = {}
    for detector in detectors:
        parts[detector.name] = {
            "segment": [float(detector.strain_data.start_time), float(detector.strain_data.duration),
                        float(detector.strain_data.sampling_frequency)],
            "band": [float(detector.minimum_frequency), float(detector.maximum_frequency)],
            "strain": np.asarray(detector.strain_data.frequency_domain_strain),
            "psd": np.asarray(detector.power_spectral_density_array),
            "calibration": repr(getattr(detector, "calibration_model", None).__class__.__name__),
        }
    return digest_of(parts)


def nested_run_inputs(setup, priors, sampler: dict) -> dict:
    """The digests a nested run's checkpoint depends on, by part: priors, data, model and likelihood, sampler."""
    generator = setup.generator
    likelihood = setup.settings.likelihood
    model = {"waveform_arguments": dict(generator.waveform_arguments), "duration": float(generator.duration),
             "sampling_frequency": float(generator.sampling_frequency), "start_time": float(generator.start_time),
             "distance_marginalization": bool(likelihood.distance_marginalization),
             "time_marginalization": bool(likelihood.time_marginalization)}
    return {"priors": priors_digest(priors), "data": data_digest(setup.detectors), "model": digest_of(model),
            "sampler settings": digest_of(sampler)}


def changed_parts(stored: dict | None, current: dict) -> list:
    """Names of the parts whose digests differ (every part when nothing was stored)."""
    if not isinstance(stored, dict):
        return list(current)
    return [name for name, value in current.items() if stored.get(name) != value]
