"""The campaign page: forecast (expected ln BF over noise, catalog growth, events to a threshold), the ln BF
distribution, and, only when they have data, the PP test and the fast-against-full comparison."""
from __future__ import annotations

import html
import os

import numpy as np

from ..results.base import ABSENT
from ..results.campaign import CampaignSummary
from ..results.campaign_blocks import Forecast
from .html import figure_to_html, new_figure, number, page, table


def _distribution_figure(values, key):
    fig, axis = new_figure(figsize=(7, 3.4))
    axis.hist(values, bins=60, color="C3", alpha=0.7)
    axis.set_xlabel(f"ln BF₊ per detected injection ({key})")
    axis.set_ylabel("injections (count)")
    return figure_to_html(fig, "ln BF distribution")


def _cumulative_figure(summary, forecast: Forecast):
    fig, axis = new_figure(figsize=(7, 3.8))
    bands = summary["cumulative"]
    threshold = summary["events_to_threshold"]
    axis.fill_between(bands["events"], bands["lower_90"], bands["upper_90"], color="C3", alpha=0.25,
                      label="90% of simulated catalogs (population and noise)")
    axis.plot(bands["events"], bands["median"], color="C3", label="median")
    known = forecast.known_sign.mean if forecast.known_sign else None
    if known:
        events = np.asarray(bands["events"], dtype=float)
        axis.plot(events, known * events, color="0.4", ls=":", label="known-sign bound (mean ρ²/2 per event)")
    axis.axhline(threshold["threshold"], color="k", ls="--", lw=0.8, label=f"ln BF = {threshold['threshold']:g}")
    crossing = {"median": "catalog size where the median crosses", "lower_90": "where the 95% curve crosses",
                "upper_90": "where the 5% curve crosses"}
    for name, style in (("median", "-"), ("lower_90", "-."), ("upper_90", ":")):
        if threshold.get(name):
            axis.axvline(threshold[name], color="C0", ls=style, lw=0.8,
                         label=f"{crossing[name]} ({threshold[name]:.0f} events)")
    axis.set_xscale("log")
    axis.set_xlabel("number of detected events in the catalog")
    axis.set_ylabel("catalog ln BF₊")
    axis.set_ylim(min(-2.0, float(np.min(bands["lower_90"]))), 2.5 * threshold["threshold"])
    axis.legend(fontsize=9, loc="upper left")
    return figure_to_html(fig, "catalog ln BF against catalog size")


def _pp_figure(pp):
    from scipy.stats import beta

    fig, axis = new_figure(figsize=(4.5, 4.5))
    quantiles = np.sort(pp["quantiles"])
    n = quantiles.size
    grid = np.linspace(0, 1, 101)
    ranks = np.arange(1, n + 1)
    axis.fill_between(ranks / n, beta.ppf(0.05, ranks, n + 1 - ranks), beta.ppf(0.95, ranks, n + 1 - ranks),
                      color="0.85", label="90% band for uniform")
    axis.plot(quantiles, ranks / n, color="C0", label=f"A (KS p = {pp['ks_pvalue']:.2f})")
    axis.plot(grid, grid, color="k", lw=0.6)
    axis.legend(fontsize=9)
    axis.set_xlabel("posterior quantile of the injected A")
    axis.set_ylabel("fraction of injections")
    return figure_to_html(fig, "PP plot")


def _calibration_figure(calibration):
    fig, axis = new_figure(figsize=(4.8, 4.5))
    pairs = np.asarray(calibration["pairs"])
    axis.plot(pairs[:, 0], pairs[:, 1], "o", ms=4)
    low, high = pairs.min(), pairs.max()
    axis.plot([low, high], [low, high], color="k", lw=0.6)
    axis.set_ylabel(f"full ln BF₊ ({calibration['full_method']})")
    axis.set_xlabel("fast (two-point) ln BF₊, same simulated data")
    return figure_to_html(fig, "fast against full")


def count_text(value) -> str:
    return "not reached" if value is None else f"{value:.0f}"


def _field(found, name: str):
    """One number of a mapping (events to the threshold) or of a typed block (None where not written)."""
    value = found.get(name) if isinstance(found, dict) else getattr(found, name, None)
    return None if value is ABSENT else value


def range_text(found) -> str:
    def one(name):
        error = _field(found, f"{name}_err")
        text = count_text(_field(found, name))
        return text if error is None or _field(found, name) is None else f"{text} ± {error:.0f}"

    return f"{one('median')} ({one('lower_90')} to {one('upper_90')})"


FORECAST_ESTIMATOR = (
    "What the forecast is: for each detected injection, the expectation over Gaussian noise of the fast two-point "
    "approximation of ln BF₊ (A = +1 against 0) at the injection's true parameters, held fixed; the catalog "
    "numbers resample these injections. It can be negative for a single injection: the expectation of the exact "
    "Bayes factor's logarithm is a Kullback-Leibler divergence, never negative, only when the source parameters "
    "are drawn from the prior the Bayes factor uses; at fixed true parameters, and for an approximation that "
    "weighs only two points, the average can dip below zero (typically for faint memory whose sign the "
    "(2, ±2) degeneracy hides). The known-sign bound ρ²/2 is never negative.")


