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
