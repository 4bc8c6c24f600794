"""``memory-infer demo --outdir DIR``: the built-in invented scenario, end to end on this machine.

Six invented events in simulated data across mixed networks (third generation and second generation),
memory injected as general relativity predicts in five and absent in one; per-event evidence (a short
nested run plus reweighting and the fast estimates), the catalog combination, a small campaign, and an
index page linking the reports. The events run side by side on ``--workers`` local processes (two by default),
then the campaign on the same number. Every configuration it runs is written beside its outputs.
"""
from __future__ import annotations

import html
import os
import time

# label, network, noise curve per detector, distance (Mpc), masses, inclination, injected A, hypotheses
EVENTS = [
    ("heron-01", ["CE"], {"CE": "ce"}, 1800.0, (36.0, 29.0), 1.2, 1.0, ["memory", "none", "free"]),
    ("heron-02", ["ET"], {"ET": "et-d"}, 900.0, (45.0, 15.0), 1.4, 1.0, ["memory", "none"]),
    ("plover-03", ["H1", "L1", "V1"], {"H1": "ligo-design", "L1": "ligo-design", "V1": "virgo-design"}, 300.0,
     (40.0, 32.0), 1.0, 1.0, ["memory", "none"]),
    ("plover-04", ["H1", "L1"], {"H1": "ligo-o4", "L1": "ligo-o4"}, 250.0, (30.0, 24.0), 1.1, 1.0, ["memory", "none"]),
    ("tern-05", ["CE"], {"CE": "ce"}, 2200.0, (33.0, 27.0), 1.3, 0.0, ["memory", "none"]),
    ("tern-06", ["H1", "L1", "V1"], {"H1": "aplus", "L1": "aplus", "V1": "virgo-design"}, 500.0, (38.0, 30.0), 0.9,
     1.0, ["memory", "none"]),
]

EVENT_TEMPLATE = """# invented demo event {label}: {network}, memory amplitude {amplitude:g} injected
[event]
label = "{label}"

[data]
kind = "simulated"
detectors = {detectors}
noise_curves = {{ {curves} }}
noise = "gaussian"
seed = {seed}
duration = 4.0
sampling_rate = 1024.0
start_time = 1000000000.0
minimum_frequency = 20.0

[injection]
mass_1 = {mass_1}
mass_2 = {mass_2}
luminosity_distance = {distance}
theta_jn = {inclination}
phase = 0.8
ra = 1.3
dec = -0.2
psi = 0.5
geocent_time = 1000000002.0
memory_amplitude = {amplitude}

[model]
approximant = "IMRPhenomTHM"
early_inspiral_memory = true

[priors]
phase = {{ kind = "periodic", minimum = 0.0, maximum = 6.283185307179586 }}

[sampler]
live_points = {live_points}
accepted_walks = 5
seed = {seed}
checkpoint_seconds = 30.0

[evidence]
methods = ["nested", "reweighting", "fast"]
nested_hypotheses = {hypotheses}
reweight_from = ["none", "memory"]
amplitude_grid = [-4.0, 4.0, 81]
minimum_effective_samples = 30
"""

CAMPAIGN_TEMPLATE = """# invented demo campaign: a design-sensitivity HLV forecast on a small population
[campaign]
label = "demo-forecast"
injections = "{population}"
count = {count}
seed = 2026
network = "hlv-design"
noise = "zero"
injected_amplitude = 1.0
method = "fast"
detection_snr = 12.0
threshold = 8.0
bootstrap = 300

[data]
duration = 4.0
sampling_rate = 1024.0
minimum_frequency = 20.0
"""


def add_arguments(parser):
    parser.add_argument("--outdir", default="demo-out", help="folder for the demo's configurations and reports")
    parser.add_argument("--live-points", type=int, default=40, help="live points of each short nested run")
    parser.add_argument("--injections", type=int, default=2000, help="injections in the demo campaign")
    parser.add_argument("--workers", type=int, default=2, help="local processes for the events and the campaign")
    parser.add_argument("--catalog", action="store_true", help="instead, the invented demo catalog: releases from "
                        "short bilby runs written by pesummary, open-data-layout strain, and the catalog command")


def _write(path, text):
    with open(path, "w") as handle:
        handle.write(text)
    return path


def event_configuration(index: int, event, live_points: int) -> str:
    """The configuration text of one demo event (``event`` is a row of ``EVENTS``)."""
    label, detectors, curves, distance, masses, inclination, amplitude, hypotheses = event
    return EVENT_TEMPLATE.format(
        label=label, network="+".join(detectors), detectors=repr(detectors).replace("'", '"'),
        curves=", ".join(f'{k} = "{v}"' for k, v in curves.items()), seed=100 + index, mass_1=masses[0],
        mass_2=masses[1], distance=distance, inclination=inclination, amplitude=amplitude,
        live_points=live_points, hypotheses=repr(hypotheses).replace("'", '"'))


def run_event(job) -> str:
    """One demo event's evidence run (``job`` = (configuration path, output folder)); a plain function of a
    picklable job, so local worker processes run it too."""
    from ..inference.one_event import run_one_event
    from ..inputs.config import load_evidence_settings
    from .evidence import write_event

    path, event_dir = job
    write_event(run_one_event(load_evidence_settings(path), event_dir, progress=False), event_dir)
    return event_dir


