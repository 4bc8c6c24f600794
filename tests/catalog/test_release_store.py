"""A catalog run's event store: one row per label (rewritten when an event runs again), and a file's content
digest read once while its size and modification time stay the same."""
import os

from memory_infer.catalog.release_store import EventStore


def test_an_event_rewritten_keeps_one_row_and_survives_reopening(tmp_path):
    path = str(tmp_path / "events.sqlite")
    store = EventStore(path)
    store.write({"label": "a", "status": "refused"}, "d1")
    store.write({"label": "a", "status": "done"}, "d2")
    store.write({"label": "b", "status": "failed"}, "d3")
    store.close()
    again = EventStore(path)
    assert again.stored() == {"a": ("d2", {"label": "a", "status": "done"}), "b": ("d3", {"label": "b", "status": "failed"})}
    again.close()


def test_a_files_digest_is_computed_once_until_it_changes(tmp_path):
    store = EventStore(str(tmp_path / "events.sqlite"))
    calls = []

    def compute():
        calls.append(1)
        return f"digest-{len(calls)}"

    assert store.file_digest("/f", 10, 100, compute) == "digest-1"
    assert store.file_digest("/f", 10, 100, compute) == "digest-1" and len(calls) == 1
    assert store.file_digest("/f", 10, 101, compute) == "digest-2"  # touched: read again
    store.close()
    assert os.path.isfile(tmp_path / "events.sqlite")
