"""Campaigns on a real Slurm scheduler through dask-jobqueue (jobs submitted with sbatch).

Needs a running Slurm (``python3 scripts/local_slurm.py up`` starts a one-node cluster and prints
``export SLURM_CONF=...``). Without one the tests are skipped, unless MEMORY_INFER_REQUIRE_SLURM=1 (as in
CI), where a missing scheduler is a failure.
"""
import os
import shutil
import sqlite3
import subprocess
import threading
import time

import pytest

from memory_infer.common.executors import ProcessExecutor

from helpers import campaign_config, equal_to_rounding, run_store, stored

REQUIRED = os.environ.get("MEMORY_INFER_REQUIRE_SLURM") == "1"


def _scheduler_problem():
    if shutil.which("sbatch") is None or shutil.which("squeue") is None:
        return "no Slurm commands (sbatch, squeue) on this machine"
    done = subprocess.run(["sinfo", "-h", "-o", "%t"], capture_output=True, text=True, timeout=30)
    if done.returncode != 0:
        return f"no Slurm controller answers ({done.stderr.strip() or 'sinfo failed'})"
    if not any(state.startswith(("idle", "mix", "alloc")) for state in done.stdout.split()):
        return f"no usable Slurm node (states: {done.stdout.split()})"
    return None


@pytest.fixture(scope="module")
def slurm():
    problem = _scheduler_problem()
    if problem:
        if REQUIRED:
            pytest.fail(f"Slurm is required here (MEMORY_INFER_REQUIRE_SLURM=1) but {problem}")
        pytest.skip(f"{problem}; start one with 'python3 scripts/local_slurm.py up'")


def _slurm_config(tmp_path, name, count):
    extra = """
[cluster]
kind = "slurm"
jobs = 2
cores = 1
memory = "2GB"
walltime = "00:20:00"
"""
    return campaign_config(tmp_path, name=name, count=count, detection_snr=0.0, extra=extra)


def _our_jobs():
    done = subprocess.run(["squeue", "-h", "-n", "memory-infer", "-t", "RUNNING", "-o", "%i"], capture_output=True,
                          text=True, timeout=30)
    return done.stdout.split()


def test_slurm_campaign_equals_local_and_survives_a_cancelled_job(slurm, tmp_path):
    from memory_infer.cli import main

    # 1. the same campaign on local processes and on two Slurm jobs: identical records
    config = _slurm_config(tmp_path, "slurm.toml", 24)
    local = run_store(config, tmp_path / "local", ProcessExecutor(2), 16)
    assert main(["campaign", config, "--outdir", str(tmp_path / "slurm"), "--quiet"]) == 0
    equal_to_rounding(stored(tmp_path / "slurm"), local)
    assert list((tmp_path / "slurm" / "work" / "job-logs").glob("*.err"))  # the jobs really ran under Slurm

    # 2. a larger campaign; one worker job is cancelled with scancel while injections are being written
    count = 400
    config = _slurm_config(tmp_path, "cancel.toml", count)
    outdir = tmp_path / "cancel"
    cancelled = []

    def cancel_one():
        deadline = time.time() + 240
        store = outdir / "records.sqlite"
        while time.time() < deadline and not cancelled:
            jobs = _our_jobs()
            written = 0
            if store.exists():
                with sqlite3.connect(store) as connection:
                    written = connection.execute("SELECT COUNT(*) FROM records").fetchone()[0]
            if len(jobs) == 2 and 20 <= written < count - 100:
                subprocess.run(["scancel", jobs[0]], check=True, timeout=30)
                cancelled.append((jobs[0], written))
                return
            time.sleep(0.2)

    watcher = threading.Thread(target=cancel_one, daemon=True)
    watcher.start()
    assert main(["campaign", config, "--outdir", str(outdir), "--quiet"]) == 0
    watcher.join(timeout=5)
    assert cancelled, "no worker job was cancelled mid-run (the run ended first)"
    records = stored(outdir)
    assert sorted(records) == list(range(count))  # every injection exactly once (one row per id)
    assert all(record["status"] == "ok" for record in records.values())


def test_slurm_catalog_equals_the_local_catalog(slurm, tmp_path):
    """The same small catalog of invented events on one Slurm job (one node) and in this process: the same
    catalog.json but for wall times."""
    import json

    from memory_infer.cli import main

    from helpers import equal_to_rounding, small_catalog, without_wall_times

    catalog = small_catalog(tmp_path / "events", count=5)
    text = open(catalog).read()
    local = tmp_path / "events" / "local.toml"
    local.write_text(text)
    on_slurm = tmp_path / "events" / "slurm.toml"
    on_slurm.write_text(text + '\n[cluster]\nkind = "slurm"\njobs = 1\ncores = 1\nmemory = "2GB"\n'
                               'walltime = "00:20:00"\n')
    assert main(["catalog", str(local), "--outdir", str(tmp_path / "here"), "--quiet"]) == 3  # one event refused
    assert main(["catalog", str(on_slurm), "--outdir", str(tmp_path / "slurm"), "--quiet"]) == 3
    assert list((tmp_path / "slurm" / "work" / "job-logs").glob("*.err"))  # the job really ran under Slurm
    here = json.loads((tmp_path / "here" / "catalog.json").read_text())
    there = json.loads((tmp_path / "slurm" / "catalog.json").read_text())
    equal_to_rounding(without_wall_times(here), without_wall_times(there))
