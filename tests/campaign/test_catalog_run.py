"""Catalog events through the campaign executors: outcomes never raise, stored events are not run again."""
import os

from memory_infer.campaign.catalog_run import STORE, execute_events, fingerprint, plan_events, run_catalog_event
from memory_infer.campaign.executors import InlineExecutor
from memory_infer.campaign.store import RecordStore


def test_a_bad_event_is_a_record_with_its_reason(tmp_path):
    refused = run_catalog_event({"index": 0, "label": "a", "mapping": {"_refused": "no strain covers it"},
                                 "workdir": str(tmp_path)})
    assert refused["status"] == "refused" and refused["reason"] == "no strain covers it"
    mapping = {"event": {"label": "b"}, "data": {"kind": "files", "files": {"H1": {"strain": "missing.hdf5"}}},
               "evidence": {"samples_file": "missing.h5"}}
    missing = run_catalog_event({"index": 1, "label": "b", "mapping": mapping, "workdir": str(tmp_path)})
    assert missing["status"] == "refused" and "does not exist" in missing["reason"]
    assert missing["wall_seconds"] >= 0 and missing["result"] is None


def test_stored_events_are_not_run_again(tmp_path):
    events = [(f"e{i}", {"_refused": f"reason {i}"}) for i in range(5)]
    tasks = plan_events(events, str(tmp_path))
    store = RecordStore(os.path.join(tmp_path, STORE), fingerprint(tasks))
    store.write(dict(run_catalog_event(tasks[2]), reason="committed before a kill"))
    seen = []
    assert execute_events(tasks, store, InlineExecutor(), on_record=seen.append, progress=False) == 4
    records = store.records()
    assert [r["index"] for r in records] == [0, 1, 2, 3, 4]
    assert records[2]["reason"] == "committed before a kill" and sorted(r["label"] for r in seen) == ["e0", "e1", "e3", "e4"]
    assert execute_events(tasks, store, InlineExecutor(), progress=False) == 0
    store.close()
