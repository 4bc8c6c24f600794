import numpy as np
import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.inputs.config import load_evidence_config
from memory_infer.inputs.event_data import build_priors, detectors_from_files, injection_parameters, waveform_arguments

from helpers import event_config


def test_priors_fix_what_is_not_sampled_at_the_injection(tmp_path):
    config = load_evidence_config(event_config(tmp_path))
    injection = injection_parameters(config)
    priors = build_priors(config, injection)
    assert not priors["phase"].is_fixed
    assert priors["mass_1"].peak == injection["mass_1"] and priors["a_1"].peak == 0.0
    assert waveform_arguments(config)["minimum_frequency"] == 20.0


def test_detectors_from_files_check_the_segment(tmp_path):
    rate, duration, start = 256.0, 4.0, 1e9
    times = start + np.arange(int(rate * duration)) / rate
    np.savetxt(tmp_path / "H1.txt", np.column_stack([times, np.zeros(times.size)]))
    np.savetxt(tmp_path / "H1_psd.txt", np.column_stack([np.linspace(1, 200, 400), np.full(400, 1e-46)]))
    files = {"H1": {"strain": "H1.txt", "psd": "H1_psd.txt"}}
    detectors = detectors_from_files(files, rate, duration, start, 20.0, directory=str(tmp_path))
    assert detectors[0].name == "H1" and detectors[0].strain_data.duration == duration
    with pytest.raises(MemoryInferError, match="covers 1000000000.000 to 1000000004.000, not the stretch 1000000000.000 to 1000000008.000"):
        detectors_from_files(files, rate, 8.0, start, 20.0, directory=str(tmp_path))
