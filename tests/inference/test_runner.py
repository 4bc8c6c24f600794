"""Checkpoint resume, waveform failures inside sampling, and reproducibility with a seed."""
import json
import os
import signal as signals
import subprocess
import sys
import time

import numpy as np
import pytest

from helpers import event_config


def _strip(record):
    record = dict(record)
    record["provenance"] = {k: v for k, v in record["provenance"].items() if k != "command"}
    return record


def test_same_seed_gives_identical_results(tmp_path):
    from memory_infer.cli import main

    config = event_config(tmp_path, noise="gaussian", seed=4, hypotheses='["none"]', live_points=30,
                          evidence_extra="minimum_effective_samples = 10")
    first, second = [], []
    for name, store in (("a", first), ("b", second)):
        assert main(["evidence", config, "--outdir", str(tmp_path / name), "--quiet"]) == 0
        store.append(_strip(json.loads((tmp_path / name / "evidence.json").read_text())))
        posterior = json.loads((tmp_path / name / "runs" / "test-event_none_result.json").read_text())["posterior"]
        store.append(posterior)
    assert first == second


@pytest.mark.slow
def test_nested_sampling_resumes_from_its_checkpoint(tmp_path):
    config = event_config(tmp_path, noise="gaussian", seed=5, hypotheses='["none"]', live_points=80,
                          priors='phase = { kind = "periodic", minimum = 0.0, maximum = 6.283185307179586 }\n'
                                 'luminosity_distance = { kind = "uniform", minimum = 1000.0, maximum = 6000.0 }',
                          methods='["nested"]', checkpoint_seconds=2.0)
    outdir = tmp_path / "run"
    command = [sys.executable, "-m", "memory_infer.cli", "evidence", config, "--outdir", str(outdir), "--quiet"]
    process = subprocess.Popen(command, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    resume_file = outdir / "runs" / "test-event_none_resume.pickle"
    deadline = time.time() + 600  # generous for a loaded machine: the loop ends at the first checkpoint
    while not resume_file.exists() and time.time() < deadline and process.poll() is None:
        time.sleep(0.5)
    time.sleep(1.0)
    process.send_signal(signals.SIGKILL)
    process.wait()
    assert resume_file.exists(), "the run wrote no checkpoint before it was killed"
    assert not (outdir / "evidence.json").exists()
    finished = subprocess.run(command, capture_output=True, text=True, timeout=900)
    assert finished.returncode == 0, finished.stderr[-2000:]
    assert "resuming nested run 'test-event_none' from its checkpoint" in finished.stdout
    record = json.loads((outdir / "evidence.json").read_text())
    # a run of the A = 0 hypothesis alone has no Bayes factor of its own; what it must leave is the resumed,
    # finished sampler run with a finite evidence
    assert record["methods"] == []
    result = json.loads((outdir / "runs" / "test-event_none_result.json").read_text())
    assert np.isfinite(result["log_evidence"]) and result["log_evidence_err"] > 0
