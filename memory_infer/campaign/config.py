"""A campaign's plan: the full, seeded list of injection tasks from its settings
(:class:`memory_infer.inputs.settings.CampaignSettings`, checked by :mod:`memory_infer.inputs.campaign_config`).

Injections and noise are seeded per injection index, so the order of completion never changes a record.
"""
from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass

from ..common.errors import MemoryInferError
from ..inputs.campaign_config import load_campaign_settings  # noqa: F401  (the campaign's settings, for callers)


@dataclass(frozen=True)
class InjectionTask:
    """One injection of a campaign, fixed in the command's own process before anything runs: its index, source
    (bilby parameters, detector frame, checked when read or drawn), injected memory amplitude, the campaign's
    settings (:class:`memory_infer.inputs.settings.CampaignSettings`) and the folder a full recovery works in."""

    index: int
    source: dict
    amplitude: float
    settings: object
    workdir: str

    def described(self) -> dict:
        """What of the task changes its record (its share of the campaign's fingerprint)."""
        return {"index": self.index, "source": self.source, "amplitude": self.amplitude}


def plan(settings, workdir: str = "work") -> list:
    """The full, seeded list of :class:`InjectionTask` (identical on every resume), every input read and checked
    here, before anything runs; a full recovery works in ``workdir``."""
    import numpy as np

    from ..inputs.population import draw, load_population, read_table, redshift_reach
    from ..waveform.models import takes_precessing_spins

    path = settings.injections_path
    if path.endswith(".toml"):
        population = load_population(path)
        approximant = settings.model.approximant
        if population.spin_orientation == "isotropic" and not takes_precessing_spins(approximant):
            raise MemoryInferError(f"the population's isotropic (precessing) spins need a precessing waveform model "
                                   f"such as IMRPhenomTPHM; '{approximant}' takes aligned spins only")
        redshift_max = redshift_reach(population, settings.network)
        sources = draw(population, settings.count, settings.seed, settings.geocent_time, redshift_max)
    elif path.endswith(".csv"):
        sources = read_table(path, settings.geocent_time)[: settings.count]
    else:
        raise MemoryInferError(f"injections file '{settings.injections}' must end in .toml or .csv")
    limits = settings.free_amplitude_limits
    rng = np.random.default_rng([settings.seed, 7])
    amplitudes = (rng.uniform(limits[0], limits[1], len(sources)) if settings.injected_amplitude == "prior"
                  else np.full(len(sources), float(settings.injected_amplitude)))
    return [InjectionTask(i, source, float(amplitudes[i]), settings, workdir) for i, source in enumerate(sources)]


def described(settings) -> dict:
    """What of a campaign's settings changes its records (its fingerprint's share)."""
    data, recovery = settings.data, settings.recovery
    return {"network": settings.network, "noise": settings.noise, "seed": settings.seed, "duration": data.duration,
            "sampling_rate": data.sampling_rate, "minimum_frequency": data.minimum_frequency,
            "approximant": settings.model.approximant, "method": settings.method,
            "detection_snr": float(settings.detection_snr), "free_amplitude_limits": list(settings.free_amplitude_limits),
            "recovery": {"free_parameters": list(recovery.free_parameters), "live_points": recovery.live_points,
                         "accepted_walks": recovery.accepted_walks,
                         "minimum_effective_samples": recovery.minimum_effective_samples}}


def fingerprint(tasks) -> str:
    text = json.dumps([t.described() for t in tasks] + [described(tasks[0].settings)], sort_keys=True)
    return hashlib.sha256(text.encode()).hexdigest()
