"""Catalog events through the campaign executors: outcomes never raise, stored events are not run again."""
import os

from memory_infer.campaign.catalog_run import STORE, execute_events, plan_events, run_catalog_event, stored_or_todo
from memory_infer.campaign.executors import InlineExecutor
from memory_infer.campaign.store import EventStore


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
    store = EventStore(os.path.join(tmp_path, STORE))
    kept, todo, _ = stored_or_todo(tasks, store)
    store.write(dict(run_catalog_event(tasks[2]), reason="committed before a kill", inputs=tasks[2]["inputs"]),
                tasks[2]["digest"])
    seen = []
    records = execute_events(tasks, store, InlineExecutor(), on_record=seen.append, progress=False)
    assert [r["index"] for r in records] == [0, 1, 2, 3, 4]
    assert records[2]["reason"] == "committed before a kill" and sorted(r["label"] for r in seen) == ["e0", "e1", "e3", "e4"]
    seen.clear()
    execute_events(tasks, store, InlineExecutor(), on_record=seen.append, progress=False)
    assert seen == []
    store.close()


def test_an_event_whose_inputs_changed_runs_again_and_says_why(tmp_path):
    """A stored event is served again only for the same settings and file contents; a changed file (same name,
    same size) or changed settings run it again, named; a failed event runs again."""
    release = tmp_path / "release.h5"
    release.write_bytes(b"first release")
    events = [("a", {"_refused": "bad", "evidence": {"samples_file": str(release)}}), ("b", {"_refused": "other"})]
    store = EventStore(os.path.join(tmp_path, STORE))
    execute_events(plan_events(events, str(tmp_path)), store, InlineExecutor(), progress=False)
    kept, todo, notes = stored_or_todo(plan_events(events, str(tmp_path)), store)
    assert [r["label"] for r in kept] == ["a", "b"] and todo == [] and notes == []
    release.write_bytes(b"fixed release")  # same size, new content
    events[1] = ("b", {"_refused": "fixed"})
    kept, todo, notes = stored_or_todo(plan_events(events, str(tmp_path)), store)
    assert kept == [] and [t["label"] for t in todo] == ["a", "b"]
    assert notes == ["a: the file 'release.h5' changed since its stored result (refused): running it again",
                     "b: its settings changed since its stored result (refused): running it again"]
    tasks = plan_events(events, str(tmp_path))
    stored_or_todo(tasks, store)
    store.write(dict(run_catalog_event(tasks[0]), status="failed", reason="out of memory", inputs=tasks[0]["inputs"]),
                tasks[0]["digest"])
    kept, todo, notes = stored_or_todo(plan_events(events, str(tmp_path)), store)
    assert notes[0] == "a: it failed before (out of memory): running it again"
    store.close()
