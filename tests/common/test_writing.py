import json
import os

import numpy as np
import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.common.writing import atomic_path, provenance, read_json, write_json, write_text


def test_a_failed_write_leaves_the_earlier_file_whole(tmp_path):
    path = str(tmp_path / "out.json")
    write_json(path, {"value": 1})
    with pytest.raises(RuntimeError):
        with atomic_path(path) as temporary:
            with open(temporary, "w") as handle:
                handle.write('{"value": 2, "half')
            raise RuntimeError("the run failed here")
    assert json.load(open(path)) == {"value": 1}
    assert os.listdir(tmp_path) == ["out.json"]  # no partial file left behind


def test_json_holds_numpy_values_and_text_is_written_whole(tmp_path):
    path = str(tmp_path / "out.json")
    write_json(path, {"a": np.float64(0.1), "b": np.arange(3), "c": 1 + 2j, "d": float("inf")})
    assert read_json(path, "test file") == {"a": 0.1, "b": [0, 1, 2], "c": [1.0, 2.0], "d": float("inf")}
    write_text(str(tmp_path / "page.html"), "<p>x</p>")
    assert (tmp_path / "page.html").read_text() == "<p>x</p>"


def test_unreadable_json_is_one_sentence(tmp_path):
    (tmp_path / "bad.json").write_text("{not json")
    with pytest.raises(MemoryInferError, match="is not valid JSON"):
        read_json(str(tmp_path / "bad.json"), "result")
    with pytest.raises(MemoryInferError, match="does not exist"):
        read_json(str(tmp_path / "none.json"), "result")


def test_provenance_names_versions_and_seed():
    record = provenance({"key": 1}, 7)
    assert record["seed"] == 7 and record["configuration"] == {"key": 1}
    assert record["versions"]["numpy"] == np.__version__


@pytest.mark.parametrize("mask, expected", [(0o022, 0o644), (0o077, 0o600), (0o002, 0o664)])
def test_outputs_honour_the_umask_and_stay_atomic(tmp_path, mask, expected):
    # expected modes: 0666 less the umask, as open(2) gives a new file (POSIX; common practice, no source)
    import stat

    import pandas as pd

    previous = os.umask(mask)
    try:
        write_json(str(tmp_path / "a.json"), {"x": 1})
        write_text(str(tmp_path / "b.html"), "<p>y</p>")
        with atomic_path(str(tmp_path / "c.csv")) as temporary:  # a library writing the temporary file itself
            pd.DataFrame({"z": [1]}).to_csv(temporary, index=False)
        write_text(str(tmp_path / "b.html"), "<p>again</p>")  # replacing an existing output
    finally:
        os.umask(previous)
    for name in ("a.json", "b.html", "c.csv"):
        assert stat.S_IMODE(os.stat(tmp_path / name).st_mode) == expected, name
    assert sorted(os.listdir(tmp_path)) == ["a.json", "b.html", "c.csv"]  # no temporary file left


@pytest.mark.parametrize("command", [["catalog", "CATALOG"], ["evidence", "CONFIG"],
                                     ["waveform"], ["demo"], ["demo", "--catalog"]])
def test_an_outdir_that_names_a_file_is_one_sentence(tmp_path, capsys, command):
    from memory_infer.cli import main

    from helpers import event_config

    taken = tmp_path / "taken"
    taken.write_text("an earlier file, kept\n")
    catalog = tmp_path / "catalog.toml"
    catalog.write_text('[[events]]\nlabel = "a"\nrelease = "r.h5"\nstrain = { H1 = "h.hdf5" }\n')
    places = {"CATALOG": str(catalog), "CONFIG": event_config(tmp_path)}
    assert main([places.get(word, word) for word in command] + ["--outdir", str(taken)]) == 2
    assert capsys.readouterr().err.strip().endswith(f"--outdir '{taken}' names a file, not a folder; give a folder.")
    assert taken.read_text() == "an earlier file, kept\n"
