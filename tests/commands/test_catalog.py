"""``memory-infer catalog``: every event from its release and open-data strain, resumable after SIGKILL."""
import json
import os
import signal
import sqlite3
import subprocess
import sys
import time

import pytest

from memory_infer.cli import main

from helpers import small_catalog, without_wall_times

EVENTS = 6  # five invented events and one with a data gap inside its segment


@pytest.fixture(scope="module")
def catalog(tmp_path_factory):
    return small_catalog(tmp_path_factory.mktemp("catalog"), count=EVENTS - 1)


def _stored(outdir):
    path = os.path.join(outdir, "events.sqlite")
    if not os.path.isfile(path):
        return 0
    try:
        with sqlite3.connect(path, timeout=1) as connection:
            return connection.execute("SELECT count(*) FROM events").fetchone()[0]
    except sqlite3.OperationalError:
        return 0


@pytest.fixture(scope="module")
def uninterrupted(catalog, tmp_path_factory):
    outdir = tmp_path_factory.mktemp("whole")
    assert main(["catalog", catalog, "--outdir", str(outdir), "--quiet"]) == 3  # one event refused
    with open(outdir / "catalog.json") as handle:
        return outdir, json.load(handle)


@pytest.mark.slow
def test_catalog_lists_every_event_with_its_page_or_reason(uninterrupted):
    outdir, content = uninterrupted
    runs = {run["label"]: run for run in content["event_runs"]}
    assert len(runs) == EVENTS
    assert runs["gap-inside"]["status"] == "refused"
    assert "has no data (data-quality mask) for 1 s inside the analysis segment" in runs["gap-inside"]["reason"]
    finished = [run for run in runs.values() if run["page"]]
    assert len(finished) == EVENTS - 1  # every event but the refused one ran and has its page
    for run in finished:
        assert os.path.isfile(outdir / run["page"])
    combined = [run for run in finished if run["status"] == "done"]
    assert content["n_events"] == len(combined) >= 3
    dropped = {d["label"]: d["reason"] for d in content["dropped"]}
    for run in finished:  # an event below the effective-sample threshold is listed with its reason
        if run["status"] != "done":
            assert run["status"] == "left out of the combination" and "effective samples" in dropped[run["label"]]
    assert set(dropped) | {run["label"] for run in combined} == set(runs)
    done = combined
    page = (outdir / "report.html").read_text()
    assert "gap-inside" in page and "href='events/" in page
    assert any(d["label"] == "gap-inside" for d in content["dropped"])
    event = json.loads((outdir / done[0]["page"]).with_name("evidence.json").read_text())
    assert event["settings"]["origins"]["start_time"].startswith("trigger time (")
    assert event["settings"]["origins"]["priors"].startswith("not needed")
    import pandas as pd

    table = pd.read_csv(outdir / "events.csv")  # one column per quantity, paths inside the folder
    assert not [c for c in table.columns if c.endswith("_combination")] and list(table.columns).count("ln_bf_err") == 1
    assert not any(str(v).startswith("/") for v in table["page"].dropna())
    assert {"likelihood_mismatch_median", "likelihood_mismatch_spread", "effective_samples"} <= set(table.columns)
    summed = [e for e in content["events"] if e["included"]]
    assert all(e["effective_samples"] is not None and e["effective_samples"] <= e["number_of_samples"] for e in summed)


@pytest.mark.slow
def test_killed_catalog_resumes_to_the_same_catalog(catalog, uninterrupted, tmp_path, capsys):
    """SIGKILL mid-run, then the same command: no event lost or repeated, the same catalog.json but for wall
    times."""
    outdir = tmp_path / "killed"
    env = dict(os.environ, PYTHONPATH=os.getcwd() + os.pathsep + os.environ.get("PYTHONPATH", ""))
    process = subprocess.Popen([sys.executable, "-m", "memory_infer.cli", "catalog", catalog, "--outdir",
                                str(outdir), "--quiet"], env=env, stdout=subprocess.DEVNULL,
                               stderr=subprocess.DEVNULL)
    deadline = time.time() + 600
    while _stored(outdir) < 2 and process.poll() is None and time.time() < deadline:
        time.sleep(0.05)
    process.send_signal(signal.SIGKILL)
    process.wait()
    before = _stored(outdir)
    assert 2 <= before < EVENTS, before  # killed mid-run, with events committed
    with capsys.disabled():
        print(f"killed with {before} of {EVENTS} events committed")
    capsys.readouterr()
    assert main(["catalog", catalog, "--outdir", str(outdir), "--quiet"]) == 3
    assert f"resuming: {before} of {EVENTS} events already finished" in capsys.readouterr().out
    assert _stored(outdir) == EVENTS
    resumed = json.loads((outdir / "catalog.json").read_text())
    assert without_wall_times(resumed) == without_wall_times(uninterrupted[1])


def test_catalog_file_problems_are_one_sentence(tmp_path, capsys):
    path = tmp_path / "bad.toml"
    path.write_text('[[events]]\nlabel = "a"\nrelease = "r.h5"\n')
    assert main(["catalog", str(path), "--outdir", str(tmp_path / "out")]) == 2
    assert capsys.readouterr().err.strip() == "memory-infer catalog: event 1 of bad.toml needs 'strain'."
    path.write_text('[[events]]\nlabel = "a"\nrelease = "r.h5"\nstrain = { H1 = "x.hdf5" }\ncolour = 1\n')
    assert main(["catalog", str(path), "--outdir", str(tmp_path / "out")]) == 2
    assert "unknown key 'colour' in event 1 of bad.toml" in capsys.readouterr().err


