"""Injection-recovery campaigns: plan, run on local processes or a Dask cluster, store, resume.

One writer (this process) commits one record per finished injection to SQLite; a campaign killed at
any moment resumes on the same command, recomputing only what had not been committed. Injections and
noise are seeded per injection index, so the order of completion never changes a record.
"""
from __future__ import annotations

import concurrent.futures
import hashlib
import json
import os
import sqlite3

from .config import NUMBER, apply_schema, load_toml
from .detectors import NETWORKS
from .errors import MemoryInferError

CAMPAIGN_SCHEMA = {
    "campaign": {"label": (str, "campaign"), "injections": (str, None), "count": (int, 100), "seed": (int, 1),
                 "network": (str, "hlv-design"), "noise": (str, "gaussian"), "injected_amplitude": ((str, int, float), 1.0),
                 "method": (str, "fast"), "detection_snr": (NUMBER, 12.0), "threshold": (NUMBER, 8.0),
                 "bootstrap": (int, 1000), "free_amplitude_limits": (list, [-5.0, 5.0])},
    "data": {"duration": (NUMBER, 4.0), "sampling_rate": (NUMBER, 2048.0), "minimum_frequency": (NUMBER, 20.0),
             "geocent_time": (NUMBER, 1_000_000_002.0)},
    "model": {"approximant": (str, "IMRPhenomTHM")},
    "recovery": {"free_parameters": (list, ["phase", "psi"]), "live_points": (int, 50), "accepted_walks": (int, 10),
                 "minimum_effective_samples": (NUMBER, 30.0)},
    "cluster": {"kind": (str, "local"), "scheduler_address": (str, None), "jobs": (int, 2), "cores": (int, 1),
                "memory": (str, "2GB"), "walltime": (str, "02:00:00"), "queue": (str, None),
                "job_logs": (str, None)},
}
METHODS = ("fast", "reweighting", "nested")
FREE_PARAMETERS = ("phase", "psi", "luminosity_distance", "theta_jn", "geocent_time")


def load_campaign_config(path: str) -> dict:
    config = apply_schema(load_toml(path), CAMPAIGN_SCHEMA, os.path.basename(path))
    config["_directory"] = os.path.dirname(os.path.abspath(path))
    campaign = config["campaign"]
    if not campaign["injections"]:
        raise MemoryInferError("key 'injections' in [campaign] must name a population TOML or an injection CSV")
    if campaign["network"] not in NETWORKS:
        raise MemoryInferError(f"unknown network '{campaign['network']}'; choose one of {', '.join(NETWORKS)}")
    if campaign["method"] not in METHODS:
        raise MemoryInferError(f"unknown method '{campaign['method']}'; choose one of {', '.join(METHODS)}")
    if campaign["noise"] not in ("gaussian", "zero"):
        raise MemoryInferError("key 'noise' in [campaign] must be 'gaussian' or 'zero'")
    amplitude = campaign["injected_amplitude"]
    if isinstance(amplitude, str) and amplitude != "prior":
        raise MemoryInferError("key 'injected_amplitude' in [campaign] must be a number or 'prior'")
    if campaign["count"] < 1:
        raise MemoryInferError("key 'count' in [campaign] must be at least 1")
    for name in config["recovery"]["free_parameters"]:
        if name not in FREE_PARAMETERS:
            raise MemoryInferError(f"free parameter '{name}' in [recovery] is not one of {', '.join(FREE_PARAMETERS)}")
    if config["cluster"]["kind"] not in ("local", "address", "slurm", "htcondor"):
        raise MemoryInferError("key 'kind' in [cluster] must be local, address, slurm or htcondor")
    return config


def plan(config: dict) -> list:
    """The full, seeded list of tasks (identical on every resume)."""
    import numpy as np

    from .population import draw, load_population, read_table

    campaign, data = config["campaign"], config["data"]
    path = os.path.join(config["_directory"], campaign["injections"])
    if path.endswith(".toml"):
        sources = draw(load_population(path), campaign["count"], campaign["seed"], data["geocent_time"])
    elif path.endswith(".csv"):
        sources = read_table(path, data["geocent_time"])[: campaign["count"]]
    else:
        raise MemoryInferError(f"injections file '{campaign['injections']}' must end in .toml or .csv")
    limits = campaign["free_amplitude_limits"]
    rng = np.random.default_rng([campaign["seed"], 7])
    amplitudes = (rng.uniform(limits[0], limits[1], len(sources)) if campaign["injected_amplitude"] == "prior"
                  else np.full(len(sources), float(campaign["injected_amplitude"])))
    settings = {"network": campaign["network"], "noise": campaign["noise"], "seed": campaign["seed"],
                "duration": float(data["duration"]), "sampling_rate": float(data["sampling_rate"]),
                "minimum_frequency": float(data["minimum_frequency"]), "approximant": config["model"]["approximant"],
                "method": campaign["method"], "detection_snr": float(campaign["detection_snr"]),
                "free_amplitude_limits": [float(x) for x in limits], "recovery": dict(config["recovery"])}
    return [{"index": i, "source": source, "amplitude": float(amplitudes[i]), "settings": settings}
            for i, source in enumerate(sources)]


