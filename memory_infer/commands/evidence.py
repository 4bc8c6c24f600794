"""``memory-infer evidence CONFIG.toml --outdir DIR``: Bayes factors for one event, and its report."""
from __future__ import annotations

import os

from ..common.writing import write_text
from ..inference.one_event import run_one_event
from ..inputs.config import load_evidence_settings
from ..reports.event import event_page
from ..reports.html import number
from ..results.event import EventResult


def add_arguments(parser):
    parser.add_argument("config", help="TOML configuration of the event (see configs/example_event.toml)")
    parser.add_argument("--outdir", required=True, help="folder for evidence.json, report.html and the runs")
    parser.add_argument("--quiet", action="store_true", help="no progress bars")
    parser.add_argument("--verbose", action="store_true", help="show bilby's and dynesty's log messages")


def run(args) -> int:
    if getattr(args, "verbose", False):
        import logging

        logging.getLogger("bilby").setLevel(logging.INFO)
    settings = load_evidence_settings(args.config)
    result = write_event(run_one_event(settings, args.outdir, progress=not getattr(args, "quiet", False)), args.outdir)
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


def write_event(result: EventResult, outdir: str) -> EventResult:
    """Write an event's evidence.json and report.html into ``outdir``; returns the result as the file holds it (the
    report sees exactly that)."""
    result = result.reloaded()
    page = event_page(result)
    result.save(os.path.join(outdir, EventResult.FILE))
    write_text(os.path.join(outdir, "report.html"), page)
    return result
