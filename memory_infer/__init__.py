"""memory_infer: Bayesian tests for the nonlinear (displacement) gravitational-wave memory.

Pipeline stages, each a folder, imports running one way: common -> waveform -> inputs -> results ->
inference -> catalog -> campaign -> reports -> commands. The names below are the public Python API;
they load on first use, so ``import memory_infer`` stays light.
"""
from importlib import import_module
from types import MappingProxyType

__version__ = "0.1.0"

_PUBLIC = MappingProxyType({
    # waveform
    "generate_modes": "waveform.models", "memory_modes": "waveform.memory", "memory_at_direction": "waveform.memory",
    "memory_binary_black_hole": "waveform.source_model", "MemoryWaveformGenerator": "waveform.generator",
    "waveform_generator": "waveform.generator",
    # inputs
    "load_evidence_settings": "inputs.config",
    "read_strain": "inputs.readers", "read_psd": "inputs.readers",
    "read_samples": "inputs.readers", "detectors_from_files": "inputs.event_data",
    # results
    "EventResult": "results.event", "CatalogResult": "results.catalog", "CampaignSummary": "results.campaign",
    "EvidenceEstimate": "results.estimates", "AmplitudeCurve": "results.estimates",
    # inference
    "MemoryTransient": "inference.likelihood", "reweight": "inference.methods.reweighting",
    "fast_estimates": "inference.methods.fast", "run_nested": "inference.methods.nested",
    "prepare": "inference.setup", "run_event": "inference.runner",
    # catalog
    "combine": "catalog.combine",
    # errors
    "MemoryInferError": "common.errors", "WaveformError": "common.errors",
})

__all__ = sorted(_PUBLIC)


def __getattr__(name):
    if name in _PUBLIC:
        value = getattr(import_module(f".{_PUBLIC[name]}", __name__), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'memory_infer' has no attribute '{name}'")


def __dir__():
    return sorted(list(globals()) + __all__)
