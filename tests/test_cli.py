from memory_infer.cli import COMMANDS, build_parser, main


def test_every_command_has_its_parser():
    parser = build_parser()
    for name in COMMANDS:
        assert parser.parse_args(_minimal(name)).command == name


def _minimal(name):
    return {"waveform": ["waveform"], "evidence": ["evidence", "c.toml", "--outdir", "o"],
            "combine": ["combine", "r", "--outdir", "o"], "campaign": ["campaign", "c.toml", "--outdir", "o"],
            "rank": ["rank", "t.csv"], "report": ["report", "r.json"], "demo": ["demo"],
            "catalog": ["catalog", "c.toml", "--outdir", "o"]}[name]


def test_bad_input_is_one_sentence_and_exit_two(tmp_path, capsys):
    assert main(["evidence", str(tmp_path / "missing.toml"), "--outdir", str(tmp_path / "o")]) == 2
    error = capsys.readouterr().err
    assert error.count("\n") == 1 and "does not exist" in error and "Traceback" not in error
