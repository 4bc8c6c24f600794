import json
import os

import numpy as np
import pytest

from memory_infer.common.errors import MemoryInferError

from helpers import INJECTIONS, campaign_config, run_store, stored


def test_pp_test_runs_only_where_it_can_fail():
    # the PP test needs A drawn from its prior, Gaussian noise, and a recovery that can fail; the fast estimate's
    # quantile is an exact Gaussian at the truth, so it is never used
    from memory_infer.campaign.summary import pp_test

    rng = np.random.default_rng(3)
    uniform = [{"amplitude_quantile_reweighting": float(q)} for q in rng.uniform(size=60)]
    prior = {"injected_amplitude": "prior", "noise": "gaussian"}
    assert pp_test(uniform, dict(prior, injected_amplitude=1.0))["method"].startswith("not run: A was fixed at 1.0")
    assert pp_test(uniform, dict(prior, noise="zero"))["ks_pvalue"] is None
    assert pp_test([{"amplitude_quantile_fast": 0.5}] * 60, prior)["count"] == 0
    passed = pp_test(uniform, prior)
    assert passed["count"] == 60 and passed["ks_pvalue"] > 0.01
    clustered = [{"amplitude_quantile_reweighting": float(q)} for q in rng.uniform(0.3, 0.7, size=60)]
    assert pp_test(clustered, prior)["ks_pvalue"] < 1e-3  # an overconfident recovery fails


@pytest.mark.slow
def test_reweighting_amplitude_posterior_passes_a_pp_test(tmp_path):
    # PP test (common practice, no source): with A drawn from its prior [-4, 4] and Gaussian noise, the
    # reweighted posterior quantiles of the injected A are uniform; 12 Cosmic Explorer injections, phase free
    from memory_infer.cli import main

    config = campaign_config(tmp_path, count=12, network="ce", amplitude='"prior"', detection_snr=0.0,
                             method="reweighting", extra='[recovery]\nfree_parameters = ["phase"]\nlive_points = 30')
    text = open(config).read().replace("bootstrap = 200", "bootstrap = 200\nfree_amplitude_limits = [-4.0, 4.0]")
    open(config, "w").write(text)
    assert main(["campaign", config, "--outdir", str(tmp_path / "pp"), "--workers", "2", "--quiet"]) == 0
    summary = json.loads((tmp_path / "pp" / "campaign.json").read_text())
    assert summary["pp"]["count"] == 12
    assert summary["pp"]["method"] == "reweighted A curve from the A = 0 posterior"
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
