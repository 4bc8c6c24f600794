"""``memory-infer campaign CONFIG.toml --outdir DIR``: injection-recovery, resumable, local or on Dask."""
from __future__ import annotations

import os

from ..campaign.config import fingerprint, plan
from ..campaign.injection import execute
from ..campaign.store import RecordStore
from ..campaign.summary import summarize
from ..common.errors import MemoryInferError
from ..common.executors import DaskExecutor, InlineExecutor, ProcessExecutor
from ..common.writing import atomic_path, output_folder, provenance, write_text
from ..inputs.campaign_config import load_campaign_settings
from ..reports.campaign import campaign_page, range_text
from ..reports.html import number
from ..results.campaign import CampaignSummary


def add_arguments(parser):
    parser.add_argument("config", help="TOML campaign configuration (see configs/)")
    parser.add_argument("--outdir", required=True, help="folder for the record store, summaries and report")
    parser.add_argument("--workers", type=int, default=1, help="local worker processes (default 1)")
    parser.add_argument("--scheduler", default=None, help="address of a running Dask scheduler (overrides --workers)")
    parser.add_argument("--quiet", action="store_true", help="no progress bar")


def quiet_worker() -> None:
    """Each worker's log levels: bilby's errors only (its import sets INFO; a campaign's thousands of injections
    would repeat its warnings)."""
    import logging

    import bilby  # noqa: F401  (imported first: its import sets its logger's level)

    logging.getLogger("bilby").setLevel(logging.ERROR)


def make_executor(args, cluster):
    """(executor, window of injections in flight) for ``cluster`` (:class:`memory_infer.inputs.settings.
    ClusterSettings`) and the command's ``--scheduler``/``--workers``."""
    if args.scheduler or cluster.kind != "local":
        logs = os.path.join(os.path.abspath(args.outdir), "work", "job-logs")
        return DaskExecutor.from_settings(cluster, args.scheduler, logs, setup=quiet_worker), 256
    if args.workers < 1:
        raise MemoryInferError("--workers must be at least 1")
    if args.workers == 1:
        quiet_worker()
        return InlineExecutor(), 1
    return ProcessExecutor(args.workers, setup=quiet_worker), 16 * args.workers


def run(args) -> int:
    settings = load_campaign_settings(args.config)
    tasks = plan(settings, os.path.join(os.path.abspath(args.outdir), "work"))  # every injection fixed and checked
    output_folder(args.outdir)  # before anything is written
    store = RecordStore(os.path.join(args.outdir, "records.sqlite"), fingerprint(tasks))
    executor, window = make_executor(args, settings.cluster)
    try:  # interrupted (Ctrl-C) or failed: the workers are ended at once (drain), stored records are kept
        execute(tasks, store, executor, progress=not args.quiet, window=window)
    except BaseException:
        store.close()
        raise
    executor.close()
    records = store.records()
    store.close()
    summary = summarize(records, settings)
    summary.provenance = provenance(settings_mapping(settings), settings.seed)
    summary = summary.reloaded()
    import pandas as pd

    with atomic_path(os.path.join(args.outdir, "injections.csv")) as temporary:
        pd.DataFrame(records).to_csv(temporary, index=False)
    summary.save(os.path.join(args.outdir, CampaignSummary.FILE))
    write_text(os.path.join(args.outdir, "report.html"), campaign_page(summary))
    threshold = summary.events_to_threshold
    expected = summary.forecast.expected.mean if summary.forecast.expected else None
    known = summary.forecast.known_sign.mean if summary.forecast.known_sign else None
    print(f"{summary.n_injections} injections, {summary.n_failed} failed, {summary.n_detected} detected; "
          f"expected ln BF₊ per detected event over noise {number(expected, None, 5)} "
          f"(known-sign bound {number(known, None, 5)})")
    print(f"events to ln BF = {threshold['threshold']:g} with noise scatter: median (90% range) {range_text(threshold)}; "
          "± is the Monte-Carlo error")
    spread = summary.forecast.events_to_bound_spread
    if spread and spread.median is not None:
        print(f"events to bound the amplitudes' spread below {spread.bound:g} (90%), all events GR: "
              f"{range_text(spread)} (a Fisher estimate, optimistic by about a factor 2)")
    for warning in summary.warnings:
        print(f"warning: {warning}")
    print(f"wrote {args.outdir}/campaign.json, injections.csv and report.html")
    return 0


def settings_mapping(settings) -> dict:
    """A campaign's settings as configuration sections (for the provenance its summary records)."""
    import dataclasses

    out = dataclasses.asdict(settings)
    sections = {"data": out.pop("data"), "model": out.pop("model"), "recovery": out.pop("recovery"),
                "cluster": out.pop("cluster")}
    out.pop("directory", None)
    return {"campaign": out, **sections}
