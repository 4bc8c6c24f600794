"""A campaign's configuration: TOML checked key by key (:func:`memory_infer.inputs.config.apply_schema`) and typed
as :class:`memory_infer.inputs.settings.CampaignSettings`, with the defaults of the settings dataclasses."""
from __future__ import annotations

import dataclasses
import os

from ..common.errors import MemoryInferError
from .config import NUMBER, apply_schema, load_toml
from .detectors import NETWORKS
from .settings import (CampaignSettings, ClusterSettings, DataSettings, ModelSettings, RecoverySettings,
                       defaults_of, typed)

METHODS = ("fast", "reweighting", "nested")
FREE_PARAMETERS = RecoverySettings.free_parameters
CLUSTER_KINDS = ("local", "address", "slurm", "htcondor")


def _section(defaults: dict, types: dict) -> dict:
    """A schema section: each key's type, with its default from the settings dataclass (defined once)."""
    return {key: (kind, defaults[key]) for key, kind in types.items()}


_CAMPAIGN, _DATA = defaults_of(CampaignSettings), defaults_of(DataSettings)
CAMPAIGN_SCHEMA = {
    "campaign": _section(_CAMPAIGN, {
        "label": str, "injections": str, "count": int, "seed": int, "network": str, "noise": str,
        "injected_amplitude": (str, int, float), "method": str, "detection_snr": NUMBER, "threshold": NUMBER,
        "bootstrap": int, "free_amplitude_limits": list}),
    "data": dict(_section(_DATA, {"duration": NUMBER, "sampling_rate": NUMBER, "minimum_frequency": NUMBER}),
                 geocent_time=(NUMBER, _CAMPAIGN["geocent_time"])),
    "model": {"approximant": (str, CampaignSettings.model.approximant)},
    "recovery": _section(defaults_of(RecoverySettings), {"free_parameters": list, "live_points": int,
                                                         "accepted_walks": int, "minimum_effective_samples": NUMBER}),
    "cluster": _section(defaults_of(ClusterSettings), {
        "kind": str, "scheduler_address": str, "jobs": int, "cores": int, "memory": str, "walltime": str,
        "queue": str, "job_logs": str}),
}


def load_campaign_settings(path: str) -> CampaignSettings:
    """A campaign's settings from its TOML file, checked (one sentence per problem)."""
    config = apply_schema(load_toml(path), CAMPAIGN_SCHEMA, os.path.basename(path))
    return campaign_settings(config, os.path.dirname(os.path.abspath(path)))


def campaign_settings(config: dict, directory: str) -> CampaignSettings:
    """Typed settings from a checked campaign mapping; every injection shares its segment and model, the model's
    reference frequency being the band's lower edge."""
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
    cluster = cluster_settings(config["cluster"])
    data_section = config["data"]
    data = dataclasses.replace(DataSettings(), duration=float(data_section["duration"]),
                               sampling_rate=float(data_section["sampling_rate"]),
                               minimum_frequency=float(data_section["minimum_frequency"]), noise=campaign["noise"],
                               seed=campaign["seed"], directory=directory)
    model = ModelSettings(approximant=config["model"]["approximant"], reference_frequency=data.minimum_frequency,
                          reference_frequency_from="the campaign's minimum frequency")
    fields = {key: value for key, value in campaign.items()}
    fields["free_amplitude_limits"] = tuple(float(x) for x in campaign["free_amplitude_limits"])
    return CampaignSettings(**fields, geocent_time=data_section["geocent_time"], data=data, model=model,
                            recovery=typed(RecoverySettings, config["recovery"]), cluster=cluster, directory=directory)


def cluster_settings(section: dict) -> ClusterSettings:
    """A checked [cluster] section as settings (one sentence for an unknown kind)."""
    if section["kind"] not in CLUSTER_KINDS:
        raise MemoryInferError("key 'kind' in [cluster] must be local, address, slurm or htcondor")
    return typed(ClusterSettings, section)
