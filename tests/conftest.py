import logging
import os
import sys

import pytest

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))  # tests in subfolders share helpers.py
logging.getLogger("bilby").setLevel(logging.WARNING)

# CI (.ci/run) replays one fixed sequence of property-test examples, so a run on a new machine is repeatable; runs
# elsewhere keep drawing new examples (which is how they find new failures: each found one is then kept as an
# explicit @example)
from hypothesis import settings as _hypothesis_settings  # noqa: E402

_hypothesis_settings.register_profile("repeatable", derandomize=True)
if os.environ.get("MEMORY_INFER_REPEATABLE_EXAMPLES"):
    _hypothesis_settings.load_profile("repeatable")


@pytest.fixture(scope="session")
def thm_modes():
    """IMRPhenomTHM modes of a 45 + 15 solar-mass binary (q = 3), geometric units."""
    from memory_infer.waveform.models import generate_modes

    series = generate_modes("IMRPhenomTHM", 45.0, 15.0, 100.0, 1 / 4096, 20.0)
    return series.geometric()


@pytest.fixture(scope="session")
def small_event_run(tmp_path_factory):
    """One short evidence run (nested with A = 0 and A free, reweighting, fast) shared by the report tests."""
    from memory_infer.cli import main

    from helpers import event_config

    folder = tmp_path_factory.mktemp("small_event")
    config = event_config(folder, live_points=30, hypotheses='["none", "free"]')
    assert main(["evidence", config, "--outdir", str(folder / "out"), "--quiet"]) == 0
    return folder / "out"
