"""The catalog page: cumulative evidence, per-event contributions, the shared-amplitude posterior."""
from __future__ import annotations

import html

import numpy as np

from ..results.catalog import CatalogResult
from ..results.estimates import normalized_density
from .html import figure_to_html, new_figure, number, page, table


def cumulative_figure(result) -> str:
    fig, axis = new_figure(figsize=(7, 3.6))
    values = np.asarray(result.cumulative_ln_bf_plus)
    errors = np.asarray(result.cumulative_ln_bf_plus_err)
    count = np.arange(1, values.size + 1)
    axis.plot(count, values, "o-", color="C3", label="consistent sign, Σ ln BF₊")
    axis.fill_between(count, values - errors, values + errors, color="C3", alpha=0.2, label="± error")
    axis.axhline(8.0, color="k", ls="--", lw=0.8, label="ln BF = 8 (common threshold)")
    axis.axhline(0.0, color="0.5", lw=0.6)
    axis.set_xlabel("number of events (ranked by contribution)")
    axis.set_ylabel("cumulative ln BF")
    axis.legend(fontsize=7)
    return figure_to_html(fig, "cumulative ln BF")


def contributions_figure(result) -> str:
    events = {e["label"]: e for e in result.events if e["included"]}
    labels = result.ranking
    fig, axis = new_figure(figsize=(7, 0.6 + 0.35 * max(len(labels), 1)))
    y = np.arange(len(labels))
    for offset, key, colour, name in ((-0.15, "plus", "C3", "ln BF₊ (A = +1)"), (0.15, "minus", "C0", "ln BF₋ (A = −1)")):
        values = [events[l][f"ln_bf_{key}"] for l in labels]
        errors = [events[l][f"ln_bf_{key}_err"] or 0.0 for l in labels]
        axis.errorbar(values, y + offset, xerr=errors, fmt="o", color=colour, label=name, ms=4)
    axis.set_yticks(y, labels)
    axis.invert_yaxis()
    axis.axvline(0, color="0.5", lw=0.6)
    axis.set_xlabel("ln Bayes factor against no memory")
    axis.legend(fontsize=7)
    return figure_to_html(fig, "per-event contributions")


def amplitude_figure(result) -> str:
    amplitude = result.amplitude
    fig, axis = new_figure(figsize=(7, 3.6))
    if amplitude.get("grid"):
        grid = np.asarray(amplitude["grid"])
        for label, curve in amplitude["event_curves"].items():
            axis.plot(grid, normalized_density(grid, curve), lw=0.8, alpha=0.6, label=label)
        axis.plot(grid, np.exp(amplitude["ln_density"]), color="k", lw=2, label="catalog")
        axis.axvline(1.0, color="k", ls="--", lw=0.8)
        axis.legend(fontsize=6, ncol=2)
    else:
        axis.text(0.5, 0.5, amplitude.get("note", "no amplitude curves"), transform=axis.transAxes, ha="center")
    axis.set_xlabel("shared memory amplitude A (1 = general relativity)")
    axis.set_ylabel("posterior density")
    return figure_to_html(fig, "catalog amplitude posterior")


def catalog_page(result: CatalogResult) -> str:
    """The catalog report, drawn from a :class:`CatalogResult` alone."""
    sums = [(name.replace("_", " "), getattr(result, name)["formula"],
             number(getattr(result, name)["ln_bf"], getattr(result, name)["ln_bf_err"]))
            for name in ("consistent_sign", "wrong_sign", "sign_agnostic", "shared_unknown_sign")
            if getattr(result, name)]
    amplitude = result.amplitude
    amp = ("<p>no amplitude curves</p>" if amplitude["median"] is None else
           f"<p>median {number(amplitude['median'], amplitude['median_err'])}, 90% interval "
           f"[{amplitude['lower_90']:.2f}, {amplitude['upper_90']:.2f}], posterior/prior density at A = 0: "
           f"{amplitude['density_ratio_at_zero']:.3g}, at A = 1: {amplitude['density_ratio_at_one']:.3g} "
           f"({amplitude['events']} events; {amplitude['prior']}; {amplitude['method']})</p>"
           + "".join(f"<p>{html.escape(amplitude[k])}.</p>" for k in ("prior_note", "density_ratio_note")
                     if amplitude.get(k))
           + "".join(f"<p class='warn'>{html.escape(f['label'])}: fewer than "
                     f"{amplitude['effective_samples']['threshold']:g} effective samples for A from "
                     f"{f['below_threshold_from']:.2f} to {f['below_threshold_to']:.2f} (fewest {f['fewest']:.1f})"
                     f"{'; inside the catalog 90% interval' if f['inside_catalog_90'] else ''}.</p>"
                     for f in (amplitude.get("effective_samples") or {}).get("flagged", [])))
    rows = [(e["label"], number(e["ln_bf_plus"], e["ln_bf_plus_err"]), number(e["ln_bf_minus"], e["ln_bf_minus_err"]),
             e["method"], "yes" if e["included"] else "no", e["reason"]) for e in result.events]
    versus = result.expected_vs_observed
    expected = "—" if versus["expected_ln_bf_plus"] is None else f"{versus['expected_ln_bf_plus']:.2f}"
    sections = [
        ("Catalog Bayes factors", table(["combination", "formula", "ln BF ± error"], sums)
         + f"<p>Method per event: {result.method_rule}.</p>"),
        ("Expected against observed", f"<p>expected Σ ρ²/2 = {expected}, observed Σ ln BF₊ = "
         f"{versus['observed_ln_bf_plus']:.2f} ({versus['method']})</p>"),
        ("Shared memory amplitude", amp + amplitude_figure(result)),
        ("Cumulative evidence", cumulative_figure(result)),
        ("Per-event contributions", contributions_figure(result)),
        ("Events", table(["event", "ln BF₊", "ln BF₋", "method", "included", "reason dropped"], rows)),
    ]
    if result.event_runs:
        sections.append(("Each event's run", runs_html(result.event_runs)))
    return page(f"Memory evidence for a catalog of {result.n_events} events", sections, result.caution)


def runs_html(runs) -> str:
    """Every event of a catalog run with its status, a link to its page, and the reason when it was refused or
    failed (never silently dropped)."""
    rows = []
    for run in runs:
        link = (f"<a href='{html.escape(run['page'])}'>{html.escape(run['label'])}</a>" if run.get("page")
                else html.escape(run["label"]))
        wall = "—" if run.get("wall_seconds") is None else f"{run['wall_seconds']:.1f}"
        rows.append(f"<tr><td>{link}</td><td>{html.escape(run['status'])}</td><td>{wall}</td>"
                    f"<td>{html.escape(run.get('reason') or '')}</td></tr>")
    return ("<table><tr><th>event</th><th>status</th><th>wall time (s)</th><th>reason</th></tr>"
            + "".join(rows) + "</table>")
