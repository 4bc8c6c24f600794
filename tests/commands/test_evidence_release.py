"""A catalog release drawn with a frequency-domain mode model, reweighted at full strength with no model configured.

The fixture (tests/releases/, written once by scripts/make_release_sample.py) comes from the trade's own tools: a
real bilby ``run_sampler`` (dynesty) on an IMRPhenomXHM injection (network SNR about 25, 4 s at 1024 Hz, H1 and
L1, open-data-layout strain) and pesummary's own writer. Reference: the release itself (its samples'
``log_likelihood`` column from bilby's likelihood), tolerance 0.1 nats in spread.
"""
import json
import os
import shutil

import numpy as np
import pytest

from memory_infer.cli import main

RELEASE = os.path.join(os.path.dirname(__file__), "..", "releases")
CONFIG = """
[event]
label = "release-xhm"
[data]
kind = "files"
duration = 4.0
sampling_rate = 1024.0
start_time = 1000000000.0
[data.files.H1]
strain = "H1.hdf5"
psd_from_samples = true
[data.files.L1]
strain = "L1.hdf5"
psd_from_samples = true
[priors]
chirp_mass = { kind = "uniform", minimum = 25.0, maximum = 32.0 }
mass_ratio = { kind = "uniform", minimum = 0.5, maximum = 1.0 }
luminosity_distance = { kind = "uniform", minimum = 300.0, maximum = 2000.0 }
phase = { kind = "periodic", minimum = 0.0, maximum = 6.283185307179586 }
a_1 = 0.2
a_2 = 0.1
tilt_1 = 0.0
tilt_2 = 0.0
phi_12 = 0.0
phi_jl = 0.0
theta_jn = 0.6
ra = 1.0
dec = 0.2
psi = 0.3
geocent_time = 1000000002.0
[evidence]
methods = ["reweighting"]
samples_file = "release.h5"
"""


@pytest.mark.slow
def test_release_reweighted_with_its_own_model(tmp_path):
    for name in ("H1.hdf5", "L1.hdf5", "release.h5"):
        shutil.copy(os.path.join(RELEASE, name), tmp_path / name)
    (tmp_path / "event.toml").write_text(CONFIG)  # no [model] approximant: the release's own model is used
    assert main(["evidence", str(tmp_path / "event.toml"), "--outdir", str(tmp_path / "out"), "--quiet"]) == 0
    record = json.loads((tmp_path / "out" / "evidence.json").read_text())
    assert record["settings"]["approximant"] == "IMRPhenomXHM"
    assert record["settings"]["approximant_from"] == "the release (release.h5: C01:IMRPhenomXHM/approximant)"
    check = next(iter(record["sample_checks"].values()))["mismatch"]
    assert check["spread"] < 0.1  # the release's own ln L reproduced (a constant offset is allowed)
    estimates = [m for m in record["methods"] if m["family"] == "reweighting"]
    assert {m["numerator"] for m in estimates} >= {"memory", "flipped"}
    for estimate in estimates:
        assert np.isfinite(estimate["ln_bf"]) and np.isfinite(estimate["ln_bf_err"])
        assert estimate["effective_sample_size"] >= 0.9 * estimate["number_of_samples"]  # measured 218 of 218
    assert record["headline"]["method"] in {m["method"] for m in estimates}  # the headline is by reweighting
