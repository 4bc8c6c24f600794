"""A catalog's events through the campaign's executors (this process, local processes, a Dask scheduler,
Slurm): each event's outcome is committed to the SQLite record store as it finishes, so a run killed at any
moment resumes on the same command without losing or repeating an event."""
from __future__ import annotations

import hashlib
import json
import os
import time

from ..common.errors import MemoryInferError
from ..common.writing import JSONEncoder, provenance
from .store import RecordStore

STORE = "events.sqlite"


def plan_events(events, outdir: str) -> list:
    """One task per event: its index, label, configuration mapping and working folder."""
    tasks = []
    for index, (label, mapping) in enumerate(events):
        tasks.append({"index": index, "label": label, "mapping": mapping,
                      "workdir": os.path.join(os.path.abspath(outdir), "events", safe_name(label))})
    return tasks


def safe_name(label: str) -> str:
    return "".join(c if c.isalnum() or c in "-_." else "_" for c in label) or "event"


def fingerprint(tasks) -> str:
    """What makes two catalog runs the same: every event's label and configuration."""
    text = json.dumps([[t["label"], t["mapping"]] for t in tasks], sort_keys=True, cls=JSONEncoder)
    return hashlib.sha256(text.encode()).hexdigest()


def run_catalog_event(task: dict) -> dict:
    """One event end to end; never raises: the record says ``done``, ``refused`` (bad input, one sentence) or
    ``failed`` (an error while running), with the reason and the wall time."""
    import logging

    import numpy as np

    from ..inference.runner import run_event
    from ..inference.setup import prepare
    from ..inputs.config import evidence_settings
    from ..inputs.event_data import bilby_draws_from

    began, cpu = time.perf_counter(), time.process_time()
    record = {"index": task["index"], "label": task["label"], "status": "done", "reason": "", "result": None}
    mapping = task["mapping"]
    logging.getLogger("memory_infer").setLevel(logging.WARNING)  # one progress bar over events, not per event
    try:
        if "_refused" in mapping:
            raise MemoryInferError(mapping["_refused"])
        settings = evidence_settings(mapping, f"the catalog entry '{task['label']}'", task["workdir"])
        rng = np.random.default_rng(settings.data.seed)
        with bilby_draws_from(rng):  # bilby's own draws (noise, resampling) from this event's generator
            setup = prepare(settings, rng)
            os.makedirs(task["workdir"], exist_ok=True)
            result = run_event(setup, task["workdir"], progress=False)
        result.provenance = provenance(setup.settings.as_mapping(), settings.sampler.seed)
        result.provenance["command"] = ["memory-infer", "catalog"]  # the same in every run of this catalog
        record["result"] = json.loads(json.dumps(result.to_json(), cls=JSONEncoder, allow_nan=True))
    except MemoryInferError as error:
        record.update(status="refused", reason=f"{error}")
    except Exception as error:  # noqa: BLE001 - one event's crash must not stop the catalog; it is listed
        record.update(status="failed", reason=f"{type(error).__name__}: {error}")
    record["wall_seconds"] = time.perf_counter() - began
    record["cpu_seconds"] = time.process_time() - cpu  # this process's own CPU time (for speed on a busy machine)
    return record


def execute_events(tasks, store: RecordStore, executor, on_record=None, progress: bool = True,
                   window: int = 8) -> int:
    """Submit the events not yet stored (a bounded window); commit each record as it arrives, then hand it to
    ``on_record``. One progress bar over events."""
    from tqdm import tqdm

    done = store.done()
    todo = [t for t in tasks if t["index"] not in done]
    bar = tqdm(total=len(tasks), initial=len(done), desc="events", unit="event", disable=not progress)
    pending, position, written = set(), 0, 0
    try:
        while position < len(todo) or pending:
            while position < len(todo) and len(pending) < window:
                pending.add(executor.submit(run_catalog_event, todo[position]))
                position += 1
            for future in executor.as_completed(list(pending)):
                pending.discard(future)
                record = future.result()
                store.write(record)
                written += 1
                bar.update(1)
                if on_record is not None:
                    on_record(record)
                if position < len(todo):
                    break
    finally:
        bar.close()
    return written
