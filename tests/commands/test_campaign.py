import json

from memory_infer.cli import main

from helpers import campaign_config


def test_campaign_command_writes_summary_and_report_from_it(tmp_path, capsys):
    config = campaign_config(tmp_path, count=12, network="ce", noise="zero")
    outdir = tmp_path / "out"
    assert main(["campaign", config, "--outdir", str(outdir), "--quiet"]) == 0
    summary = json.loads((outdir / "campaign.json").read_text())
    assert summary["schema"]["kind"] == "campaign" and summary["n_injections"] == 12
    assert len(summary["ln_bf_values"]) == summary["n_detected"]
    assert main(["report", str(outdir / "campaign.json"), "--output", str(tmp_path / "again.html")]) == 0
    assert (tmp_path / "again.html").read_text() == (outdir / "report.html").read_text()
    assert main(["campaign", config, "--outdir", str(outdir), "--workers", "0"]) == 2


def test_campaign_with_no_detected_injection_finishes_with_an_empty_forecast(tmp_path):
    # a valid configuration whose detection threshold no injection reaches: a summary that says so, no traceback
    config = campaign_config(tmp_path, count=4, network="ce", noise="zero", detection_snr=1e9)
    outdir = tmp_path / "out"
    assert main(["campaign", config, "--outdir", str(outdir), "--quiet"]) == 0
    summary = json.loads((outdir / "campaign.json").read_text())
    assert summary["n_injections"] == 4 and summary["n_detected"] == 0 and summary["ln_bf_values"] == []
    assert (outdir / "report.html").exists()


def test_a_bad_population_is_one_sentence_and_writes_nothing(tmp_path, capsys):
    # the plan (every injection, its population checked) is made before the output folder
    (tmp_path / "population.toml").write_text("[population]\nspin_max = 2.0\n")
    config = campaign_config(tmp_path, count=4, injections=str(tmp_path / "population.toml"))
    assert main(["campaign", config, "--outdir", str(tmp_path / "out")]) == 2
    assert capsys.readouterr().err.strip() == ("memory-infer campaign: the population's spin_max must lie in [0, 1].")
    assert not (tmp_path / "out").exists()
