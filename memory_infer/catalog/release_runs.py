"""A catalog run: each event of a release list (:class:`memory_infer.inputs.release_list.ReleaseList`) through
an executor (this process, local processes, a Dask scheduler, Slurm; :mod:`memory_infer.common.executors`), its
settings checked in the command's own process before anything runs; each event's outcome committed to the event
store (:mod:`memory_infer.catalog.release_store`) as it finishes, so a run killed at any moment resumes on the
same command without losing or repeating an event; then the combination of the finished events."""
from __future__ import annotations

import dataclasses
import hashlib
import json
import os
import time
from dataclasses import dataclass

from ..common.errors import MemoryInferError
from ..common.writing import JSONEncoder, provenance
from ..results.catalog import CatalogResult
from ..results.event import EventResult
from .combine import combine

STORE = "events.sqlite"


@dataclass(frozen=True)
class ReleaseTask:
    """One event to run: its place in the list, label, configuration mapping (for the digest of its inputs),
    working folder, and either its checked settings (:class:`memory_infer.inputs.settings.AnalysisSettings`) or
    ``refused``, one sentence. ``inputs`` and ``digest``: what its result depends on (:func:`stored_or_todo`)."""

    index: int
    label: str
    mapping: dict
    workdir: str
    settings: object = None
    refused: str = ""
    inputs: dict | None = None
    digest: str = ""


def plan_events(entries, outdir: str) -> list:
    """One task per entry of a release list (:class:`memory_infer.inputs.release_list.ReleaseEntry`), each
    entry's settings checked here, before anything runs: an entry that cannot run is refused in one sentence
    (recorded, not raised: the other events still run)."""
    from ..inputs.config import evidence_settings

    tasks = []
    for index, entry in enumerate(entries):
        workdir = os.path.join(os.path.abspath(outdir), "events", safe_name(entry.label))
        settings, refused = None, entry.refused
        if not refused:
            try:
                settings = evidence_settings(entry.mapping, f"the catalog entry '{entry.label}'", workdir)
            except MemoryInferError as error:
                refused = f"{error}"
        tasks.append(ReleaseTask(index, entry.label, entry.mapping, workdir, settings, refused))
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


def event_inputs(task: ReleaseTask, store) -> dict:
    """What an event's stored result depends on, as digests: its configuration mapping with, for an event refused
    before running, the reason ("settings"), and the content of every file it names (by file name)."""
    files = {}
    for path in file_paths(task.mapping):
        status = os.stat(path)
        files[path] = store.file_digest(path, status.st_size, status.st_mtime_ns, lambda: content_digest(path))
    described = dict(task.mapping, _refused=task.refused) if task.refused else task.mapping  # a new reason reruns
    text = json.dumps(described, sort_keys=True, cls=JSONEncoder)
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


def run_release_event(task: ReleaseTask) -> dict:
    """One event end to end (:func:`memory_infer.inference.one_event.run_one_event`); never raises: the record
    says ``done``, ``refused`` (bad input, one sentence) or ``failed`` (an error while running), with the reason
    and the wall time."""
    import logging

    from ..inference.one_event import run_one_event

    began, cpu = time.perf_counter(), time.process_time()
    record = {"index": task.index, "label": task.label, "status": "done", "reason": "", "result": None}
    logging.getLogger("memory_infer").setLevel(logging.WARNING)  # one progress bar over events, not per event
    try:
        if task.refused:
            raise MemoryInferError(task.refused)
        result = run_one_event(task.settings, task.workdir, progress=False,
                               command=["memory-infer", "catalog"])  # the same in every run of this catalog
        record["result"] = json.loads(json.dumps(result.to_json(), cls=JSONEncoder, allow_nan=True))
    except MemoryInferError as error:
        record.update(status="refused", reason=f"{error}")
    except Exception as error:  # noqa: BLE001 - one event's crash must not stop the catalog; it is listed
        record.update(status="failed", reason=f"{type(error).__name__}: {error}")
    record["wall_seconds"] = time.perf_counter() - began
    record["cpu_seconds"] = time.process_time() - cpu  # this process's own CPU time (for speed on a busy machine)
    return record


