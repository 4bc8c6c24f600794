import json
import os
import random
import signal
import sqlite3
import subprocess
import sys
import time

import numpy as np
import pytest

from memory_infer.campaign.config import fingerprint, load_campaign_config, plan
from memory_infer.campaign.executors import InlineExecutor, ProcessExecutor, execute
from memory_infer.campaign.store import RecordStore
from memory_infer.common.errors import MemoryInferError

from helpers import INJECTIONS, campaign_config, run_store, stored

def test_population_draws_are_seeded_and_physical(tmp_path):
    config = load_campaign_config(campaign_config(tmp_path, count=500))
    first, second = plan(config), plan(config)
    assert first == second
    sources = [t["source"] for t in first]
    redshift = np.array([s["redshift"] for s in sources])
    assert np.all((redshift > 0) & (redshift <= 1.0))
    assert all(s["mass_2"] <= s["mass_1"] for s in sources)
    # isotropic orientation: cos(theta_jn) uniform on [-1, 1] (common practice, no source), so its mean is ~0
    assert abs(np.mean(np.cos([s["theta_jn"] for s in sources]))) < 4 / np.sqrt(3 * 500)
    # uniform in comoving volume: at low z the count inside z grows like z^3 (common practice, no source)
    assert np.mean(redshift < 0.5) < np.mean(redshift < 1.0)


def test_kill_and_resume_gives_every_injection_once(tmp_path):
    config = campaign_config(tmp_path, count=300)
    reference_dir = tmp_path / "reference"
    reference = run_store(config, reference_dir, InlineExecutor(), 1)
    outdir = tmp_path / "killed"
    command = [sys.executable, "-m", "memory_infer.cli", "campaign", config, "--outdir", str(outdir), "--workers", "2",
               "--quiet"]
    rng = random.Random(3)
    for _ in range(3):
        process = subprocess.Popen(command, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        time.sleep(rng.uniform(3.0, 6.0))
        process.send_signal(signal.SIGKILL)
        process.wait()
    finished = subprocess.run(command, capture_output=True, text=True, timeout=600)
    assert finished.returncode == 0, finished.stderr
    resumed = stored(outdir)
    assert sorted(resumed) == list(range(300))
    assert resumed == reference
    summary = json.loads((outdir / "campaign.json").read_text())
    assert summary["n_injections"] == 300


def test_local_pool_and_dask_cluster_agree(tmp_path):
    from dask.distributed import LocalCluster

    config = campaign_config(tmp_path, count=24)
    local = run_store(config, tmp_path / "local", ProcessExecutor(2), 16)
    cluster = LocalCluster(n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None)
    try:
        from memory_infer.cli import main

        code = main(["campaign", config, "--outdir", str(tmp_path / "dask"), "--scheduler", cluster.scheduler_address,
                     "--quiet"])
    finally:
        cluster.close()
    assert code == 0
    assert stored(tmp_path / "dask") == local


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


def test_resuming_with_other_settings_is_refused(tmp_path):
    from memory_infer.cli import main

    first = campaign_config(tmp_path, count=3)
    assert main(["campaign", first, "--outdir", str(tmp_path / "out"), "--quiet"]) == 0
    second = campaign_config(tmp_path, name="other.toml", count=4)
    assert main(["campaign", second, "--outdir", str(tmp_path / "out"), "--quiet"]) == 2
