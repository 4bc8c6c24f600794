"""``memory-infer campaign CONFIG.toml --outdir DIR``: injection-recovery, resumable, local or on Dask."""
from __future__ import annotations

import os

from ..campaign.config import fingerprint, load_campaign_config, plan
from ..campaign.executors import DaskExecutor, InlineExecutor, ProcessExecutor, execute
from ..campaign.store import RecordStore
from ..campaign.summary import summarize
from ..common.errors import MemoryInferError
from ..common.writing import atomic_path, provenance, write_text
from ..reports.campaign import campaign_page, count_text
from ..reports.html import number
from ..results.campaign import CampaignSummary


def add_arguments(parser):
    parser.add_argument("config", help="TOML campaign configuration (see configs/)")
    parser.add_argument("--outdir", required=True, help="folder for the record store, summaries and report")
    parser.add_argument("--workers", type=int, default=1, help="local worker processes (default 1)")
    parser.add_argument("--scheduler", default=None, help="address of a running Dask scheduler (overrides --workers)")
    parser.add_argument("--quiet", action="store_true", help="no progress bar")


def make_executor(args, config):
    if args.scheduler or config["cluster"]["kind"] != "local":
        logs = os.path.join(os.path.abspath(args.outdir), "work", "job-logs")
        return DaskExecutor.from_config(config["cluster"], args.scheduler, logs), 256
    if args.workers < 1:
        raise MemoryInferError("--workers must be at least 1")
    if args.workers == 1:
        return InlineExecutor(), 1
    return ProcessExecutor(args.workers), 8 * args.workers


def run(args) -> int:
    config = load_campaign_config(args.config)
    tasks = plan(config)
    os.makedirs(args.outdir, exist_ok=True)
    workdir = os.path.join(os.path.abspath(args.outdir), "work")
    for task in tasks:
        task["settings"]["workdir"] = workdir
    store = RecordStore(os.path.join(args.outdir, "records.sqlite"), fingerprint(tasks))
    executor, window = make_executor(args, config)
    try:
        execute(tasks, store, executor, progress=not args.quiet, window=window)
    except BaseException:  # interrupted (Ctrl-C) or failed: end the workers now; stored records are kept
        executor.close(now=True)
        raise
    executor.close()
    records = store.records()
    store.close()
    summary = summarize(records, config)
    clean = {k: v for k, v in config.items() if not k.startswith("_")}
    summary.provenance = provenance(clean, config["campaign"]["seed"])
    summary = summary.reloaded()
    import pandas as pd

    with atomic_path(os.path.join(args.outdir, "injections.csv")) as temporary:
        pd.DataFrame(records).to_csv(temporary, index=False)
    summary.save(os.path.join(args.outdir, CampaignSummary.FILE))
    write_text(os.path.join(args.outdir, "report.html"), campaign_page(summary))
    threshold = summary.events_to_threshold
    expected = (summary.forecast.get("expected") or {}).get("mean")
    known = (summary.forecast.get("known_sign") or {}).get("mean")
    print(f"{summary.n_injections} injections, {summary.n_failed} failed, {summary.n_detected} detected; "
          f"expected ln BF+ per detected event over noise {number(expected, None, 5)} "
          f"(known-sign bound {number(known, None, 5)})")
    print(f"events to ln BF = {threshold['threshold']:g} with noise scatter: median {count_text(threshold['median'])} "
          f"(90%: {count_text(threshold['lower_90'])} to {count_text(threshold['upper_90'])})")
    for warning in summary.warnings:
        print(f"warning: {warning}")
    print(f"wrote {args.outdir}/campaign.json, injections.csv and report.html")
    return 0
