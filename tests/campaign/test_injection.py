import json
import os

import numpy as np
import pytest

from memory_infer.common.errors import MemoryInferError

from helpers import INJECTIONS, campaign_config, run_store, stored


@pytest.mark.slow
def test_reweighting_recovery_runs_and_is_calibrated_against_fast(tmp_path):
    from memory_infer.cli import main

    config = campaign_config(tmp_path, count=2, network="ce", noise="zero", method="reweighting", detection_snr=8.0,
                             injections="loud_third_generation.csv",
                             extra="[recovery]\nfree_parameters = [\"phase\"]\nlive_points = 40")
    assert main(["campaign", config, "--outdir", str(tmp_path / "full"), "--quiet"]) == 0
    summary = json.loads((tmp_path / "full" / "campaign.json").read_text())
    assert summary["calibration"]["count"] == 2
    for fast, full in summary["calibration"]["pairs"]:
        assert abs(full - fast) < 0.5 + 0.2 * abs(fast)
