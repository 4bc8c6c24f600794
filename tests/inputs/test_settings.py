import dataclasses
import pickle

import pytest

from memory_infer.inputs.config import EVIDENCE_SCHEMA, evidence_settings
from memory_infer.inputs.settings import (AMPLITUDE_GRID, DEFAULT_REFERENCE_FREQUENCY, FREE_AMPLITUDE_LIMITS,
                                          AnalysisSettings, DataSettings, EventSettings, ModelSettings)

RAW = {"event": {"label": "x"}, "injection": {"mass_1": 36.0}, "data": {"detectors": ["CE"], "noise_curve": "ce"},
       "evidence": {"free_amplitude_limits": [-3.0, 6.0]}, "model": {"modes": [[2, 2], [3, 3]]}}


def test_settings_take_the_written_values_and_one_default_each():
    settings = evidence_settings(RAW, "test", "/some/folder")
    assert settings.event.label == "x" and settings.data.detectors == ("CE",) and settings.data.directory == "/some/folder"
    assert settings.evidence.free_amplitude_limits == (-3.0, 6.0)  # written: a tuple of the written values
    assert settings.evidence.amplitude_grid == AMPLITUDE_GRID and AnalysisSettings(EventSettings("y")).evidence \
        .free_amplitude_limits == FREE_AMPLITUDE_LIMITS
    assert settings.model.modes == ((2, 2), (3, 3)) and settings.given["evidence"] == ["free_amplitude_limits"]
    # the checking schema's defaults are the dataclasses' own (defined once)
    assert EVIDENCE_SCHEMA["evidence"]["amplitude_grid"][1] == AMPLITUDE_GRID
    assert EVIDENCE_SCHEMA["data"]["minimum_frequency"][1] == DataSettings().minimum_frequency == 20.0


def test_the_model_defaults_agree_with_the_waveform_stage():
    """The waveform stage's defaults are the settings' (the memory taper is the one repeated, not imported)."""
    from memory_infer.waveform.models import DEFAULT_MINIMUM_FREQUENCY
    from memory_infer.waveform.options import DEFAULT_TAPER_DURATION

    assert ModelSettings().memory_taper == DEFAULT_TAPER_DURATION
    assert DataSettings().minimum_frequency == DEFAULT_MINIMUM_FREQUENCY


def test_settings_are_frozen_and_changed_only_as_new_values():
    settings = evidence_settings(RAW, "test", ".")
    with pytest.raises(dataclasses.FrozenInstanceError):
        settings.model.reference_frequency = 30.0
    changed = dataclasses.replace(settings, model=dataclasses.replace(settings.model, reference_frequency=30.0))
    assert changed.model.reference_frequency == 30.0 and settings.model.reference_frequency is None
    assert pickle.loads(pickle.dumps(changed)) == changed  # tasks carry them to worker processes


def test_waveform_arguments_fall_back_to_the_band_and_the_default_reference():
    arguments = ModelSettings(approximant="IMRPhenomTHM").waveform_arguments(DataSettings(minimum_frequency=15.0))
    assert arguments["minimum_frequency"] == 15.0 and arguments["reference_frequency"] == DEFAULT_REFERENCE_FREQUENCY
    given = ModelSettings(approximant="IMRPhenomTHM", reference_frequency=50.0, minimum_frequency=10.0, modes=((2, 2),))
    arguments = given.waveform_arguments(DataSettings())
    assert (arguments["reference_frequency"], arguments["minimum_frequency"]) == (50.0, 10.0)
    assert arguments["mode_list"] == [(2, 2)]


def test_the_mapping_for_provenance_has_no_hidden_keys():
    mapping = evidence_settings(RAW, "test", "/x").as_mapping()
    assert "directory" not in mapping["data"] and "envelopes" not in mapping["calibration"]
    assert mapping["evidence"]["free_amplitude_limits"] == [-3.0, 6.0] and mapping["injection"] == {"mass_1": 36.0}
    assert not any(key.startswith("_") for key in mapping)
