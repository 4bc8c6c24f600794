import json
import os

import numpy as np
import pytest

from memory_infer.common.errors import MemoryInferError

from helpers import INJECTIONS, campaign_config, run_store, stored


def test_fast_amplitude_posterior_passes_a_pp_test(tmp_path):
    # PP test (common practice, no source): with A drawn from its prior and Gaussian noise, the posterior
    # quantiles of the injected A are uniform; 200 population injections in Cosmic Explorer
    from memory_infer.cli import main

    config = campaign_config(tmp_path, count=200, network="ce", amplitude='"prior"', detection_snr=0.0)
    assert main(["campaign", config, "--outdir", str(tmp_path / "pp"), "--workers", "2", "--quiet"]) == 0
    summary = json.loads((tmp_path / "pp" / "campaign.json").read_text())
    assert summary["pp"]["count"] == 200
    assert summary["pp"]["ks_pvalue"] > 0.001


@pytest.mark.slow
def test_design_network_forecast_is_of_order_a_thousand(tmp_path):
    # published forecasts (from memory): of order a thousand or more binary black holes at second-generation
    # design sensitivity for a confident memory detection; order of magnitude only, 1e2 to 1e4
    from memory_infer.cli import main

    config = campaign_config(tmp_path, count=2500, network="hlv-design", noise="zero", detection_snr=12.0,
                             extra="[model]\napproximant = \"IMRPhenomTHM\"")
    assert main(["campaign", config, "--outdir", str(tmp_path / "forecast"), "--workers", "2", "--quiet"]) == 0
    summary = json.loads((tmp_path / "forecast" / "campaign.json").read_text())
    threshold = summary["events_to_threshold"]
    assert summary["n_detected"] > 40
    assert threshold["threshold"] == 8.0
    assert threshold["median"] is not None and 1e2 <= threshold["median"] <= 1e4
