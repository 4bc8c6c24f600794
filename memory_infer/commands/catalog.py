"""``memory-infer catalog CATALOG.toml --outdir DIR``: every event of a catalog from its release and open-data
strain, resumable, on local processes, a Dask scheduler or Slurm; then the catalog combination and one page
linking each event's page. A folder of releases and strain files named as published works in place of the file."""
from __future__ import annotations

import os

from ..catalog.population import PopulationSettings
from ..catalog.release_runs import STORE, catalog_result, execute_events, forget_store, plan_events, safe_name, \
    stored_or_todo
from ..catalog.release_store import EventStore
from ..common.writing import atomic_path, output_folder, write_text
from ..inputs.campaign_config import CAMPAIGN_SCHEMA, cluster_settings
from ..inputs.config import apply_schema
from ..inputs.release_list import load_release_list
from ..reports.catalog import catalog_page
from ..reports.event import event_page
from ..reports.html import number
from ..results.catalog import CatalogResult
from ..results.event import EventResult
from .campaign import make_executor
from .combine import add_spread_argument


def add_arguments(parser):
    parser.add_argument("catalog", help="catalog file (TOML: [defaults] and [[events]]), or a folder of releases and "
                                        "strain files named as the open-data archive names them")
    parser.add_argument("--outdir", required=True, help="folder for the event store, each event's results and "
                                                        "catalog.json with its report")
    parser.add_argument("--workers", type=int, default=1, help="local worker processes (default 1)")
    parser.add_argument("--scheduler", default=None, help="address of a running Dask scheduler (overrides --workers)")
    parser.add_argument("--quiet", action="store_true", help="no progress bar")
    add_spread_argument(parser)


def event_files(record: dict, outdir: str) -> str | None:
    """Write a finished event's evidence.json and report.html (from its stored record); returns the page's path
    relative to ``outdir``. For an event not finished now (refused or failed on its new inputs), the files of an
    earlier result are removed: they would show numbers its current inputs did not give."""
    if record["status"] != "done":
        folder = os.path.join(outdir, "events", safe_name(record["label"]))
        for name in (EventResult.FILE, "report.html"):
            if os.path.isfile(os.path.join(folder, name)):
                os.remove(os.path.join(folder, name))
        return None
    result = EventResult.from_json(record["result"], f"the stored result of '{record['label']}'")
    folder = os.path.join(outdir, "events", safe_name(record["label"]))
    os.makedirs(folder, exist_ok=True)
    result.save(os.path.join(folder, EventResult.FILE))
    write_text(os.path.join(folder, "report.html"), event_page(result))
    return os.path.relpath(os.path.join(folder, "report.html"), outdir)


def event_table(result) -> str:
    """One line per event: ln BF₊ with its error and method, effective samples, and how far this tool's ln L at A = 0
    departs from the samples' own (median, spread)."""
    lines = [f"{'event':<20} {'ln BF₊':>20} {'effective samples':>18} {'ln L departure (median, spread)':>32}  method"]
    for entry in result.events + result.controls:
        plus = ("—" if entry.get("ln_bf_plus") is None else
                number(entry["ln_bf_plus"], entry.get("ln_bf_plus_err") or entry.get("ln_bf_err")))
        samples = ("—" if entry.get("effective_samples") is None else
                   f"{entry['effective_samples']:.0f} of {entry.get('number_of_samples')}")
        departure = ("—" if entry.get("likelihood_mismatch_spread") is None else
                     f"{entry['likelihood_mismatch_median']:+.3g}, {entry['likelihood_mismatch_spread']:.3g} nats")
        mark = " (control)" if entry.get("control") else ("" if entry.get("included", True) else " (left out)")
        lines.append(f"{entry['label'] + mark:<20} {plus:>20} {samples:>18} {departure:>32}  {entry.get('method', '')}")
    return "\n".join(lines)


def run(args) -> int:
    settings = PopulationSettings(largest_spread=args.largest_spread)
    releases = load_release_list(args.catalog)
    name = releases.name
    cluster = cluster_settings(apply_schema({"cluster": releases.cluster}, {"cluster": CAMPAIGN_SCHEMA["cluster"]},
                                            "the catalog's [cluster]")["cluster"])
    outdir = os.path.abspath(args.outdir)
    tasks = plan_events(releases.entries, outdir)  # every entry's settings checked before anything runs
    made_outdir = not os.path.isdir(outdir)
    output_folder(outdir)
    path = os.path.join(outdir, STORE)
    new_store = not os.path.exists(path)
    store = EventStore(path)
    try:
        kept, todo, notes = stored_or_todo(tasks, store)
        executor, window = make_executor(args, cluster)
    except BaseException:
        store.close()
        raise
    if kept:
        print(f"resuming: {len(kept)} of {len(tasks)} events already finished")
    for note in notes:
        print(note)
    try:  # interrupted (Ctrl-C) or failed: the workers are ended at once (drain), committed events are kept
        records = execute_events(tasks, store, executor, on_record=lambda record: event_files(record, outdir),
                                 progress=not args.quiet, window=window, plan=(kept, todo))
    except BaseException:
        store.close()
        raise
    executor.close()
    store.close()
    if not any(record["status"] == "done" for record in records) and new_store:
        forget_store(path, outdir if made_outdir else None)  # refused as a whole: nothing written
    for record in records:  # pages of events finished before an interruption
        if record["status"] == "done" and not os.path.isfile(os.path.join(outdir, "events", safe_name(record["label"]),
                                                                          "report.html")):
            event_files(record, outdir)
    result = catalog_result(records, name, settings).reloaded()
    page = catalog_page(result)
    import pandas as pd

    result.save(os.path.join(outdir, CatalogResult.FILE))
    with atomic_path(os.path.join(outdir, "events.csv")) as temporary:
        runs = pd.DataFrame(result.event_runs)
        entries = pd.DataFrame(result.events + result.controls)
        if len(entries):  # one column per quantity: the run's own columns give way to the combination's
            runs = runs.drop(columns=[c for c in runs.columns if c in entries.columns and c != "label"])
            runs = runs.merge(entries, on="label", how="left")
        for column in ("page", "source"):  # paths inside the output folder, not the machine's
            if column in runs.columns:
                runs[column] = [os.path.relpath(v, outdir) if isinstance(v, str) and os.path.isabs(v) else v
                                for v in runs[column]]
        runs.to_csv(temporary, index=False)
    write_text(os.path.join(outdir, "report.html"), page)
    print(event_table(result))
    c = result.consistent_sign
    print(f"catalog '{name}': {result.n_events} of {len(records)} events combined; consistent-sign ln BF = "
          f"{number(c.ln_bf, c.ln_bf_err)}; wrong sign {result.wrong_sign.ln_bf:.2f}")
    for item in result.dropped:
        print(f"left out {item['label']}: {item['reason']}")
    print("a Bayes factor is evidence under the stated models and noise assumptions, not a detection claim")
    print(f"wrote {outdir}/catalog.json, events.csv and report.html (each event under events/)")
    unfinished = [record for record in records if record["status"] in ("refused", "failed")]
    if unfinished:
        print(f"{len(unfinished)} of {len(records)} events were refused or failed (listed above and in report.html); "
              f"exit status {SOME_EVENTS_NOT_RUN}")
        return SOME_EVENTS_NOT_RUN
    return 0


SOME_EVENTS_NOT_RUN = 3  # the exit status of a catalog written without some events (refused or failed)