def _has_loaded(pid: int, library: str) -> bool:
    """Whether process ``pid`` has mapped a shared library whose path contains ``library`` (Linux /proc)."""
    try:
        with open(f"/proc/{pid}/maps") as maps:
            return library in maps.read()
    except OSError:
        return False


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc")
@pytest.mark.parametrize("moment", ["while the command loads", "while its workers load"])
def test_early_ctrl_c_is_one_line(catalog, tmp_path, moment):
    """SIGINT to the whole process group, as a terminal's Ctrl-C sends it, before any event ran: exit status 130,
    one line on standard error (no worker's traceback), no process left."""
    from helpers import session_processes

    command = [sys.executable, "-m", "memory_infer.cli", "catalog", catalog, "--outdir", str(tmp_path / "out"),
               "--workers", "2", "--quiet"]
    env = dict(os.environ, PYTHONPATH=os.getcwd() + os.pathsep + os.environ.get("PYTHONPATH", ""))
    process = subprocess.Popen(command, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env,
                               start_new_session=True, preexec_fn=lambda: signal.signal(signal.SIGINT, signal.SIG_DFL))
    if moment == "while the command loads":  # our code runs and loads numpy and bilby (a signal during Python's own
        deadline = time.time() + 60  # start-up, before any of our code, is the interpreter's, not ours)
        while time.time() < deadline and not _has_loaded(process.pid, "_multiarray_umath"):
            time.sleep(0.01)
        time.sleep(0.05)
    else:  # the two workers have started and are importing the package
        deadline = time.time() + 60
        while time.time() < deadline and len(session_processes(process.pid)) < 3:
            time.sleep(0.02)
        time.sleep(0.3)
    os.killpg(process.pid, signal.SIGINT)
    output, error = process.communicate(timeout=120)
    assert process.returncode == 130, error
    named = "memory-infer" if moment == "while the command loads" else "memory-infer catalog"
    assert [line for line in error.splitlines() if line.strip()] == [
        f"{named}: interrupted; finished outputs are kept."], error
    deadline = time.time() + 5
    while time.time() < deadline and session_processes(process.pid):
        time.sleep(0.1)
    assert session_processes(process.pid) == []


@pytest.mark.slow
def test_a_fixed_event_reruns_into_the_same_folder(catalog, tmp_path, capsys):
    """One good event and one refused (a data gap in its segment): exit status 3; the refused event's strain then
    fixed in the catalog file and the same command rerun into the same folder: only that event runs again (said so),
    exit status 0."""
    import shutil

    shutil.copytree(os.path.dirname(catalog), tmp_path / "inputs")
    catalog = str(tmp_path / "inputs" / os.path.basename(catalog))
    outdir = str(tmp_path / "out")
    assert main(["catalog", catalog, "--outdir", outdir, "--quiet"]) == 3
    assert f"1 of {EVENTS} events were refused or failed (listed above and in report.html); exit status 3" in \
        capsys.readouterr().out
    text = open(catalog).read()
    gap = "H-H1_INVENTED_DEMO_4KHZ-1000000000-32-gap.hdf5"  # cut from the last event's file, without the gap
    good = f"H-H1_INVENTED_DEMO_4KHZ-{1000000000 + 1000 * (EVENTS - 2)}-32.hdf5"
    open(catalog, "w").write(text.replace(gap, good))
    assert main(["catalog", catalog, "--outdir", outdir, "--quiet"]) == 0
    out = capsys.readouterr().out
    assert f"resuming: {EVENTS - 1} of {EVENTS} events already finished" in out
    assert (f"gap-inside: its settings and the files '{gap}', '{good}' changed since its stored result (refused): "
            "running it again") in out
    runs = {run["label"]: run["status"] for run in json.loads(open(os.path.join(outdir, "catalog.json")).read())[
        "event_runs"]}
    assert runs["gap-inside"] != "refused" and len(runs) == EVENTS


def test_a_catalog_refused_as_a_whole_writes_nothing(tmp_path, capsys):
    """Every event refused: one sentence, exit status 2, and no events.sqlite (nor the output folder) left."""
    (tmp_path / "c.toml").write_text('[[events]]\nlabel = "a"\nrelease = "missing.h5"\nstrain = { H1 = "h.hdf5" }\n')
    assert main(["catalog", str(tmp_path / "c.toml"), "--outdir", str(tmp_path / "out"), "--quiet"]) == 2
    assert capsys.readouterr().err.startswith("memory-infer catalog: no event of the catalog finished: a: refused")
    assert not (tmp_path / "out").exists()


def test_an_event_refused_on_rerun_keeps_no_earlier_result(tmp_path):
    """An event that finished before and is refused on its changed inputs: its earlier evidence.json and page are
    removed, not left beside the catalog that lists it as refused."""
    from memory_infer.commands.catalog import event_files

    folder = tmp_path / "events" / "a"
    folder.mkdir(parents=True)
    for name in ("evidence.json", "report.html"):
        (folder / name).write_text("from the earlier inputs")
    (folder / "runs").mkdir()
    assert event_files({"label": "a", "status": "refused", "reason": "bad"}, str(tmp_path)) is None
    assert sorted(os.listdir(folder)) == ["runs"]
