"""A campaign's configuration and its plan: the full, seeded list of injection tasks.

Injections and noise are seeded per injection index, so the order of completion never changes a record.
"""
from __future__ import annotations

import hashlib
import json
import os

from ..common.errors import MemoryInferError
from ..inputs.config import NUMBER, apply_schema, load_toml
from ..inputs.detectors import NETWORKS

CAMPAIGN_SCHEMA = {
    "campaign": {"label": (str, "campaign"), "injections": (str, None), "count": (int, 100), "seed": (int, 1),
                 "network": (str, "hlv-design"), "noise": (str, "gaussian"), "injected_amplitude": ((str, int, float), 1.0),
                 "method": (str, "fast"), "detection_snr": (NUMBER, 12.0), "threshold": (NUMBER, 8.0),
                 "bootstrap": (int, 1000), "free_amplitude_limits": (list, [-5.0, 5.0])},
    "data": {"duration": (NUMBER, 4.0), "sampling_rate": (NUMBER, 2048.0), "minimum_frequency": (NUMBER, 20.0),
             "geocent_time": (NUMBER, 1_000_000_002.0)},
    "model": {"approximant": (str, "IMRPhenomTHM")},
    "recovery": {"free_parameters": (list, ["phase", "psi", "luminosity_distance", "theta_jn", "geocent_time"]),
                 "live_points": (int, 50), "accepted_walks": (int, 10),
                 "minimum_effective_samples": (NUMBER, 30.0)},
    "cluster": {"kind": (str, "local"), "scheduler_address": (str, None), "jobs": (int, 2), "cores": (int, 1),
                "memory": (str, "2GB"), "walltime": (str, "02:00:00"), "queue": (str, None),
                "job_logs": (str, None)},
}
METHODS = ("fast", "reweighting", "nested")
FREE_PARAMETERS = ("phase", "psi", "luminosity_distance", "theta_jn", "geocent_time")


def load_campaign_config(path: str) -> dict:
    config = apply_schema(load_toml(path), CAMPAIGN_SCHEMA, os.path.basename(path))
    config["_directory"] = os.path.dirname(os.path.abspath(path))
    campaign = config["campaign"]
    if not campaign["injections"]:
        raise MemoryInferError("key 'injections' in [campaign] must name a population TOML or an injection CSV")
    if campaign["network"] not in NETWORKS:
        raise MemoryInferError(f"unknown network '{campaign['network']}'; choose one of {', '.join(NETWORKS)}")
    if campaign["method"] not in METHODS:
        raise MemoryInferError(f"unknown method '{campaign['method']}'; choose one of {', '.join(METHODS)}")
    if campaign["noise"] not in ("gaussian", "zero"):
        raise MemoryInferError("key 'noise' in [campaign] must be 'gaussian' or 'zero'")
    amplitude = campaign["injected_amplitude"]
    if isinstance(amplitude, str) and amplitude != "prior":
        raise MemoryInferError("key 'injected_amplitude' in [campaign] must be a number or 'prior'")
    if campaign["count"] < 1:
        raise MemoryInferError("key 'count' in [campaign] must be at least 1")
    for name in config["recovery"]["free_parameters"]:
        if name not in FREE_PARAMETERS:
            raise MemoryInferError(f"free parameter '{name}' in [recovery] is not one of {', '.join(FREE_PARAMETERS)}")
    if config["cluster"]["kind"] not in ("local", "address", "slurm", "htcondor"):
        raise MemoryInferError("key 'kind' in [cluster] must be local, address, slurm or htcondor")
    return config


def plan(config: dict) -> list:
    """The full, seeded list of tasks (identical on every resume)."""
    import numpy as np

    from ..inputs.population import draw, load_population, read_table, redshift_reach
    from ..waveform.models import takes_precessing_spins

    campaign, data = config["campaign"], config["data"]
    path = os.path.join(config["_directory"], campaign["injections"])
    redshift_max = None
    if path.endswith(".toml"):
        population = load_population(path)
        approximant = config["model"]["approximant"]
        if population["spin_orientation"] == "isotropic" and not takes_precessing_spins(approximant):
            raise MemoryInferError(f"the population's isotropic (precessing) spins need a precessing waveform model "
                                   f"such as IMRPhenomTPHM; '{approximant}' takes aligned spins only")
        redshift_max = redshift_reach(population, campaign["network"])
        sources = draw(population, campaign["count"], campaign["seed"], data["geocent_time"], redshift_max)
    elif path.endswith(".csv"):
        sources = read_table(path, data["geocent_time"])[: campaign["count"]]
    else:
        raise MemoryInferError(f"injections file '{campaign['injections']}' must end in .toml or .csv")
    limits = campaign["free_amplitude_limits"]
    rng = np.random.default_rng([campaign["seed"], 7])
    amplitudes = (rng.uniform(limits[0], limits[1], len(sources)) if campaign["injected_amplitude"] == "prior"
                  else np.full(len(sources), float(campaign["injected_amplitude"])))
    settings = {"network": campaign["network"], "noise": campaign["noise"], "seed": campaign["seed"],
                "duration": float(data["duration"]), "sampling_rate": float(data["sampling_rate"]),
                "minimum_frequency": float(data["minimum_frequency"]), "approximant": config["model"]["approximant"],
                "method": campaign["method"], "detection_snr": float(campaign["detection_snr"]),
                "free_amplitude_limits": [float(x) for x in limits], "recovery": dict(config["recovery"]),
                "redshift_max": redshift_max}
    return [{"index": i, "source": source, "amplitude": float(amplitudes[i]), "settings": settings}
            for i, source in enumerate(sources)]


def fingerprint(tasks) -> str:
    text = json.dumps([{k: v for k, v in t.items() if k != "settings"} for t in tasks] + [tasks[0]["settings"]],
                      sort_keys=True)
    return hashlib.sha256(text.encode()).hexdigest()
