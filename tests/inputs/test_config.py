import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.inputs.config import amplitude_grid, grid_with_hypotheses, load_evidence_config

from helpers import event_config


def test_defaults_are_filled_and_the_grid_holds_the_hypotheses(tmp_path):
    config = load_evidence_config(event_config(tmp_path))
    assert config["sampler"]["pool"] == 1 and config["likelihood"]["distance_marginalization"] is False
    grid = amplitude_grid(config)
    for value in (-1.0, 0.0, 1.0):
        assert value in grid
    small = grid_with_hypotheses(-2.5, 2.5, 3)
    assert list(small) == [-2.5, -1.0, 0.0, 1.0, 2.5]


@pytest.mark.parametrize("extra, message", [
    ('max_reweight_samples = "many"', "must be a whole number"),
    ("free_amplitude_limits = [1.0, 5.0]", "free_amplitude_limits"),
    ("surprise = 1", "unknown key 'surprise'"),
])
def test_each_problem_is_one_sentence(tmp_path, extra, message):
    path = event_config(tmp_path, evidence_extra=extra)
    with pytest.raises(MemoryInferError, match=message):
        load_evidence_config(path)


def test_the_readme_input_example_is_a_valid_configuration(tmp_path):
    """The README's minimal configuration for published samples on open data passes the schema as printed."""
    import os

    from memory_infer.inputs.config import load_evidence_config

    readme = open(os.path.join(os.path.dirname(__file__), "..", "..", "README.md")).read()
    block = readme.split("A minimal configuration for published samples")[1].split("```toml")[1].split("```")[0]
    path = tmp_path / "example.toml"
    path.write_text(block)
    config = load_evidence_config(str(path))
    assert config["evidence"]["samples_analysis"] == "C01:IMRPhenomTHM"
    assert config["data"]["files"]["L1"]["psd_from_samples"] is True
    assert config["calibration"]["kind"] == "constant" and config["model"]["reference_frequency"] is None


def test_an_unknown_resampling_is_one_sentence():
    from memory_infer.common.errors import MemoryInferError
    from memory_infer.inputs.config import evidence_settings

    raw = {"event": {"label": "x"}, "data": {"kind": "files", "files": {"H1": {"strain": "a"}}, "resampling": "cubic"}}
    with pytest.raises(MemoryInferError, match="key 'resampling' in \\[data\\] must be one of"):
        evidence_settings(raw, "test", ".")
