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
