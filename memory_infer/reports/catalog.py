"""The catalog page: cumulative evidence, per-event contributions, the shared-amplitude posterior."""
from __future__ import annotations

import html

import numpy as np

from ..results.base import ABSENT
from ..results.catalog import CatalogResult
from ..results.catalog_blocks import Consistency, ExpectedVersusObserved
from ..results.estimates import normalized_density
from .html import figure_to_html, new_figure, number, page, table
from .population import population_text


def cumulative_figure(result) -> str:
    fig, axis = new_figure(figsize=(7, 3.6))
    values = np.asarray(result.cumulative_ln_bf_plus)
    errors = np.asarray(result.cumulative_ln_bf_plus_err)
    count = np.arange(1, values.size + 1)
    axis.errorbar(count, values, yerr=errors, fmt="o-", color="C3", capsize=3,
                  label=f"consistent sign, Σ ln BF₊ ± error (largest error {np.max(errors, initial=0):.2g})")
    axis.fill_between(count, values - errors, values + errors, color="C3", alpha=0.35, lw=0)
    axis.axhline(8.0, color="k", ls="--", lw=0.8, label="ln BF = 8 (common threshold)")
    axis.axhline(0.0, color="0.5", lw=0.6)
    axis.set_xlabel("number of events (ranked by contribution)")
    axis.set_ylabel("cumulative ln BF")
    from matplotlib.ticker import MaxNLocator

    axis.xaxis.set_major_locator(MaxNLocator(integer=True))  # a count of events has no half events
    axis.legend(fontsize=9)
    return figure_to_html(fig, "cumulative ln BF")


def contributions_figure(result) -> str:
    events = {e["label"]: e for e in result.events if e["included"]}
    labels = result.ranking
    fig, axis = new_figure(figsize=(7, 0.6 + 0.35 * max(len(labels), 1)))
    y = np.arange(len(labels))
    for offset, key, colour, name in ((-0.15, "plus", "C3", "ln BF₊ (A = +1)"), (0.15, "minus", "C0", "ln BF₋ (A = −1)")):
        values = [events[l][f"ln_bf_{key}"] for l in labels]
        errors = [events[l][f"ln_bf_{key}_err"] or 0.0 for l in labels]
        axis.errorbar(values, y + offset, xerr=errors, fmt="o", color=colour, ms=4, capsize=4,
                      label=f"{name} ± error (largest {max(errors, default=0.0):.2g})")
    axis.set_yticks(y, labels)
    axis.invert_yaxis()
    axis.axvline(0, color="0.5", lw=0.6)
    axis.set_xlabel("ln Bayes factor against no memory")
    axis.legend(fontsize=9)
    return figure_to_html(fig, "per-event contributions")


def amplitude_figure(result) -> str:
    amplitude = result.amplitude
    fig, axis = new_figure(figsize=(7, 3.6))
    if amplitude.grid:
        grid = np.asarray(amplitude.grid)
        for label, curve in amplitude.event_curves.items():
            axis.plot(grid, normalized_density(grid, curve), lw=0.8, alpha=0.6, label=label)
        axis.plot(grid, np.exp(amplitude.ln_density), color="k", lw=2, label="catalog")
        axis.axvline(1.0, color="k", ls="--", lw=0.8, label="general relativity (A = 1)")
        axis.legend(fontsize=8, ncol=2)
    else:
        note = "no amplitude curves" if amplitude.note is ABSENT else amplitude.note
        axis.text(0.5, 0.5, note, transform=axis.transAxes, ha="center")
    axis.set_xlabel("shared memory amplitude A (dimensionless; 1 = general relativity)")
    axis.set_ylabel("posterior density [per unit A]")
    return figure_to_html(fig, "catalog amplitude posterior")


def samples_text(entry: dict) -> str:
    """'ESS of N' for an event's summed estimate, when it has effective samples."""
    if entry.get("effective_samples") is None:
        return "—"
    return f"{entry['effective_samples']:.0f} of {entry.get('number_of_samples')}"


def departure_text(entry: dict) -> str:
    """How far this tool's ln L at A = 0 departs from the samples' own log-likelihood (median, spread), when known."""
    if entry.get("likelihood_mismatch_spread") is None:
        return "—"
    return f"{entry['likelihood_mismatch_median']:+.3g}, {entry['likelihood_mismatch_spread']:.3g} nats"


