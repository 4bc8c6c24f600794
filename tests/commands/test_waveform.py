import numpy as np
import pandas as pd

from memory_infer.cli import main


def test_waveform_command_writes_table_and_figure(tmp_path, capsys):
    outdir = tmp_path / "wave"
    assert main(["waveform", "--mass-1", "36", "--mass-2", "29", "--inclination", "1.2", "--sampling-rate", "2048",
                 "--outdir", str(outdir)]) == 0
    table = pd.read_csv(outdir / "memory_waveform.csv")
    assert list(table.columns) == ["time", "plus", "cross", "memory_plus", "memory_cross"]
    assert table["time"].iloc[0] < 0 < table["time"].iloc[-1]
    # the memory grows monotonically in |h+| for an aligned-spin binary (the m = 0 modes dominate: PRD 80, 024002 (2009)),
    # towards negative h+ in lalsimulation's basis (CQG 25, 165003 (2008))
    assert -table["memory_plus"].iloc[-1] > 3 * abs(table["memory_plus"].iloc[0]) > 0
    assert (outdir / "memory_waveform.png").read_bytes()[:4] == b"\x89PNG"
    printed = capsys.readouterr().out
    assert "memory-only SNR" in printed


def test_output_into_a_closed_pipe_ends_quietly(tmp_path):
    """``memory-infer waveform ... | head -1``: a reader that stops early gets no BrokenPipeError traceback. The
    pipe is closed here before the command writes anything, so every write meets a gone reader, with Python's own
    buffering (block-buffered pipe) and unbuffered (``-u``, each line written at once) alike."""
    import os
    import subprocess
    import sys

    environment = dict(os.environ, PYTHONPATH=os.pathsep.join([os.getcwd(), os.environ.get("PYTHONPATH", "")]))
    for flags in ([], ["-u"]):
        process = subprocess.Popen([sys.executable, *flags, "-m", "memory_infer.cli", "waveform", "--sampling-rate",
                                    "1024", "--segment", "4", "--outdir", str(tmp_path / f"wave{len(flags)}")],
                                   stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=environment)
        process.stdout.close()  # the reader is gone, as after head's first line
        error = process.stderr.read().decode()
        process.stderr.close()
        assert process.wait(timeout=120) == 141  # as if ended by SIGPIPE (128 + 13)
        assert "Traceback" not in error and "BrokenPipeError" not in error, error
        assert (tmp_path / f"wave{len(flags)}" / "memory_waveform.csv").exists()  # the files were written whole


def test_light_binary_gets_a_caution(tmp_path, capsys):
    assert main(["waveform", "--mass-1", "1.4", "--mass-2", "1.4", "--distance", "40", "--start-frequency", "80",
                 "--sampling-rate", "2048", "--segment", "8", "--outdir", str(tmp_path / "wave")]) == 0
    assert ("caution: both masses of this binary lie below 3 solar masses (1.4 + 1.4), so it may hold neutron stars, "
            "but IMRPhenomTHM is a binary-black-hole model") in capsys.readouterr().out
