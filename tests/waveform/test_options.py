"""bilby's parameters read once: frozen, hashable, every default in one place."""
import dataclasses

import pytest

from memory_infer.waveform.options import (DEFAULT_APPROXIMANT, DEFAULT_MINIMUM_FREQUENCY, DEFAULT_REFERENCE_FREQUENCY,
                                           DEFAULT_TAPER_DURATION, Binary, ModesRequest, SourceOptions)


def test_missing_arguments_take_the_defaults_and_missing_parameters_are_zero():
    options, binary = SourceOptions.of({}), Binary.of({"mass_1": 30, "mass_2": 20})
    assert (options.approximant, options.reference_frequency, options.minimum_frequency, options.taper_duration) == (
        DEFAULT_APPROXIMANT, DEFAULT_REFERENCE_FREQUENCY, DEFAULT_MINIMUM_FREQUENCY, DEFAULT_TAPER_DURATION)
    assert options.maximum_frequency is None and options.include_memory and options.early_inspiral
    assert binary.mass_1 == 30.0 and isinstance(binary.mass_1, float) and binary.a_1 == 0.0


def test_options_are_frozen_and_equal_options_are_one_key():
    first = SourceOptions.of({"reference_frequency": 20, "mode_list": [[2, 2], [2, -2]]})
    second = SourceOptions.of({"reference_frequency": 20.0, "mode_list": ((2, 2), (2, -2))})
    assert first == second and hash(first) == hash(second) and len({first, second}) == 1
    assert first.mode_list == ((2, 2), (2, -2))
    with pytest.raises(dataclasses.FrozenInstanceError):
        first.approximant = "TaylorT4"
    assert SourceOptions.of({"memory_taper_duration": 0.5}) != SourceOptions()
    assert {Binary.of({"mass_1": 30.0}): 1}[Binary(mass_1=30.0)] == 1
    request = ModesRequest("IMRPhenomTHM", 30.0, 20.0, 1 / 2048, 20.0, (0.0, 0.0, 0.1), (0.0, 0.0, 0.0), 20.0)
    assert hash(request) == hash(dataclasses.replace(request))


def test_bilbys_own_arguments_reach_its_model_but_not_the_key():
    # bilby's lal_binary_black_hole keyword names (reference library: bilby.gw.source)
    options = SourceOptions.of({"waveform_approximant": "TaylorT4", "pn_amplitude_order": 3, "maximum_frequency": 512,
                                "mode_list": [(2, 2)], "include_memory": False})
    arguments = options.bilby_arguments()
    assert arguments == {"waveform_approximant": "TaylorT4", "reference_frequency": 20.0, "minimum_frequency": 20.0,
                         "maximum_frequency": 512.0, "pn_amplitude_order": 3, "mode_array": [[2, 2]]}
    assert options == dataclasses.replace(options, bilby=())
    given = SourceOptions.of({"mode_array": [[3, 3]], "mode_list": [(2, 2)]}).bilby_arguments()
    assert given["mode_array"] == [[3, 3]]  # bilby's own mode array wins for bilby's model
