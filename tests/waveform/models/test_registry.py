"""The model registry: one entry per model, the domain looked up there, spins as the models take them."""
from types import MappingProxyType

import pytest

from memory_infer.common.errors import WaveformError
from memory_infer.waveform.models import generate_modes
from memory_infer.waveform.models import registry
from memory_infer.waveform.models.lal_modes import spin_support
from memory_infer.waveform.models.registry import (FREQUENCY, FREQUENCY_DOMAIN, MODELS, SUPPORTED, TIME,
                                                   is_frequency_domain, model, takes_precessing_spins)


def test_lalsimulation_entries_take_the_spins_lalsimulation_says():
    # reference library: lalsimulation's SimInspiralGetSpinSupportFromApproximant
    for name, entry in MODELS.items():
        if entry.domain == TIME and entry.generate.__module__.endswith("lal_modes"):
            assert entry.precessing == (spin_support(name) == "precessing"), name


def test_domain_and_spins_of_every_kind_of_name():
    assert FREQUENCY_DOMAIN == ("IMRPhenomXHM", "IMRPhenomXPHM") and "IMRPhenomTHM" in SUPPORTED
    assert not set(SUPPORTED) & set(FREQUENCY_DOMAIN)
    assert is_frequency_domain("IMRPhenomXPHM") and not is_frequency_domain("IMRPhenomTHM")
    assert model("SEOBNRv4").domain == TIME and model("IMRPhenomXHM").domain == FREQUENCY  # unlisted: lalsimulation
    assert takes_precessing_spins("SEOBNRv5PHM") and not takes_precessing_spins("SEOBNRv5HM")
    assert takes_precessing_spins("IMRPhenomPv2") and not takes_precessing_spins("SEOBNRv4")  # lalsimulation decides


def test_a_new_model_is_one_entry(monkeypatch):
    calls = []

    def generate(approximant, *arguments):
        calls.append(approximant)
        return MODELS["LeadingOrderInspiral"].generate(approximant, *arguments)

    entry = MODELS["LeadingOrderInspiral"].__class__("Probe", TIME, False, generate)  # the entry a new model adds
    monkeypatch.setattr(registry, "MODELS", MappingProxyType({**MODELS, "Probe": entry}))
    series = generate_modes("Probe", 10.0, 8.0, 100.0, 1 / 4096, 30.0, finer_for_memory=False)
    assert calls == ["Probe"] and (2, 2) in series.modes
    with pytest.raises(WaveformError, match="frequency-domain modes"):
        generate_modes("IMRPhenomXHM", 10.0, 8.0, 100.0, 1 / 4096, 30.0)