def run_events(outdir: str, live_points: int, events=None, started: float | None = None, workers: int = 1) -> list:
    """Write and run every demo event's configuration, on ``workers`` local processes (events are independent:
    each has its own seeds, so the numbers do not depend on where it runs); returns the events' output folders."""
    from ..common.drain import drain
    from ..common.executors import InlineExecutor, ProcessExecutor
    from .campaign import quiet_worker  # bilby's errors only in the workers: the demo prints its own progress

    events = EVENTS if events is None else events
    started = time.time() if started is None else started
    configs = os.path.join(outdir, "configs")
    os.makedirs(configs, exist_ok=True)
    jobs, names = [], {}
    for index, event in enumerate(EVENTS):
        if event not in events:
            continue
        label, detectors, amplitude = event[0], event[1], event[6]
        path = _write(os.path.join(configs, f"{label}.toml"), event_configuration(index, event, live_points))
        jobs.append((path, os.path.join(outdir, "events", label)))
        names[jobs[-1]] = f"{label} ({'+'.join(detectors)}, A = {amplitude:g})"
    workers = max(1, min(int(workers), len(jobs)))
    if workers == 1:
        executor = InlineExecutor()
    else:
        print(f"demo [{time.time() - started:5.0f} s]: {len(jobs)} events on {workers} processes", flush=True)
        executor = ProcessExecutor(workers, setup=quiet_worker)

    def finished(job, _):
        print(f"demo [{time.time() - started:5.0f} s]: event {names[job]} done", flush=True)

    # in processes all submitted at once, largest first (EVENTS order): the last event to start is a short one; an interrupted
    # or failed demo ends its workers at once (nested runs resume from their checkpoints)
    drain(executor, run_event, jobs, finished, window=1 if workers == 1 else len(jobs))
    executor.close()
    return [event_dir for _, event_dir in jobs]


def combine_events(outdir: str, event_dirs) -> None:
    """The catalog of the demo's events, in ``outdir``/catalog."""
    import argparse

    from . import combine

    from ..catalog.population import LARGEST_SPREAD

    combine.run(argparse.Namespace(results=list(event_dirs), outdir=os.path.join(outdir, "catalog"),
                                   largest_spread=LARGEST_SPREAD))


def run(args) -> int:
    import argparse

    from ..common.writing import output_folder
    from . import campaign

    if getattr(args, "catalog", False):
        from .catalog_demo import run_demo_catalog

        return run_demo_catalog(args)
    started = time.time()
    outdir = output_folder(os.path.abspath(args.outdir))
    configs = os.path.join(outdir, "configs")
    event_dirs = run_events(outdir, args.live_points, started=started, workers=args.workers)
    print(f"demo [{time.time() - started:5.0f} s]: catalog combination", flush=True)
    combine_events(outdir, event_dirs)
    print(f"demo [{time.time() - started:5.0f} s]: campaign of {args.injections} injections", flush=True)
    from importlib import resources

    population = _write(os.path.join(configs, "population.toml"),
                        resources.files("memory_infer").joinpath("demo_files/demo_population.toml").read_text())
    campaign_path = _write(os.path.join(configs, "campaign.toml"),
                           CAMPAIGN_TEMPLATE.format(population=os.path.basename(population), count=args.injections))
    campaign.run(argparse.Namespace(config=campaign_path, outdir=os.path.join(outdir, "campaign"),
                                    workers=args.workers, scheduler=None, quiet=True))
    index = index_page(outdir, [label for label, *_ in EVENTS])
    print(f"demo finished in {time.time() - started:.0f} s; open {index}")
    return 0


def index_page(outdir, labels) -> str:
    """The demo's index: each event's one ln BF₊ and ln BF₋ (as in the catalog), controls marked, and links to every
    report."""
    from ..common.writing import write_text
    from ..reports.html import link, number, page, table
    from ..results.cautions import INVENTED
    from ..results.event import EventResult

    rows = []
    for label in labels:
        result = EventResult.load(os.path.join(outdir, "events", label, EventResult.FILE))
        headline, sign = result.headline, result.sign  # a demo's own fresh files: every key written
        rows.append((label, number(*((None, None) if headline is None else (headline.ln_bf, headline.ln_bf_err)), 3),
                     number(*((None, None) if headline is None else (headline.ln_bf_minus, headline.ln_bf_minus_err)),
                            3),
                     "—" if sign is None else number(sign.ln_bf_sign, sign.ln_bf_sign_err, 3),
                     "no usable estimate" if headline is None else headline.method,
                     "—" if not result.memory_snr else f"{result.memory_snr.value:.2f}",
                     link(f"events/{label}/report.html", "report"),
                     f"control, kept out of the catalog's sums: {result.control}" if result.control else ""))
    links = "".join(f"<li><a href='{html.escape(target)}'>{html.escape(name)}</a></li>" for name, target in
                    [("catalog report", "catalog/report.html"), ("campaign report", "campaign/report.html")]
                    + [(f"event {label}", f"events/{label}/report.html") for label in labels])
    body = table(["event", "ln BF₊ (A = +1 vs 0)", "ln BF₋ (A = −1 vs 0)", "sign ln BF (+ vs −)",
                  "method and sample set (one per event, as in the catalog)", "memory SNR", "report", "control"], rows)
    text = page("memory_infer demo: an invented catalog", [("Reports", f"<ul>{links}</ul>"), ("Events", body)],
                INVENTED)
    path = os.path.join(outdir, "index.html")
    write_text(path, text)
    return path
