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
