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


@pytest.mark.parametrize("change", ["priors", "data"])
def test_a_changed_input_restarts_the_nested_run_instead_of_resuming(tmp_path, capsys, change):
    """A finished run leaves its checkpoint; rerun into the same folder with another prior (or other noise), it must
    start afresh (saying what changed) and give what a fresh run in a new folder gives, not the old numbers."""
    from memory_infer.cli import main

    phase = 'phase = { kind = "periodic", minimum = 0.0, maximum = 6.283185307179586 }'
    common = dict(noise="gaussian", hypotheses='["none"]', live_points=30, methods='["nested", "reweighting"]',
                  evidence_extra="minimum_effective_samples = 10")
    old = event_config(tmp_path, name="old.toml", seed=4, priors=phase, **common)
    new = event_config(tmp_path, name="new.toml", seed=4 if change == "priors" else 6,
                       priors=phase + ('\nluminosity_distance = { kind = "uniform", minimum = 1000.0, maximum = 6000.0 }'
                                       if change == "priors" else ""), **common)
    assert main(["evidence", old, "--outdir", str(tmp_path / "same"), "--quiet"]) == 0
    assert (tmp_path / "same" / "runs" / "test-event_none_resume.pickle").exists()  # what a rerun could resume
    capsys.readouterr()
    assert main(["evidence", new, "--outdir", str(tmp_path / "same"), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert (f"nested run 'test-event_none' started afresh: its checkpoint in {tmp_path / 'same' / 'runs'} was made "
            f"with other {change} than this run's") in out
    assert main(["evidence", new, "--outdir", str(tmp_path / "fresh"), "--quiet"]) == 0
    rerun, fresh = (json.loads((tmp_path / name / "evidence.json").read_text()) for name in ("same", "fresh"))
    assert rerun["methods"] == fresh["methods"] and rerun["settings"] == fresh["settings"]
    capsys.readouterr()
    assert main(["evidence", new, "--outdir", str(tmp_path / "same"), "--quiet"]) == 0  # unchanged: resumed
    assert "resuming nested run 'test-event_none' from its checkpoint" in capsys.readouterr().out
