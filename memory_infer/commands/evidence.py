"""``memory-infer evidence CONFIG.toml --outdir DIR``: Bayes factors for one event, and its report."""
from __future__ import annotations

import os

from ..common.writing import output_folder, provenance, write_text
from ..inference.runner import run_event
from ..inference.setup import prepare
from ..inputs.config import load_evidence_settings
from ..reports.event import event_page
from ..reports.html import number
from ..results.event import EventResult


def add_arguments(parser):
    parser.add_argument("config", help="TOML configuration of the event (see configs/example_event.toml)")
    parser.add_argument("--outdir", required=True, help="folder for evidence.json, report.html and the runs")
    parser.add_argument("--quiet", action="store_true", help="no progress bars")
    parser.add_argument("--verbose", action="store_true", help="show bilby's and dynesty's log messages")


def seeded_bilby(seed: int):
    """bilby's own generator seeded with ``seed`` (the noise, its prior draws and its equal-weight resampling all
    draw from it); returned, to be passed on explicitly."""
    from bilby.core.utils import random

    random.seed(int(seed))
    return random.rng


def run(args) -> int:
    if getattr(args, "verbose", False):
        import logging

        logging.getLogger("bilby").setLevel(logging.INFO)
    settings = load_evidence_settings(args.config)
    setup = prepare(settings, seeded_bilby(settings.data.seed))  # every input checked before anything is written
    output_folder(args.outdir)
    result = run_event(setup, args.outdir, progress=not getattr(args, "quiet", False))
    result.provenance = provenance(setup.settings.as_mapping(), settings.sampler.seed)
    result = result.reloaded()  # the report sees exactly what the file holds
    page = event_page(result)
    result.save(os.path.join(args.outdir, EventResult.FILE))
    write_text(os.path.join(args.outdir, "report.html"), page)
    headline = result.headline
    if headline:
        print(f"{result.event}: ln BF (memory vs none) = {number(headline.ln_bf, headline.ln_bf_err, 3)} "
              f"by {headline.method}")
        check = headline.cross_check
        if check:
            print(f"  cross-check: {number(check.ln_bf, check.ln_bf_err, 3)} by {check.method}")
    for warning in result.warnings:
        print(f"warning: {warning}")
    print(f"wrote {os.path.join(args.outdir, EventResult.FILE)} and {os.path.join(args.outdir, 'report.html')}")
    return 0
