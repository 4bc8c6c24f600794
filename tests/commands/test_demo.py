import json
import subprocess
import sys

import numpy as np
import pytest

from memory_infer.commands.demo import EVENT_TEMPLATE, EVENTS
from memory_infer.inference.setup import prepare
from memory_infer.inputs.config import load_evidence_settings
from memory_infer.inputs.detectors import noise_curve_path


def test_every_demo_event_is_a_valid_configuration(tmp_path):
    for index, (label, detectors, curves, distance, masses, inclination, amplitude, hypotheses) in enumerate(EVENTS):
        text = EVENT_TEMPLATE.format(
            label=label, network="+".join(detectors), detectors=json.dumps(detectors),
            curves=", ".join(f'{k} = "{v}"' for k, v in curves.items()), seed=100 + index, mass_1=masses[0],
            mass_2=masses[1], distance=distance, inclination=inclination, amplitude=amplitude, live_points=20,
            hypotheses=json.dumps(hypotheses))
        path = tmp_path / f"{label}.toml"
        path.write_text(text)
        setup = prepare(load_evidence_settings(str(path)))
        assert setup.injection["memory_amplitude"] == amplitude
        assert {d.name[:2] for d in setup.detectors} == {d[:2] for d in detectors}  # ET is three interferometers
        for detector in setup.detectors:  # each interferometer has its detector's noise curve (ET: all three)
            assert detector.power_spectral_density.asd_file == noise_curve_path(curves[detector.name[:2]])
            assert detector.minimum_frequency == 20.0


def _index_rows(text):
    """{event: [cells]} of the index page's events table."""
    import html
    import re

    rows = re.findall(r"<tr>(.*?)</tr>", text.split("<h2>Events</h2>", 1)[1])
    cells = [[html.unescape(re.sub(r"<.*?>", "", c)) for c in re.findall(r"<td>(.*?)</td>", row)] for row in rows]
    return {row[0]: row for row in cells if row}


def _catalog_agrees_with_index(outdir):
    import csv

    from memory_infer.reports.html import number

    catalog = json.loads((outdir / "catalog" / "catalog.json").read_text())
    with open(outdir / "catalog" / "events.csv") as handle:
        table = {row["label"]: row for row in csv.DictReader(handle)}
    index = _index_rows((outdir / "index.html").read_text())
    shown = catalog["events"] + catalog["controls"]  # controls are shown apart, with the same numbers
    assert set(index) == {e["label"] for e in shown} == set(table)
    for entry in shown:
        row = index[entry["label"]]
        assert row[1] == number(entry["ln_bf_plus"], entry["ln_bf_plus_err"], 3)
        assert row[2] == number(entry["ln_bf_minus"], entry["ln_bf_minus_err"], 3)
        assert row[4] == entry["method"] == table[entry["label"]]["method"]
        assert float(table[entry["label"]]["ln_bf_plus"]) == entry["ln_bf_plus"]
    for entry in catalog["controls"]:  # a control is marked as one on the index too
        assert index[entry["label"]][7].startswith("control, kept out of the catalog's sums")
    for entry in catalog["events"]:
        assert index[entry["label"]][7] == ""
    return catalog


def test_catalog_index_and_events_table_show_one_ln_bf_per_event(tmp_path):
    # the demo's own combination and index steps on results where another sample set (the A = 1 run) has a
    # slightly smaller error on ln BF+ alone: every file must show the A = 0 run's pair
    from memory_infer.commands.demo import combine_events, index_page
    from memory_infer.results.estimates import EvidenceEstimate, SignSummary
    from memory_infer.results.event import EventResult

    labels = []
    for index, plus in enumerate([-0.6441, 0.31]):
        label = f"event-{index}"
        methods = [EvidenceEstimate(f"importance reweighting from the A = 0 posterior [none]", plus, 0.0023,
                                    effective_sample_size=900, number_of_samples=1000, sample_set="none"),
                   EvidenceEstimate(f"importance reweighting from the A = 0 posterior [none]", plus - 0.4, 0.003,
                                    numerator="flipped", effective_sample_size=900, number_of_samples=1000,
                                    sample_set="none"),
                   EvidenceEstimate(f"importance reweighting from the A = 1 posterior (inverse mean) [memory]",
                                    plus - 0.0045, 0.0022, effective_sample_size=950, number_of_samples=1000,
                                    sample_set="memory")]
        result = EventResult(event=label, methods=methods, memory_snr={"value": 1.0, "point": "the injection"},
                             settings={"amplitude_grid": [-4.0, 4.0, 81]})
        result.choose_headline([SignSummary(plus, 0.0023, plus - 0.4, 0.003, 0.4, 0.004, 0.6, "reweighting")])
        result.save(str(tmp_path / "events" / label / "evidence.json"))
        labels.append(label)
    combine_events(str(tmp_path), [str(tmp_path / "events" / label) for label in labels])
    index_page(str(tmp_path), labels)
    catalog = _catalog_agrees_with_index(tmp_path)
    assert [e["ln_bf_plus"] for e in catalog["events"]] == [-0.6441, 0.31]
    assert "href='events/event-0/report.html'" in (tmp_path / "index.html").read_text()


@pytest.mark.slow
def test_a_small_demo_run_agrees_between_catalog_and_index(tmp_path):
    # two of the demo's events (one a control without memory) with few live points, through the demo's own steps
    from memory_infer.commands.demo import EVENTS, combine_events, index_page, run_events

    from memory_infer.results.event import EventResult

    chosen = [e for e in EVENTS if e[0] in ("plover-04", "tern-05")]
    # on two worker processes, started as the command starts them (in a process of their own: under pytest the
    # workers' log output is not what a user sees)
    program = ("import sys\nfrom memory_infer.commands.demo import EVENTS, run_events\n"
               "if __name__ == '__main__':\n"
               "    run_events(sys.argv[1], live_points=15, events=[e for e in EVENTS if e[0] in sys.argv[2:]], workers=2)\n")
    shown = subprocess.run([sys.executable, "-c", program, str(tmp_path), "plover-04", "tern-05"], capture_output=True,
                           text=True, timeout=900)
    assert shown.returncode == 0, shown.stderr[-2000:]
    assert "bilby INFO" not in shown.stdout + shown.stderr  # the workers keep bilby's chatter to errors
    folders = [str(tmp_path / "events" / e[0]) for e in chosen]
    combine_events(str(tmp_path), folders)
    index_page(str(tmp_path), [e[0] for e in chosen])
    catalog = _catalog_agrees_with_index(tmp_path)
    assert [c["label"] for c in catalog["controls"]] == ["tern-05"]  # injected without memory
    # an event's numbers do not depend on where it runs: the control again, alone, in this process. The data and
    # the fast estimates are exactly equal; the sampled estimates within their errors (bilby splits a nested run
    # at checkpoints timed by the clock, so two runs of the same configuration differ in their last digits)
    alone = run_events(str(tmp_path / "alone"), live_points=15, events=chosen[1:], workers=1)
    for there, here in zip(folders[1:], alone):
        pair = [EventResult.load(f"{folder}/{EventResult.FILE}") for folder in (there, here)]
        assert [m.method for m in pair[0].methods] == [m.method for m in pair[1].methods]
        for first, second in zip(*(result.methods for result in pair)):
            if first.ln_bf_err is None:  # the fast estimates: no sampling
                assert first.ln_bf == second.ln_bf
            else:
                assert abs(first.ln_bf - second.ln_bf) < 4 * np.hypot(first.ln_bf_err, second.ln_bf_err)
