"""A catalog run's events through an executor: settings checked before anything runs, outcomes never raise,
stored events are not run again."""
import os

from memory_infer.catalog.release_runs import STORE, execute_events, plan_events, run_release_event, stored_or_todo
from memory_infer.catalog.release_store import EventStore
from memory_infer.common.executors import InlineExecutor
from memory_infer.inputs.release_list import ReleaseEntry


def test_a_bad_event_is_refused_in_the_plan_and_its_record_gives_the_reason(tmp_path):
    mapping = {"event": {"label": "b"}, "data": {"kind": "files", "files": {"H1": {"strain": "missing.hdf5"}}},
               "evidence": {"samples_file": "missing.h5"}}
    odd = dict(mapping, evidence={"samples_file": "missing.h5", "colour": "blue"})
    tasks = plan_events([ReleaseEntry("a", refused="no strain covers it"), ReleaseEntry("b", mapping),
                         ReleaseEntry("c", odd)], str(tmp_path))
    assert tasks[0].refused == "no strain covers it" and tasks[0].settings is None
    assert tasks[1].settings is not None and not tasks[1].refused  # checked here; its files are read when it runs
    assert "colour" in tasks[2].refused and tasks[2].settings is None  # an unknown key: refused before any run
    refused = run_release_event(tasks[0])
    assert refused["status"] == "refused" and refused["reason"] == "no strain covers it"
    missing = run_release_event(tasks[1])
    assert missing["status"] == "refused" and "does not exist" in missing["reason"]
    assert missing["wall_seconds"] >= 0 and missing["result"] is None
    assert run_release_event(tasks[2])["reason"] == tasks[2].refused


def test_stored_events_are_not_run_again(tmp_path):
    entries = [ReleaseEntry(f"e{i}", refused=f"reason {i}") for i in range(5)]
    tasks = plan_events(entries, str(tmp_path))
    store = EventStore(os.path.join(tmp_path, STORE))
    kept, todo, _ = stored_or_todo(tasks, store)
    store.write(dict(run_release_event(todo[2]), reason="committed before a kill", inputs=todo[2].inputs),
                todo[2].digest)
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
    def planned(reason_b):
        # "a" names the release file (refused or not, a file its mapping names is hashed); "b" has only its reason
        return plan_events([ReleaseEntry("a", {"evidence": {"samples_file": str(release)}}, refused="bad"),
                            ReleaseEntry("b", refused=reason_b)], str(tmp_path))

    store = EventStore(os.path.join(tmp_path, STORE))
    execute_events(planned("other"), store, InlineExecutor(), progress=False)
    kept, todo, notes = stored_or_todo(planned("other"), store)
    assert [r["label"] for r in kept] == ["a", "b"] and todo == [] and notes == []
    release.write_bytes(b"fixed release")  # same size, new content
    kept, todo, notes = stored_or_todo(planned("fixed"), store)
    assert kept == [] and [t.label for t in todo] == ["a", "b"]
    assert notes == ["a: the file 'release.h5' changed since its stored result (refused): running it again",
                     "b: its settings changed since its stored result (refused): running it again"]
    store.write(dict(run_release_event(todo[0]), status="failed", reason="out of memory", inputs=todo[0].inputs),
                todo[0].digest)
    kept, todo, notes = stored_or_todo(planned("fixed"), store)
    assert notes[0] == "a: it failed before (out of memory): running it again"
    store.close()
