import json

import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.results.base import SCHEMA_VERSION, result_kind
from memory_infer.results.catalog import CatalogResult
from memory_infer.results.event import EventResult


def test_round_trip_through_a_file_keeps_every_field(tmp_path):
    result = EventResult(event="e1", methods=[], warnings=["w"], figures={"weights": {"none": [0.0, -1.0]}})
    path = str(tmp_path / "evidence.json")
    result.save(path)
    data = json.load(open(path))
    assert data["schema"] == {"kind": "event", "version": SCHEMA_VERSION}
    assert EventResult.load(path).to_json() == result.to_json()
    assert result_kind(path) == "event"


def test_wrong_kind_and_newer_schema_are_refused(tmp_path):
    data = EventResult(event="e1").to_json()
    with pytest.raises(MemoryInferError, match="not a catalog result"):
        CatalogResult.from_json(data)
    data["schema"]["version"] = SCHEMA_VERSION + 1
    with pytest.raises(MemoryInferError, match="newer memory_infer"):
        EventResult.from_json(data)
    with pytest.raises(MemoryInferError, match="lacks a required field"):
        CatalogResult.from_json({"schema": {"kind": "catalog", "version": 1}})


def test_files_without_a_schema_are_recognised_by_content(tmp_path):
    path = tmp_path / "old.json"
    path.write_text(json.dumps({"event": "old", "methods": []}))
    assert result_kind(str(path)) == "event"
    assert EventResult.load(str(path)).event == "old"
    path.write_text(json.dumps({"something": 1}))
    with pytest.raises(MemoryInferError, match="not a result written by memory-infer"):
        result_kind(str(path))
