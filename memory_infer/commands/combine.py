"""``memory-infer combine RESULT... --outdir DIR``: the catalog answer from per-event evidence.json files."""
from __future__ import annotations

import os

from ..catalog.combine import combine, find_records, load_record
from ..catalog.population import LARGEST_SPREAD, PopulationSettings
from ..common.writing import atomic_path, output_folder, provenance, write_text
from ..reports.catalog import catalog_page, catalog_size
from ..reports.html import number
from ..results.catalog import CatalogResult


def add_arguments(parser):
    parser.add_argument("results", nargs="+", help="evidence.json files, or folders searched for them")
    parser.add_argument("--outdir", required=True, help="folder for catalog.json, events.csv and report.html")
    add_spread_argument(parser)


def add_spread_argument(parser):
    parser.add_argument("--largest-spread", type=float, default=LARGEST_SPREAD,
                        help="upper end of the uniform prior on the spread sigma of the events' amplitudes in the "
                             f"spread population model (default {LARGEST_SPREAD:g})")


def run(args) -> int:
    settings = PopulationSettings(largest_spread=args.largest_spread)
    paths = find_records(args.results)
    result = combine([load_record(path) for path in paths], sources=paths, population_settings=settings)
    result.provenance = provenance({"inputs": paths}, None)
    result = result.reloaded()
    page = catalog_page(result)
    import pandas as pd

    output_folder(args.outdir)
    result.save(os.path.join(args.outdir, CatalogResult.FILE))
    with atomic_path(os.path.join(args.outdir, "events.csv")) as temporary:
        pd.DataFrame(result.events + result.controls).to_csv(temporary, index=False)
    write_text(os.path.join(args.outdir, "report.html"), page)
    c = result.consistent_sign
    print(f"{catalog_size(result.n_events)}: consistent-sign ln BF = {number(c.ln_bf, c.ln_bf_err)}; "
          f"wrong sign {result.wrong_sign.ln_bf:.2f}; sign-agnostic {result.sign_agnostic.ln_bf:.2f}; "
          f"shared unknown sign {result.shared_unknown_sign.ln_bf:.2f}")
    spread = result.population.model("gaussian")
    if spread:
        sigma = spread.summary("sigma")
        print(f"amplitude spread: sigma {sigma.median:.2f} [{sigma.lower_90:.2f}, {sigma.upper_90:.2f}] (90%); ln BF "
              f"against one shared amplitude {number(spread.ln_bf_vs_shared, spread.ln_bf_vs_shared_err)}")
    for item in result.dropped:
        print(f"dropped {item['label']}: {item['reason']}")
    for item in result.controls:
        print(f"control {item['label']} ({item['control']}): kept out of the sums")
    for label in result.consistency.in_tension or []:
        print(f"warning: {label} is in tension with the rest of the catalog (leave-one-out p = "
              f"{result.consistency.events[label].p_value:.2g})")
    print(f"wrote {args.outdir}/catalog.json, events.csv and report.html")
    return 0
