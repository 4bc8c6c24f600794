"""``memory-infer evidence CONFIG.toml --outdir DIR``: Bayes factors for one event, and its report."""
from __future__ import annotations

import os

from ..config import load_evidence_config
from ..event import CAUTION, copy_config_for_output, prepare, run_event
from ..io import atomic_path, provenance, write_json
from ..signal import EARLY_INSPIRAL_EFFECT


def add_arguments(parser):
    parser.add_argument("config", help="TOML configuration of the event (see configs/example_event.toml)")
    parser.add_argument("--outdir", required=True, help="folder for evidence.json, report.html and the runs")
    parser.add_argument("--quiet", action="store_true", help="no progress bars")
    parser.add_argument("--verbose", action="store_true", help="show bilby's and dynesty's log messages")


def build_record(setup, outcome) -> dict:
    config = setup.config
    return {
        "event": outcome.label,
        "headline": outcome.headline,
        "methods": [m.to_dict() for m in outcome.methods],
        "sign": outcome.sign,
        "memory_snr": outcome.memory_snr,
        "amplitude_curve": outcome.amplitude_curve,
        "free_amplitude": None if outcome.free_amplitude is None else
        {k: v for k, v in outcome.free_amplitude.items() if k != "samples"},
        "early_inspiral_memory": {"included": bool(config["model"]["early_inspiral_memory"]),
                                  "method": "leading-order memory accumulated before the model's first sample",
                                  "effect": EARLY_INSPIRAL_EFFECT},
        "settings": setup.settings_fingerprint(),
        "warnings": outcome.warnings,
        "waveform_failures": {"count": outcome.waveform_failures,
                              "treatment": "a failed waveform counts as zero likelihood (ln L = -inf)"},
        "caution": CAUTION,
        "provenance": provenance(copy_config_for_output(config), config["sampler"]["seed"]),
    }


def run(args) -> int:
    if getattr(args, "verbose", False):
        import logging

        logging.getLogger("bilby").setLevel(logging.INFO)
    config = load_evidence_config(args.config)
    setup = prepare(config)  # every input checked before anything is written
    os.makedirs(args.outdir, exist_ok=True)
    outcome = run_event(setup, args.outdir, progress=not args.quiet)
    record = build_record(setup, outcome)
    from ..report import event_page

    page = event_page(setup, outcome, record)
    write_json(os.path.join(args.outdir, "evidence.json"), record)
    with atomic_path(os.path.join(args.outdir, "report.html")) as temporary:
        with open(temporary, "w") as handle:
            handle.write(page)
    headline = record["headline"]
    if headline:
        error = "n/a" if headline["ln_bf_err"] is None else f"{headline['ln_bf_err']:.2f}"
        print(f"{outcome.label}: ln BF (memory vs none) = {headline['ln_bf']:.2f} ± {error} by {headline['method']}")
    for warning in outcome.warnings:
        print(f"warning: {warning}")
    print(f"wrote {os.path.join(args.outdir, 'evidence.json')} and {os.path.join(args.outdir, 'report.html')}")
    return 0
