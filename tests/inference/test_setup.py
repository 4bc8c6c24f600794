import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.inference.setup import prepare, sampled_columns
from memory_infer.inputs.config import load_evidence_settings

from helpers import event_config


def test_prepare_builds_a_checked_setup(tmp_path):
    setup = prepare(load_evidence_settings(event_config(tmp_path)))
    assert setup.injection["mass_1"] == 36.0 and setup.external_samples is None
    assert sampled_columns(setup.priors) == ["phase"]
    likelihood, priors = setup.likelihood("free")
    assert not priors["memory_amplitude"].is_fixed and not likelihood.priors["memory_amplitude"].is_fixed
    assert setup.settings_fingerprint()["amplitude_grid"][0] == -3.0


def test_unknown_method_and_fixed_distance_with_marginalization_are_refused(tmp_path):
    config = load_evidence_settings(event_config(tmp_path, methods='["nested", "guessing"]'))
    with pytest.raises(MemoryInferError, match="unknown method 'guessing'"):
        prepare(config)
    config = load_evidence_settings(event_config(tmp_path, name="b.toml", likelihood="distance_marginalization = true"))
    with pytest.raises(MemoryInferError, match="distance marginalization needs a distance prior"):
        prepare(config).likelihood("none")


def test_model_from_configuration_then_the_samples_file_then_default():
    from memory_infer.inputs.event_inputs import resolve_model
    from memory_infer.inputs.settings import ModelSettings

    cases = [({"approximant": "IMRPhenomTPHM"}, {"waveform_model": "IMRPhenomXPHM"}, {}, "IMRPhenomTPHM", "configuration"),
             ({"approximant": None}, {"waveform_model": "IMRPhenomXPHM"}, {"waveform_approximant": "IMRPhenomXHM"},
              "IMRPhenomXPHM", "the samples file's metadata"),
             ({"approximant": None}, {}, {"waveform_approximant": "IMRPhenomXHM"}, "IMRPhenomXHM",
              "the samples file's columns"),
             ({"approximant": None}, {}, {}, "IMRPhenomTHM", "default")]
    for model, metadata, columns, expected, origin in cases:
        given = ModelSettings(**model)
        resolved = resolve_model(given, metadata, columns)
        assert resolved.approximant == expected and resolved.approximant_from == origin
        assert given.approximant == model["approximant"]  # a new value: the given settings are left as they were