def stored_or_todo(tasks, store) -> tuple:
    """(stored records still valid, tasks to run with the digests of their inputs, one line per event run again
    and why): a stored event is kept when the digest of its inputs is unchanged and it did not fail; one whose
    settings or files changed runs again (a fixed event reruns into the same folder), as does one that failed."""
    stored, kept, todo, notes = store.stored(), [], [], []
    for task in tasks:
        inputs = event_inputs(task, store)
        task = dataclasses.replace(task, inputs=inputs, digest=inputs_digest(inputs))
        digest, record = stored.get(task.label, (None, None))
        if record is not None and digest == task.digest and record["status"] != "failed":
            kept.append(dict(record, index=task.index))
            continue
        if record is not None and digest != task.digest:
            notes.append(f"{task.label}: {what_changed(record.get('inputs'), task.inputs)} changed since its "
                         f"stored result ({record['status']}): running it again")
        elif record is not None:
            notes.append(f"{task.label}: it failed before ({record['reason']}): running it again")
        todo.append(task)
    return kept, todo, notes


def execute_events(tasks, store, executor, on_record=None, progress: bool = True, window: int = 8,
                   plan: tuple | None = None) -> list:
    """Submit the events whose stored result is missing, failed or made from other inputs
    (:func:`stored_or_todo`, a bounded window, :func:`memory_infer.common.drain.drain`); commit each record, with
    its inputs' digest, as it arrives, then hand it to ``on_record``. One progress bar over events. Returns this
    catalog's records in its order. ``plan``: the (kept, todo) of :func:`stored_or_todo` when the caller already
    has it."""
    from ..common.drain import drain

    kept, todo = plan if plan is not None else stored_or_todo(tasks, store)[:2]
    records = {record["label"]: record for record in kept}

    def stored(task, outcome):
        record = dict(outcome, inputs=task.inputs)
        store.write(record, task.digest)
        records[record["label"]] = record
        if on_record is not None:
            on_record(record)

    drain(executor, run_release_event, todo, stored, window=window,
          progress=dict(total=len(tasks), initial=len(kept), desc="events", unit="event", disable=not progress))
    return [records[task.label] for task in tasks]


def catalog_result(records: list, name: str, population_settings=None) -> CatalogResult:
    """The catalog combination of the finished events, with every event's run listed (refused and failed ones
    with their reason)."""
    records = sorted(records, key=lambda r: r["index"])
    done = [r for r in records if r["status"] == "done"]
    runs = [{"label": r["label"], "status": r["status"], "reason": r["reason"],
             "page": os.path.join("events", safe_name(r["label"]), "report.html") if r["status"] == "done" else None,
             "wall_seconds": r.get("wall_seconds")} for r in records]
    if not done:
        raise MemoryInferError("no event of the catalog finished: " +
                               "; ".join(f"{r['label']}: {r['status']} ({r['reason']})" for r in records))
    sources = [os.path.join("events", safe_name(r["label"]), EventResult.FILE) for r in done]
    result = combine([r["result"] for r in done], sources=sources, population_settings=population_settings)
    result.dropped = result.dropped + [{"label": r["label"], "reason": f"{r['status']}: {r['reason']}",
                                        "source": ""} for r in records if r["status"] != "done"]
    for run in runs:
        dropped = next((d for d in result.dropped if d["label"] == run["label"] and run["status"] == "done"), None)
        if dropped is not None:
            run["status"], run["reason"] = "left out of the combination", dropped["reason"]
    result.event_runs = runs
    result.provenance = provenance({"catalog": name, "events": [r["label"] for r in records]}, None)
    result.provenance["command"] = ["memory-infer", "catalog"]
    return result


def forget_store(path: str, made_folder: str | None) -> None:
    """Remove an event store this run made when no event finished (the catalog is refused as a whole, and nothing
    stays written), and the output folder if this run made it and it is left empty."""
    os.remove(path)
    if made_folder is not None:
        try:
            os.rmdir(made_folder)
        except OSError:  # not empty: an event's working folder (a failed run's checkpoints) stays
            pass
