import json

from memory_infer.cli import main


def test_combine_writes_catalog_and_its_report_rebuilds(small_event_run, tmp_path, capsys):
    outdir = tmp_path / "catalog"
    assert main(["combine", str(small_event_run), "--outdir", str(outdir)]) == 0
    catalog = json.loads((outdir / "catalog.json").read_text())
    assert catalog["schema"]["kind"] == "catalog" and catalog["n_events"] == 1
    evidence = json.loads((small_event_run / "evidence.json").read_text())
    plus = next(m for m in evidence["methods"] if m["family"] == "reweighting" and m["numerator"] == "memory")
    assert catalog["consistent_sign"]["ln_bf"] == plus["ln_bf"]
    assert main(["report", str(outdir / "catalog.json"), "--output", str(tmp_path / "again.html")]) == 0
    assert (tmp_path / "again.html").read_text() == (outdir / "report.html").read_text()


def test_combine_reports_the_population_models_with_the_spread_limit_given(small_event_run, tmp_path, capsys):
    outdir = tmp_path / "catalog"
    assert main(["combine", str(small_event_run), "--outdir", str(outdir), "--largest-spread", "1.5"]) == 0
    spread = json.loads((outdir / "catalog.json").read_text())["population"]["gaussian"]
    assert spread["sigma_max"] == 1.5 and spread["sigma"]["upper_90"] <= 1.5
    assert {"ln_bf_vs_shared", "ln_bf_vs_shared_err", "mu", "sigma"} <= set(spread)
    assert "amplitude spread: sigma" in capsys.readouterr().out
    assert "Population models of the amplitude" in (outdir / "report.html").read_text()


def test_a_spread_limit_that_is_not_positive_is_one_sentence_and_writes_nothing(small_event_run, tmp_path, capsys):
    outdir = tmp_path / "catalog"
    assert main(["combine", str(small_event_run), "--outdir", str(outdir), "--largest-spread", "0"]) != 0
    captured = capsys.readouterr()
    assert "largest spread of the amplitudes must be a positive number" in captured.err + captured.out
    assert "Traceback" not in captured.err and not outdir.exists()
