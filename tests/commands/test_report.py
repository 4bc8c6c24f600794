import json

from memory_infer.cli import main


def test_report_command_rebuilds_the_event_page(small_event_run, tmp_path, capsys):
    output = tmp_path / "rebuilt.html"
    assert main(["report", str(small_event_run / "evidence.json"), "--output", str(output)]) == 0
    assert output.read_text() == (small_event_run / "report.html").read_text()


def test_report_command_refuses_a_file_that_is_not_a_result(tmp_path, capsys):
    path = tmp_path / "other.json"
    path.write_text(json.dumps({"hello": 1}))
    assert main(["report", str(path)]) == 2
    message = capsys.readouterr().err.strip()
    assert message.endswith("is not a result written by memory-infer.") and "\n" not in message