def catalog_page(result: CatalogResult) -> str:
    """The catalog report, drawn from a :class:`CatalogResult` alone."""
    sums = [(name.replace("_", " "), getattr(result, name).formula,
             number(getattr(result, name).ln_bf, getattr(result, name).ln_bf_err))
            for name in ("consistent_sign", "wrong_sign", "sign_agnostic", "shared_unknown_sign")
            if getattr(result, name)]
    amplitude = result.amplitude
    check = amplitude.effective_samples
    amp = ("<p>no amplitude curves</p>" if amplitude.median is None else
           f"<p>median {number(amplitude.median, amplitude.median_err)}, 90% interval "
           f"[{amplitude.lower_90:.2f}, {amplitude.upper_90:.2f}], posterior/prior density at A = 0: "
           f"{amplitude.density_ratio_at_zero:.3g}, at A = 1: {amplitude.density_ratio_at_one:.3g} "
           f"({amplitude.events} events; {amplitude.prior}; {amplitude.method})</p>"
           + "".join(f"<p>{html.escape(note)}.</p>" for note in (amplitude.prior_note, amplitude.density_ratio_note)
                     if note)
           + "".join(f"<p class='warn'>{html.escape(f.label)}: fewer than "
                     f"{check.threshold:g} effective samples for A from "
                     f"{f.below_threshold_from:.2f} to {f.below_threshold_to:.2f} (fewest {f.fewest:.1f})"
                     f"{'; inside the catalog 90% interval' if f.inside_catalog_90 else ''}.</p>"
                     for f in (check.flagged if check else [])))
    rows = [(e["label"], number(e["ln_bf_plus"], e["ln_bf_plus_err"]), number(e["ln_bf_minus"], e["ln_bf_minus_err"]),
             e["method"], samples_text(e), departure_text(e), "yes" if e["included"] else "no", e["reason"])
            for e in result.events]
    sections = [
        ("Catalog Bayes factors", table(["combination", "formula", "ln BF ± error"], sums)
         + f"<p>Method per event: {result.method_rule}.</p>"),
        ("Expected against observed", expected_text(result.expected_vs_observed)),
        ("Shared memory amplitude", amp + amplitude_figure(result)),
        ("Consistency of the events with the shared amplitude", consistency_text(result.consistency)),
        ("Population models of the amplitude", population_text(result.population)),
        ("Cumulative evidence", cumulative_figure(result)),
        ("Per-event contributions", contributions_figure(result)),
        ("Events", table(["event", "ln BF₊", "ln BF₋", "method and sample set", "effective samples",
                          "ln L at A = 0 against the samples' own (median, spread)", "included", "reason dropped"],
                         rows)),
    ]
    if result.controls:
        sections.append(("Control events (not in any sum above)", controls_text(result.controls)))
    if result.event_runs:
        sections.append(("Each event's run", runs_html(result.event_runs)))
    return page(f"Memory evidence for a {catalog_size(result.n_events)}", sections, result.caution)


def catalog_size(count: int) -> str:
    return f"catalog of {count} event" + ("" if count == 1 else "s")


def expected_text(versus: ExpectedVersusObserved) -> str:
    """The consistent-sign sum against its expectation under GR memory, with the spread of that expectation."""
    if versus.expected_ln_bf_plus is None or versus.expected_ln_bf_plus is ABSENT:
        return (f"<p>observed Σ ln BF₊ = {versus.observed_ln_bf_plus:.2f}; no event has a memory SNR, so "
                "there is no expectation to compare with.</p>")
    if versus.expected_spread is ABSENT:  # a catalog.json written before the spread was recorded
        return (f"<p>expected Σ ρ²/2 = {versus.expected_ln_bf_plus:.2f} (spread not recorded), observed "
                f"Σ ln BF₊ = {versus.observed_ln_bf_plus:.2f} ({html.escape(versus.method)})</p>")
    deviation = versus.standard_deviations
    text = (f"<p>Over the {versus.events_with_snr} events with a memory SNR: expected under GR memory "
            f"Σ ρ²/2 = {versus.expected_ln_bf_plus:.2f} ± {versus.expected_spread:.2f} (mean ± standard "
            f"deviation of the sum); without memory {versus.expected_without_memory:.2f} ± "
            f"{versus.expected_spread:.2f}; observed Σ ln BF₊ = "
            f"{number(versus.observed_ln_bf_plus, versus.observed_err)}"
            f" (Monte-Carlo error), {deviation:+.1f} standard deviations from the GR expectation (two-sided p = "
            f"{versus.p_value:.2g}).</p><p>{html.escape(versus.method)}.</p>")
    if versus.p_value < 0.01:
        text += ("<p class='warn'>The observed sum is far from what GR memory predicts for these events: check "
                 "the events below for tension, the noise model, and the reference points of the memory SNRs.</p>")
    return text


def consistency_text(consistency: Consistency) -> str:
    """Each event's leave-one-out p-value against the rest of the catalog, with a warning for events in tension."""
    if not consistency.events:
        return f"<p>{html.escape(consistency.note or 'not computed')}.</p>"
    rows = [(label, f"{v.median:.2f}", f"{v.rest_median:.2f}", f"{v.probability_above_rest:.3f}",
             f"{v.p_value:.2g}", "yes" if label in consistency.in_tension else "no")
            for label, v in consistency.events.items()]
    text = table(["event", "median A (event alone)", "median A (all other events)", "Pr(A_event > A_rest)",
                  "p-value", "in tension"], rows) + f"<p>{html.escape(consistency.method)}.</p>"
    if consistency.in_tension:
        text += (f"<p class='warn'>In tension with the rest of the catalog (p below {consistency.level:.2g}): "
                 f"{html.escape(', '.join(consistency.in_tension))}. A shared amplitude may not describe these "
                 "events together; the shared-A posterior above sits between disagreeing events and should not be "
                 "read as a measurement until the tension is understood (noise artefact, waveform systematics, "
                 "a mislabelled control).</p>")
    else:
        text += "<p>No event is in tension with the rest at that level.</p>"
    return text


def controls_text(controls) -> str:
    rows = [(e["label"], e["control"], "—" if e.get("injected_amplitude") is None else f"{e['injected_amplitude']:g}",
             number(e["ln_bf_plus"], e["ln_bf_plus_err"]), number(e["ln_bf_minus"], e["ln_bf_minus_err"]),
             e["method"]) for e in controls]
    return (table(["event", "why a control", "injected A", "ln BF₊", "ln BF₋", "method and sample set"], rows)
            + "<p>Control events test the analysis (for example, no memory injected: ln BF₊ should scatter around "
              "−ρ²/2); they are kept out of every sum, the shared-amplitude posterior and the checks above.</p>")


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
