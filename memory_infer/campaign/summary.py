"""What a campaign's records say: ln BF distribution, events to a threshold, PP test, calibration."""
from __future__ import annotations

import numpy as np

from ..results.campaign import CampaignSummary
from ..results.estimates import PREFERENCE

COLUMN = {"nested": "nested", "reweighting": "reweighting", "two-point": "fast"}  # record column per family
FULL_KEYS = ("ln_bf_plus_nested", "ln_bf_plus_reweighting")
QUANTILE_KEYS = ("amplitude_quantile_nested", "amplitude_quantile_reweighting", "amplitude_quantile_fast")


def headline_key(records) -> str:
    """The preferred ln BF+ column present, in the one order of :data:`memory_infer.results.estimates.PREFERENCE`."""
    for family in PREFERENCE:
        key = f"ln_bf_plus_{COLUMN[family]}"
        if any(r.get(key) is not None for r in records):
            return key
    return "ln_bf_plus_fast"


def distribution(values) -> dict:
    values = np.asarray(values, dtype=float)
    if values.size == 0:
        return {"mean": None, "median": None, "lower_90": None, "upper_90": None, "count": 0}
    return {"mean": float(values.mean()), "mean_err": float(values.std(ddof=1) / np.sqrt(values.size)) if values.size > 1 else None,
            "median": float(np.median(values)), "lower_90": float(np.quantile(values, 0.05)),
            "upper_90": float(np.quantile(values, 0.95)), "count": int(values.size)}


def events_to_threshold(values, threshold: float, bootstrap: int, seed: int, max_events: int = 200_000) -> dict:
    """Catalog sizes at which the cumulative ln BF first reaches ``threshold``, over bootstrap catalogs
    drawn with replacement from the detected injections."""
    values = np.asarray(values, dtype=float)
    out = {"threshold": float(threshold), "median": None, "lower_90": None, "upper_90": None, "reached_fraction": 0.0,
           "bootstrap": int(bootstrap),
           "method": "two-stage bootstrap: resample the detected injections, then draw catalogs from that "
                     "resample until the cumulative ln BF first crosses the threshold"}
    if values.size == 0:
        return out
    rng = np.random.default_rng(seed)
    chunk = min(max_events, max(1000, int(4 * threshold / max(values.mean(), 1e-6))))
    counts = []
    for _ in range(bootstrap):
        # two stages: resample the injections (the population estimate is uncertain too), then a catalog
        population = rng.choice(values, size=values.size)
        total, offset, found = 0.0, 0, None
        while offset < max_events:
            draws = np.cumsum(rng.choice(population, size=chunk)) + total
            crossing = np.flatnonzero(draws >= threshold)
            if crossing.size:
                found = offset + int(crossing[0]) + 1
                break
            total, offset = float(draws[-1]), offset + chunk
        counts.append(np.inf if found is None else found)
    counts = np.asarray(counts, dtype=float)
    out["reached_fraction"] = float(np.mean(np.isfinite(counts)))
    capped = np.where(np.isfinite(counts), counts, max_events + 1)
    for name, q in (("median", 0.5), ("lower_90", 0.05), ("upper_90", 0.95)):
        value = float(np.quantile(capped, q, method="inverted_cdf"))
        out[name] = value if value <= max_events else None  # None: not reached within max_events
    out["max_events"] = int(max_events)
    return out


def cumulative_bands(values, bootstrap: int, seed: int, length: int | None = None) -> dict:
    """Median and 90% band of the cumulative ln BF against catalog size (bootstrap catalogs)."""
    values = np.asarray(values, dtype=float)
    if values.size == 0:
        return {"events": [], "median": [], "lower_90": [], "upper_90": []}
    length = length or values.size
    rng = np.random.default_rng(seed + 1)
    sums = np.cumsum(rng.choice(values, size=(min(bootstrap, 400), length)), axis=1)
    lower, median, upper = np.quantile(sums, [0.05, 0.5, 0.95], axis=0)
    step = max(1, length // 300)
    index = np.arange(0, length, step)
    return {"events": (index + 1).tolist(), "median": median[index].tolist(), "lower_90": lower[index].tolist(),
            "upper_90": upper[index].tolist()}


def pp_test(records) -> dict:
    from scipy.stats import kstest

    for key in QUANTILE_KEYS:
        quantiles = [r[key] for r in records if r.get(key) is not None]
        if len(quantiles) >= 5:
            result = kstest(quantiles, "uniform")
            method = {"amplitude_quantile_fast": "exact Gaussian A posterior at the true parameters (fixed point)",
                      "amplitude_quantile_reweighting": "reweighted A curve from the A = 0 posterior",
                      "amplitude_quantile_nested": "nested sampling with A free"}[key]
            return {"ks_pvalue": float(result.pvalue), "ks_statistic": float(result.statistic),
                    "count": len(quantiles), "method": method, "quantiles": quantiles}
    return {"ks_pvalue": None, "count": 0, "method": "no free-amplitude quantiles", "quantiles": []}


def calibration(records) -> dict:
    """Fast (two-point) against full ln BF+ on the injections that have both."""
    for key in FULL_KEYS:
        pairs = [(r["ln_bf_plus_fast"], r[key]) for r in records
                 if r.get(key) is not None and r.get("ln_bf_plus_fast") is not None]
        if len(pairs) >= 2:
            fast, full = np.asarray(pairs).T
            slope, intercept = np.polyfit(fast, full, 1)
            difference = full - fast
            return {"full_method": key.replace("ln_bf_plus_", ""), "count": len(pairs), "slope": float(slope),
                    "intercept": float(intercept), "mean_difference": float(difference.mean()),
                    "rms_difference": float(np.sqrt(np.mean(difference ** 2))),
                    "correlation": float(np.corrcoef(fast, full)[0, 1]) if np.std(fast) > 0 and np.std(full) > 0 else None,
                    "pairs": [list(p) for p in pairs]}
    return {"full_method": None, "count": 0}


def summarize(records, config) -> CampaignSummary:
    campaign = config["campaign"]
    ok = [r for r in records if r.get("status") == "ok"]
    detected = [r for r in ok if r.get("detected")]
    key = headline_key(detected)
    values = [r[key] for r in detected if r.get(key) is not None]
    return CampaignSummary(
        label=campaign["label"], n_injections=len(records), n_failed=len(records) - len(ok),
        n_detected=len(detected), detection_snr=campaign["detection_snr"],
        ln_bf=dict(distribution(values), method=key, note="ln BF+ (A = +1 vs 0) over detected injections"),
        memory_snr=distribution([r["memory_snr"] for r in detected]),
        events_to_threshold=events_to_threshold(values, campaign["threshold"], campaign["bootstrap"], campaign["seed"]),
        cumulative=cumulative_bands(values, campaign["bootstrap"], campaign["seed"]),
        pp=pp_test(ok), calibration=calibration(detected),
        failures=[{"index": r["index"], "error": r["error"]} for r in records if r.get("status") != "ok"][:50],
        ln_bf_values=[float(v) for v in values])