def forecast_note(forecast: Forecast) -> str:
    """The forecast estimator in words, with how often it is negative here when the summary shows it."""
    lower = _field(forecast.expected, "lower_90") if forecast.expected else None
    text = f"<p>{html.escape(FORECAST_ESTIMATOR)}</p>"
    if lower is not None and lower < 0:
        text += ("<p>In this campaign at least 5% of the detected injections have a negative expected ln BF₊ "
                 f"(5% quantile {lower:.3g}).</p>")
    return text


def _forecast_rows(summary, forecast: Forecast):
    threshold = summary["events_to_threshold"]
    rows = []
    if forecast:
        expected, known, zero = forecast.expected, forecast.known_sign, forecast.zero_noise
        rows += [("expected ln BF₊ per detected event (over noise)",
                  number(expected.mean, _field(expected, "mean_err"), 5)),
                 ("known-sign bound per event (mean ρ²/2)", number(known.mean, _field(known, "mean_err"), 5)),
                 ("zero-noise value per event (diagnostic, not an expectation)",
                  number(zero.mean, _field(zero, "mean_err"), 5)),
                 ("spread of one event's ln BF₊ over noise (mean)", number(forecast.spread.mean, None, 4))]
    rows.append((f"events to ln BF = {threshold['threshold']:g} with noise scatter: median (90%), ± Monte-Carlo error",
                 f"{range_text(threshold)}; catalogs simulated out to {count_text(threshold.get('horizon'))} events"))
    spread = forecast.events_to_bound_spread if forecast else None
    if spread and _field(spread, "median") is not None:
        rows.append((f"events to bound the amplitudes' spread σ below {spread.bound:g} (90%), all events GR",
                     f"{range_text(spread)}; {spread.method}"))
    if forecast:
        rows += [(f"events to ln BF = {threshold['threshold']:g} from the mean alone", range_text(forecast.events_from_mean)),
                 (f"events to ln BF = {threshold['threshold']:g} at the known-sign bound",
                  range_text(forecast.events_known_sign))]
    return rows


def setup_rows(summary) -> list:
    """What the campaign simulated: network, noise, population, injected amplitude, model and recovery method, from
    the configuration its provenance records."""
    configuration = (summary.get("provenance") or {}).get("configuration") or {}
    campaign, model = configuration.get("campaign") or {}, configuration.get("model") or {}
    data = configuration.get("data") or {}
    if not campaign:
        return []
    noise = campaign.get("noise", "gaussian")
    noise_text = ("none: noise-free simulated data" if noise == "zero"
                  else f"{noise} noise from each detector's noise curve")
    rows = [("detector network", campaign.get("network", "—")), ("noise", noise_text),
            ("population of sources", os.path.basename(str(campaign.get("injections", "—")))),
            ("injected memory amplitude", str(campaign.get("injected_amplitude", "—"))),
            ("waveform model", f"{model.get('approximant') or '—'} (reference frequency "
                               f"{model.get('reference_frequency') or 'default'} Hz)"),
            ("segment", f"{data.get('duration', '—')} s at {data.get('sampling_rate', '—')} Hz from "
                        f"{data.get('minimum_frequency', '—')} Hz"),
            ("recovery method", str(campaign.get("method", "—")))]
    return [(name, html.escape(str(value))) for name, value in rows]


def campaign_page(result: CampaignSummary) -> str:
    """The campaign report, drawn from a :class:`CampaignSummary` alone."""
    summary = result.to_json()
    ln_bf, pp, calibration = summary["ln_bf"], summary["pp"], summary["calibration"]
    rows = [("injections", summary["n_injections"]), ("failed", summary["n_failed"]),
            ("detected (network SNR ≥ %g)" % summary["detection_snr"], summary["n_detected"])]
    rows += _forecast_rows(summary, result.forecast)
    rows += [("PP test of A (KS p-value)", f"{pp['ks_pvalue']:.3f} over {pp['count']} ({pp['method']})"
              if pp["ks_pvalue"] is not None else pp["method"]),
             ("fast against full", "no injection has a full recovery" if not calibration["count"] else
              f"slope {calibration['slope']:.3f}, offset {calibration['intercept']:.3f}, rms difference "
              f"{calibration['rms_difference']:.3f} over {calibration['count']}")]
    notes = "".join(f"<p class='caution'>{html.escape(w)}</p>" for w in summary.get("warnings") or [])
    method = summary["events_to_threshold"].get("method", "")
    setup = setup_rows(summary)
    if setup:
        sections = [("What was simulated", table(["setting", "value"], setup))]
    else:
        sections = []
    sections += [("Summary", notes + table(["quantity", "value"], rows)
                 + f"<p>Events to the threshold: {html.escape(method)}.</p>"
                 + (forecast_note(result.forecast) if result.forecast else ""))]
    if summary["cumulative"]["events"]:
        sections.append(("Catalog ln BF against catalog size", _cumulative_figure(summary, result.forecast)))
    if summary["ln_bf_values"]:
        sections.append(("ln BF on each injection's simulated data",
                         f"<p>{html.escape(ln_bf.get('note', 'ln BF+ per detected injection'))}; mean {number(ln_bf['mean'], ln_bf.get('mean_err'), 4)}, "
                         f"column {html.escape(ln_bf['method'])}.</p>"
                         + _distribution_figure(summary["ln_bf_values"], ln_bf["method"])))
    if pp["count"]:
        sections.append(("PP test of the memory amplitude", _pp_figure(pp)))
    if calibration["count"]:
        sections.append(("Fast against full recovery", _calibration_figure(calibration)))
    return page(f"Campaign {summary['label']}", sections, result.caution)
