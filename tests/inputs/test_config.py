import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.inputs.config import grid_with_hypotheses, load_evidence_settings

from helpers import event_config


def test_defaults_are_filled_and_the_grid_holds_the_hypotheses(tmp_path):
    settings = load_evidence_settings(event_config(tmp_path))
    assert settings.sampler.pool == 1 and settings.likelihood.distance_marginalization is False
    grid = settings.evidence.grid()
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
        load_evidence_settings(path)


def test_the_readme_input_example_is_a_valid_configuration(tmp_path):
    """The README's minimal configuration for published samples on open data passes the schema as printed."""
    import os

    readme = open(os.path.join(os.path.dirname(__file__), "..", "..", "README.md")).read()
    block = readme.split("A minimal configuration for published samples")[1].split("```toml")[1].split("```")[0]
    path = tmp_path / "example.toml"
    path.write_text(block)
    settings = load_evidence_settings(str(path))
    assert settings.evidence.samples_analysis == "C01:IMRPhenomTHM"
    assert settings.data.files["L1"]["psd_from_samples"] is True
    assert settings.calibration.kind == "constant" and settings.model.reference_frequency is None


def test_an_unknown_resampling_is_one_sentence():
    from memory_infer.common.errors import MemoryInferError
    from memory_infer.inputs.config import evidence_settings

    raw = {"event": {"label": "x"}, "data": {"kind": "files", "files": {"H1": {"strain": "a"}}, "resampling": "cubic"}}
    with pytest.raises(MemoryInferError, match="key 'resampling' in \\[data\\] must be one of"):
        evidence_settings(raw, "test", ".")
