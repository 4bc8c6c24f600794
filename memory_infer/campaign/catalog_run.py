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


def file_paths(value) -> list:
    """Every existing file a configuration mapping names (strain, PSD, release, calibration tables), sorted."""
    if isinstance(value, dict):
        return sorted({path for item in value.values() for path in file_paths(item)})
    if isinstance(value, (list, tuple)):
        return sorted({path for item in value for path in file_paths(item)})
    if isinstance(value, str) and os.path.isabs(value) and os.path.isfile(value):
        return [value]
    return []


def content_digest(path: str) -> str:
    """SHA-256 (first 16 hex digits) of a file's content, read in 1 MiB blocks."""
    hasher = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            hasher.update(block)
    return hasher.hexdigest()[:16]


def event_inputs(task: dict, store) -> dict:
    """What an event's stored result depends on, as digests: its configuration mapping ("settings") and the
    content of every file it names (by file name)."""
    files = {}
    for path in file_paths(task["mapping"]):
        status = os.stat(path)
        files[path] = store.file_digest(path, status.st_size, status.st_mtime_ns, lambda: content_digest(path))
    text = json.dumps(task["mapping"], sort_keys=True, cls=JSONEncoder)
    return {"settings": hashlib.sha256(text.encode()).hexdigest()[:16], "files": files}


def inputs_digest(inputs: dict) -> str:
    return hashlib.sha256(json.dumps(inputs, sort_keys=True).encode()).hexdigest()[:16]


def what_changed(stored: dict | None, current: dict) -> str:
    """In words, which of an event's inputs differ from those its stored result was made from."""
    if not isinstance(stored, dict):
        return "its stored result holds no record of its inputs"
    parts = ["its settings"] if stored.get("settings") != current["settings"] else []
    old, new = stored.get("files") or {}, current["files"]
    changed = sorted({os.path.basename(p) for p in set(old) | set(new) if old.get(p) != new.get(p)})
    if changed:
        parts.append(f"the file{'s' if len(changed) > 1 else ''} {', '.join(repr(name) for name in changed)}")
    return " and ".join(parts) or "its inputs"


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


def stored_or_todo(tasks, store) -> tuple:
    """(stored records still valid, tasks to run, one line per event run again and why): a stored event is kept
    when the digest of its inputs is unchanged and it did not fail; one whose settings or files changed runs again
    (a fixed event reruns into the same folder), as does one that failed."""
    stored, kept, todo, notes = store.stored(), [], [], []
    for task in tasks:
        task["inputs"] = event_inputs(task, store)
        task["digest"] = inputs_digest(task["inputs"])
        digest, record = stored.get(task["label"], (None, None))
        if record is not None and digest == task["digest"] and record["status"] != "failed":
            kept.append(dict(record, index=task["index"]))
            continue
        if record is not None and digest != task["digest"]:
            notes.append(f"{task['label']}: {what_changed(record.get('inputs'), task['inputs'])} changed since its "
                         f"stored result ({record['status']}): running it again")
        elif record is not None:
            notes.append(f"{task['label']}: it failed before ({record['reason']}): running it again")
        todo.append(task)
    return kept, todo, notes


def execute_events(tasks, store, executor, on_record=None, progress: bool = True, window: int = 8,
                   plan: tuple | None = None) -> list:
    """Submit the events whose stored result is missing, failed or made from other inputs
    (:func:`stored_or_todo`, a bounded window); commit each record, with its inputs' digest, as it arrives, then
    hand it to ``on_record``. One progress bar over events. Returns this catalog's records in its order. ``plan``:
    the (kept, todo) of :func:`stored_or_todo` when the caller already has it."""
    from tqdm import tqdm

    kept, todo = plan if plan is not None else stored_or_todo(tasks, store)[:2]
    records = {record["label"]: record for record in kept}
    bar = tqdm(total=len(tasks), initial=len(kept), desc="events", unit="event", disable=not progress)
    pending, position = {}, 0
    try:
        while position < len(todo) or pending:
            while position < len(todo) and len(pending) < window:
                pending[executor.submit(run_catalog_event, todo[position])] = todo[position]
                position += 1
            for future in executor.as_completed(list(pending)):
                task = pending.pop(future)
                record = dict(future.result(), inputs=task["inputs"])
                store.write(record, task["digest"])
                records[record["label"]] = record
                bar.update(1)
                if on_record is not None:
                    on_record(record)
                if position < len(todo):
                    break
    finally:
        bar.close()
    return [records[task["label"]] for task in tasks]