def fingerprint(tasks) -> str:
    text = json.dumps([{k: v for k, v in t.items() if k != "settings"} for t in tasks] + [tasks[0]["settings"]],
                      sort_keys=True)
    return hashlib.sha256(text.encode()).hexdigest()


class RecordStore:
    """SQLite store, one row per finished injection, each insert its own transaction."""

    def __init__(self, path: str, campaign_fingerprint: str):
        self.connection = sqlite3.connect(path)
        with self.connection:
            self.connection.execute("CREATE TABLE IF NOT EXISTS meta (key TEXT PRIMARY KEY, value TEXT)")
            self.connection.execute("CREATE TABLE IF NOT EXISTS records (id INTEGER PRIMARY KEY, record TEXT NOT NULL)")
        row = self.connection.execute("SELECT value FROM meta WHERE key = 'fingerprint'").fetchone()
        if row is None:
            with self.connection:
                self.connection.execute("INSERT INTO meta VALUES ('fingerprint', ?)", (campaign_fingerprint,))
        elif row[0] != campaign_fingerprint:
            self.connection.close()
            raise MemoryInferError("this output folder holds a campaign with other settings or injections; "
                                   "use a new --outdir")

    def done(self) -> set:
        return {row[0] for row in self.connection.execute("SELECT id FROM records")}

    def write(self, record: dict) -> None:
        with self.connection:
            self.connection.execute("INSERT INTO records VALUES (?, ?)", (int(record["index"]), json.dumps(record)))

    def records(self) -> list:
        return [json.loads(row[0]) for row in self.connection.execute("SELECT record FROM records ORDER BY id")]

    def close(self):
        self.connection.close()


class InlineExecutor:
    """Runs each task at submission, in this process (one worker)."""

    def submit(self, function, task):
        future = concurrent.futures.Future()
        try:
            future.set_result(function(task))
        except BaseException as error:  # pragma: no cover - run_injection catches its own errors
            future.set_exception(error)
        return future

    @staticmethod
    def as_completed(futures):
        return iter(list(futures))

    def close(self):
        pass


class ProcessExecutor:
    def __init__(self, workers: int):
        import multiprocessing

        self.pool = concurrent.futures.ProcessPoolExecutor(max_workers=workers,
                                                           mp_context=multiprocessing.get_context("fork"))

    def submit(self, function, task):
        return self.pool.submit(function, task)

    @staticmethod
    def as_completed(futures):
        return concurrent.futures.as_completed(futures)

    def close(self):
        self.pool.shutdown(cancel_futures=True)


class DaskExecutor:
    """A ``dask.distributed`` client: a given scheduler, or a dask-jobqueue Slurm/HTCondor cluster."""

    def __init__(self, client, cluster=None):
        self.client, self.cluster = client, cluster

    @classmethod
    def from_config(cls, section: dict, address: str | None = None, log_folder: str | None = None):
        """Connect to ``address``, or start ``section['jobs']`` batch jobs of one Dask worker each.

        Job logs go to ``section['job_logs']`` or else ``log_folder`` (the batch system's default otherwise).
        """
        from dask.distributed import Client

        if address or section["kind"] == "address":
            target = address or section["scheduler_address"]
            if not target:
                raise MemoryInferError("a Dask cluster of kind 'address' needs 'scheduler_address'")
            return cls(Client(target))
        import dask_jobqueue

        kind = {"slurm": dask_jobqueue.SLURMCluster, "htcondor": dask_jobqueue.HTCondorCluster}[section["kind"]]
        options = dict(cores=section["cores"], memory=section["memory"], walltime=section["walltime"],
                       job_name="memory-infer")
        logs = section["job_logs"] or log_folder
        if logs:
            os.makedirs(logs, exist_ok=True)
            options["log_directory"] = logs
        if section["queue"] and section["kind"] == "slurm":
            options["queue"] = section["queue"]
        if section["kind"] == "htcondor":
            options.pop("walltime")
            options["disk"] = section["memory"]
        cluster = kind(**options)
        cluster.scale(jobs=section["jobs"])
        return cls(Client(cluster), cluster)

    def submit(self, function, task):
        return self.client.submit(function, task, pure=False)

    @staticmethod
    def as_completed(futures):
        from dask.distributed import as_completed

        return as_completed(futures)

    def close(self):
        self.client.close()
        if self.cluster is not None:
            self.cluster.close()


def execute(tasks, store: RecordStore, executor, progress: bool = True, window: int = 64) -> int:
    """Submit what is not yet stored, in a bounded window; store each record as it finishes."""
    from tqdm import tqdm

    from .injection import run_injection

    done = store.done()
    todo = [t for t in tasks if t["index"] not in done]
    bar = tqdm(total=len(tasks), initial=len(done), desc="injections", unit="inj", disable=not progress,
               smoothing=0.05)
    pending, position, written = set(), 0, 0
    try:
        while position < len(todo) or pending:
            while position < len(todo) and len(pending) < window:
                pending.add(executor.submit(run_injection, todo[position]))
                position += 1
            for future in executor.as_completed(list(pending)):
                pending.discard(future)
                store.write(future.result())
                written += 1
                bar.update(1)
                if position < len(todo):
                    break  # top the window up again
    finally:
        bar.close()
    return written
