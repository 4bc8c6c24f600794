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

from memory_infer.campaign.config import fingerprint, load_campaign_settings, plan
from memory_infer.campaign.injection import execute
from memory_infer.common.executors import InlineExecutor, ProcessExecutor
from memory_infer.campaign.store import RecordStore
from memory_infer.common.errors import MemoryInferError

from helpers import INJECTIONS, campaign_config, equal_to_rounding, run_store, session_processes, stored


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
    # the workers run one BLAS thread each, this process may run several: the last bits may round differently
    equal_to_rounding(resumed, reference)
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
    equal_to_rounding(stored(tmp_path / "dask"), local)  # another process: the last bits may round differently


def stores_records(path) -> bool:
    try:
        with sqlite3.connect(path, timeout=0.1) as connection:
            return connection.execute("SELECT COUNT(*) FROM records").fetchone()[0] > 0
    except sqlite3.Error:  # not created yet, or busy
        return False


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc; the parent-death signal is Linux's")
def test_a_killed_campaign_leaves_no_process_behind(tmp_path):
    config = campaign_config(tmp_path, count=300)
    command = [sys.executable, "-m", "memory_infer.cli", "campaign", config, "--outdir", str(tmp_path / "out"),
               "--workers", "2", "--quiet"]
    process = subprocess.Popen(command, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, start_new_session=True)
    records = tmp_path / "out" / "records.sqlite"
    deadline = time.time() + 120
    while time.time() < deadline and not (len(session_processes(process.pid)) >= 3 and stores_records(records)):
        time.sleep(0.2)
    running = session_processes(process.pid)
    assert len(running) >= 3, running  # the campaign and its two workers, storing records
    process.send_signal(signal.SIGKILL)
    process.wait()
    deadline = time.time() + 5
    while time.time() < deadline and session_processes(process.pid):
        time.sleep(0.1)
    assert session_processes(process.pid) == []


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc")
def test_ctrl_c_stops_a_campaign_in_one_line_with_its_workers(tmp_path):
    """SIGINT to the campaign's whole process group, as a terminal's Ctrl-C sends it: exit status 130, one line on
    standard error, the stored records kept, and no process of the campaign left. Enough injections that the
    campaign cannot finish between its first stored record and the signal."""
    config = campaign_config(tmp_path, count=2000)
    command = [sys.executable, "-m", "memory_infer.cli", "campaign", config, "--outdir", str(tmp_path / "out"),
               "--workers", "2", "--quiet"]
    # Ctrl-C's default action restored in the child, as a shell does for a foreground job: the test process may
    # ignore SIGINT (a library run earlier in the same test worker can set that), and an ignored SIGINT is
    # inherited and respected by Python (the campaign then ran to its end and exited 0)
    process = subprocess.Popen(command, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                               start_new_session=True, preexec_fn=lambda: signal.signal(signal.SIGINT, signal.SIG_DFL))
    records = tmp_path / "out" / "records.sqlite"
    deadline = time.time() + 120
    while time.time() < deadline and not stores_records(records):
        time.sleep(0.2)
    os.killpg(process.pid, signal.SIGINT)
    output, error = process.communicate(timeout=150)
    assert process.returncode == 130
    assert [line for line in error.splitlines() if line.strip()] == [
        "memory-infer campaign: interrupted; finished outputs are kept."], error
    assert stores_records(records)
    deadline = time.time() + 5
    while time.time() < deadline and session_processes(process.pid):
        time.sleep(0.1)
    assert session_processes(process.pid) == []


def test_local_workers_get_one_blas_thread_each_unless_chosen(monkeypatch):
    # one worker per core: each with one BLAS/OpenMP thread (an explicit choice of the caller is kept), and the
    # campaign's own environment is left as it was
    import os

    from memory_infer.common.executors import THREAD_VARIABLES, ProcessExecutor

    for name in THREAD_VARIABLES:
        monkeypatch.delenv(name, raising=False)
    monkeypatch.setenv("MKL_NUM_THREADS", "3")
    executor = ProcessExecutor(1)
    try:
        seen = {name: executor.submit(os.getenv, name).result() for name in THREAD_VARIABLES}
    finally:
        executor.close()
    assert seen == {"OMP_NUM_THREADS": "1", "OPENBLAS_NUM_THREADS": "1", "MKL_NUM_THREADS": "3"}
    assert "OMP_NUM_THREADS" not in os.environ and "OPENBLAS_NUM_THREADS" not in os.environ
    assert os.environ["MKL_NUM_THREADS"] == "3"
