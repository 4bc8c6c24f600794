"""The campaign page: ln BF distribution, cumulative catalog evidence, PP plot, fast against full."""
from __future__ import annotations

import numpy as np

from ..results.campaign import CampaignSummary
from .html import figure_to_html, new_figure, number, page, table


def _distribution_figure(values, key):
    fig, axis = new_figure(figsize=(7, 3.4))
    if values:
        axis.hist(values, bins=60, color="C3", alpha=0.7)
    axis.set_xlabel(f"ln BF₊ per detected injection ({key})")
    axis.set_ylabel("injections")
    axis.set_yscale("log")
    return figure_to_html(fig, "ln BF distribution")


def _cumulative_figure(summary):
    fig, axis = new_figure(figsize=(7, 3.6))
    bands = summary["cumulative"]
    if bands["events"]:
        axis.fill_between(bands["events"], bands["lower_90"], bands["upper_90"], color="C3", alpha=0.25,
                          label="90% of bootstrap catalogs")
        axis.plot(bands["events"], bands["median"], color="C3", label="median")
    threshold = summary["events_to_threshold"]
    axis.axhline(threshold["threshold"], color="k", ls="--", lw=0.8, label=f"ln BF = {threshold['threshold']:g}")
    axis.set_xlabel("number of detected events in the catalog")
    axis.set_ylabel("cumulative ln BF₊")
    axis.legend(fontsize=7)
    return figure_to_html(fig, "cumulative catalog ln BF")


def _pp_figure(summary):
    fig, axis = new_figure(figsize=(4.5, 4.5))
    quantiles = np.sort(summary["pp"]["quantiles"])
    n = quantiles.size
    if n:
        from scipy.stats import beta

        grid = np.linspace(0, 1, 101)
        ranks = np.arange(1, n + 1)
        axis.fill_between(ranks / n, beta.ppf(0.05, ranks, n + 1 - ranks), beta.ppf(0.95, ranks, n + 1 - ranks),
                          color="0.85", label="90% band for uniform")
        axis.plot(quantiles, ranks / n, color="C0", label=f"A (KS p = {summary['pp']['ks_pvalue']:.2f})")
        axis.plot(grid, grid, color="k", lw=0.6)
        axis.legend(fontsize=7)
    else:
        axis.text(0.5, 0.5, "no free-amplitude quantiles", transform=axis.transAxes, ha="center")
    axis.set_xlabel("posterior quantile of the injected A")
    axis.set_ylabel("fraction of injections")
    return figure_to_html(fig, "PP plot")


def _calibration_figure(summary):
    fig, axis = new_figure(figsize=(4.8, 4.5))
    pairs = np.asarray(summary["calibration"].get("pairs", []))
    if pairs.size:
        axis.plot(pairs[:, 0], pairs[:, 1], "o", ms=4)
        low, high = pairs.min(), pairs.max()
        axis.plot([low, high], [low, high], color="k", lw=0.6)
        axis.set_ylabel(f"full ln BF₊ ({summary['calibration']['full_method']})")
    else:
        axis.text(0.5, 0.5, "no injection has a full recovery", transform=axis.transAxes, ha="center")
    axis.set_xlabel("fast (two-point) ln BF₊")
    return figure_to_html(fig, "fast against full")


def count_text(value) -> str:
    return "not reached" if value is None else f"{value:.0f}"


def campaign_page(result: CampaignSummary) -> str:
    """The campaign report, drawn from a :class:`CampaignSummary` alone."""
    summary = result.to_json()
    threshold = summary["events_to_threshold"]
    ln_bf = summary["ln_bf"]
    calibration = summary["calibration"]
    rows = [("injections", summary["n_injections"]), ("failed", summary["n_failed"]),
            ("detected (network SNR ≥ %g)" % summary["detection_snr"], summary["n_detected"]),
            ("mean ln BF₊ per detected event", number(ln_bf["mean"], ln_bf.get("mean_err"), 4)),
            ("median ln BF₊ (90% range)", "—" if ln_bf["median"] is None else
             f"{ln_bf['median']:.4f} ({ln_bf['lower_90']:.3f} to {ln_bf['upper_90']:.3f})"),
            (f"events to ln BF = {threshold['threshold']:g}: median (90%)",
             f"{count_text(threshold['median'])} ({count_text(threshold['lower_90'])} to {count_text(threshold['upper_90'])}); "
             f"reached in {threshold['reached_fraction']:.0%} of {threshold['bootstrap']} bootstrap catalogs"),
            ("PP test (KS p-value)", "—" if summary["pp"]["ks_pvalue"] is None else
             f"{summary['pp']['ks_pvalue']:.3f} over {summary['pp']['count']} ({summary['pp']['method']})"),
            ("fast vs full", "—" if not calibration["count"] else
             f"slope {calibration['slope']:.3f}, offset {calibration['intercept']:.3f}, rms difference "
             f"{calibration['rms_difference']:.3f} over {calibration['count']}")]
    sections = [("Summary", table(["quantity", "value"], rows) + f"<p>ln BF column: {ln_bf['method']}.</p>"),
                ("ln BF distribution", _distribution_figure(summary["ln_bf_values"], ln_bf["method"])),
                ("Cumulative catalog ln BF", _cumulative_figure(summary)),
                ("PP test of the memory amplitude", _pp_figure(summary)),
                ("Fast against full recovery", _calibration_figure(summary))]
    return page(f"Campaign {summary['label']}", sections, result.caution)
