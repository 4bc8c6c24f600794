"""``memory-infer report RESULT.json``: rebuild an event, catalog or campaign report from its result file alone."""
from __future__ import annotations

import os

from ..common.writing import write_text
from ..reports.campaign import campaign_page
from ..reports.catalog import catalog_page
from ..reports.event import event_page
from ..results.base import result_kind
from ..results.campaign import CampaignSummary
from ..results.catalog import CatalogResult
from ..results.event import EventResult

PAGES = {"event": (EventResult, event_page), "catalog": (CatalogResult, catalog_page),
         "campaign": (CampaignSummary, campaign_page)}


def add_arguments(parser):
    parser.add_argument("result", help="evidence.json, catalog.json or campaign.json")
    parser.add_argument("--output", default=None, help="where to write the page (default: report.html beside the result)")


def run(args) -> int:
    kind = result_kind(args.result)
    kind_class, draw = PAGES[kind]
    result = kind_class.load(args.result)
    output = args.output or os.path.join(os.path.dirname(os.path.abspath(args.result)), "report.html")
    write_text(output, draw(result))
    print(f"wrote the {kind} report {output}")
    return 0
