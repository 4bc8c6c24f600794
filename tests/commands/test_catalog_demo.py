"""The demo's invented events are files the trade's own readers take: gwpy reads the strain, pesummary the
release."""
import os

import numpy as np
import pytest

from memory_infer.commands.catalog_demo import invented_event


def test_invented_event_files_read_by_gwpy_and_pesummary(tmp_path):
    gwpy = pytest.importorskip("gwpy.timeseries")
    pesummary_io = pytest.importorskip("pesummary.io")
    event = invented_event(str(tmp_path), "tern-01", (36.0, 30.0), 300.0, 0.9, 1.0, seed=4,
                           trigger=1_000_000_016.0, live_points=None, stand_in=20)
    # invented data carry our own tag, never the open-data archive's ("GWOSC")
    assert event["strain"]["H1"] == "H-H1_INVENTED_DEMO_4KHZ-1000000000-32.hdf5"
    assert not any("GWOSC" in name for name in os.listdir(tmp_path))
    series = gwpy.TimeSeries.read(str(tmp_path / event["strain"]["H1"]), format="hdf5.gwosc")
    assert series.sample_rate.value == 4096.0 and series.t0.value == 1_000_000_000 and series.duration.value == 32
    assert np.std(series.value) > 0
    release = pesummary_io.read(str(tmp_path / event["release"]))
    assert release.labels == ["C01:IMRPhenomTHM"]
    samples = release.samples_dict["C01:IMRPhenomTHM"]
    assert len(samples["mass_1"]) == 20 and abs(np.median(samples["mass_1"]) - 36.0) < 0.5
    assert release.config["C01:IMRPhenomTHM"]["config"]["trigger-time"] == "1000000016.0"


def test_demo_catalog_without_pesummary_says_so_in_one_sentence(tmp_path, monkeypatch, capsys):
    import importlib.util

    from memory_infer.cli import main

    real = importlib.util.find_spec
    monkeypatch.setattr(importlib.util, "find_spec", lambda name, *a: None if name == "pesummary" else real(name, *a))
    assert main(["demo", "--catalog", "--outdir", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err.strip()
    assert err.count("\n") == 0 and "pesummary" in err and "memory_infer[test]" in err
    assert not (tmp_path / "out").exists()


def test_a_failed_demo_catalog_leaves_no_partial_folder(tmp_path, monkeypatch, capsys):
    from memory_infer.cli import main
    from memory_infer.commands import catalog_demo

    def broken(*args, **kwargs):
        raise RuntimeError("invented failure")

    monkeypatch.setattr(catalog_demo, "demo_catalog", lambda folder, **kw: (os.makedirs(folder), broken()))
    with pytest.raises(RuntimeError):
        main(["demo", "--catalog", "--outdir", str(tmp_path / "out")])
    assert os.listdir(tmp_path / "out") == []


def test_demo_inputs_made_by_other_code_are_made_again(tmp_path, monkeypatch, capsys):
    """The invented inputs are reused only when the code and tools that made them are the same; otherwise they
    are made again (said so), never served stale."""
    from memory_infer.cli import main
    from memory_infer.commands import catalog, catalog_demo

    made = []

    def fake_catalog(folder, **kwargs):
        os.makedirs(folder)
        made.append(folder)
        with open(os.path.join(folder, "catalog.toml"), "w") as handle:
            handle.write(f"# made {len(made)}\n")
        return os.path.join(folder, "catalog.toml")

    monkeypatch.setattr(catalog_demo, "demo_catalog", fake_catalog)
    monkeypatch.setattr(catalog, "run", lambda args: 0)
    outdir = tmp_path / "out"
    for _ in range(2):
        assert main(["demo", "--catalog", "--outdir", str(outdir)]) == 0
    assert len(made) == 1  # the second run reused them
    monkeypatch.setattr(catalog_demo, "inputs_made_with", lambda: {"code": "other", "versions": {}})
    capsys.readouterr()
    assert main(["demo", "--catalog", "--outdir", str(outdir)]) == 0
    assert len(made) == 2 and "made by other code or tools: making them again" in capsys.readouterr().out
    assert (outdir / "catalog_inputs" / "catalog.toml").read_text() == "# made 2\n"
    assert sorted(os.listdir(outdir)) == ["catalog_inputs"]  # no .partial or .old left
