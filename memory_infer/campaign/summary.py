"""What a campaign's records say: ln BF distribution, forecast (expected ln BF over noise, catalog growth,
events to a threshold), PP test, fast-against-full calibration."""
from __future__ import annotations


import numpy as np

from ..inputs.population import truncation_warning
from ..results.campaign import CampaignSummary
from ..results.methods import approximate_column, campaign_columns, full_columns, preference_order, quantile_columns


def _preferred_columns() -> list:
    """The record columns of the families the preference rule may choose, in its order."""
    columns = campaign_columns()
    return [columns[family] for family in preference_order() if family in columns]


def headline_key(records) -> str:
    """The preferred ln BF+ column present, in the preference rule's order of families (each method's
    description); the last of them when none is present."""
    columns = _preferred_columns()
    for column in columns:
        key = f"ln_bf_plus_{column}"
        if any(r.get(key) is not None for r in records):
            return key
    return f"ln_bf_plus_{columns[-1]}"


def distribution(values) -> dict:
    values = np.asarray(values, dtype=float)
    if values.size == 0:
        return {"mean": None, "median": None, "lower_90": None, "upper_90": None, "count": 0}
    return {"mean": float(values.mean()), "mean_err": float(values.std(ddof=1) / np.sqrt(values.size)) if values.size > 1 else None,
            "median": float(np.median(values)), "lower_90": float(np.quantile(values, 0.05)),
            "upper_90": float(np.quantile(values, 0.95)), "count": int(values.size)}


NOISE_DRAWS = 2560  # noise realizations of each detected injection's estimator in the catalog simulation (one
# tenth for each batch of simulated catalogs, so that the batches' scatter includes the draws' own randomness)
ERROR_BATCHES = 10  # batches of simulated catalogs behind the Monte-Carlo error of the crossing sizes
EXACT_STEPS = 2000  # catalog growth steps summed draw by draw; larger steps use the sum's mean and variance


def noise_pool(records, seed: int) -> np.ndarray:
    """Per detected injection, ``NOISE_DRAWS`` realizations of the two-point ln BF+ over Gaussian noise, drawn
    from the six inner products each record carries (exact in distribution; see ``methods.fast``), then shifted
    so that their mean is the record's exact expectation (2,560 draws alone would carry a Monte-Carlo error in
    the mean of spread/50 per event, comparable to a second-generation event's whole expected ln BF)."""
    from ..inference.methods.fast import TERM_NAMES, two_point_draws

    rng = np.random.default_rng([int(seed), 11])
    pool = np.array([two_point_draws({n: r[f"term_{n}"] for n in TERM_NAMES}, r["amplitude"], 1.0, NOISE_DRAWS, rng)
                     for r in records]).reshape(len(records), NOISE_DRAWS)
    expected = np.array([r["ln_bf_plus_expected"] for r in records], dtype=float)
    return pool - pool.mean(axis=1, keepdims=True) + expected[:, None]


def _horizon(mean: float, variance: float, threshold: float, max_events: int) -> int:
    """Catalog size by which nearly every simulated catalog has passed the threshold (N mu - 3 sigma sqrt(N) =
    threshold, times 1.5), capped at ``max_events``."""
    if mean <= 0:
        return max_events
    root = (3 * np.sqrt(max(variance, 0.0)) + np.sqrt(9 * max(variance, 0.0) + 4 * mean * threshold)) / (2 * mean)
    return int(min(max_events, max(100, np.ceil(1.5 * root ** 2))))


def catalog_growth(pool, threshold: float, bootstrap: int, seed: int, max_events: int = 1_000_000):
    """Cumulative catalog ln BF against catalog size, and the sizes at which it reaches ``threshold``.

    ``pool`` has one row per detected injection and one column per noise realization of its ln BF (one column
    for values that are themselves single realizations). Each bootstrap catalog first resamples the injections
    (the population estimate is uncertain too), then adds events drawn from that resample, each with its own
    noise realization. Steps of up to ``EXACT_STEPS`` events are summed draw by draw; longer steps (large
    catalogs, where the central limit theorem holds) add a normal number with the resample's mean and variance
    per event times the step. Returns (bands, events): bands are the 5%, 50% and 95% quantiles of the
    catalogs' ln BF on a log-spaced grid of sizes out to the horizon; events are the sizes where the median
    curve reaches the threshold and where the 95% and 5% curves do (the 90% range), linear between grid sizes.
    """
    pool = np.asarray(pool, dtype=float)
    pool = pool.reshape(len(pool), -1) if pool.size else pool.reshape(0, 1)  # no detected injection: empty bands
    events = {"threshold": float(threshold), "median": None, "lower_90": None, "upper_90": None,
              "reached_fraction": 0.0, "bootstrap": int(bootstrap), "max_events": int(max_events),
              "method": "catalogs simulated by resampling the detected injections and drawing each event's ln BF "
                        "with its own Gaussian-noise scatter; sizes where the 50%, 95% and 5% quantile curves of "
                        "the catalog ln BF reach the threshold; Monte-Carlo errors from the same sizes in 10 "
                        "batches of the simulated catalogs",
              "median_err": None, "lower_90_err": None, "upper_90_err": None}
    bands = {"events": [], "median": [], "lower_90": [], "upper_90": []}
    if pool.size == 0:
        return bands, events
    count, width = pool.shape
    # batch k of the simulated catalogs (the batches of the Monte-Carlo error) draws noise realizations from its
    # own tenth of the columns, when there are enough columns
    batch = np.empty(bootstrap, dtype=int)
    for k, members in enumerate(np.array_split(np.arange(bootstrap), ERROR_BATCHES)):
        batch[members] = k
    edges = (np.linspace(0, width, ERROR_BATCHES + 1).astype(int) if width >= ERROR_BATCHES
             else np.array([0] + [width] * ERROR_BATCHES))
    event_mean, event_second = pool.mean(axis=1), (pool ** 2).mean(axis=1)
    moments = []  # per bootstrap catalog: the resample's mean and variance per event (rows redrawn below)
    rows_rng = np.random.default_rng([int(seed), 1])
    for _ in range(bootstrap):
        rows = rows_rng.integers(count, size=count)
        mean = event_mean[rows].mean()
        moments.append((mean, max(event_second[rows].mean() - mean ** 2, 0.0)))
    moments = np.asarray(moments)
    # out to where the slowest 5% of resampled populations pass the threshold
    horizon = _horizon(float(np.quantile(moments[:, 0], 0.05)), float(np.quantile(moments[:, 1], 0.95)), threshold,
                       max_events)
    grid = np.unique(np.round(np.geomspace(1, horizon, 240)).astype(int))
    sums = np.empty((bootstrap, grid.size))
    rows_rng, rng = np.random.default_rng([int(seed), 1]), np.random.default_rng(seed)
    for b in range(bootstrap):
        rows = rows_rng.integers(count, size=count)
        mean, variance = moments[b]
        total, previous = 0.0, 0
        first, end = (edges[batch[b]], edges[batch[b] + 1]) if width >= ERROR_BATCHES else (0, width)
        for j, size in enumerate(grid):
            step = int(size - previous)
            if step <= EXACT_STEPS:
                total += pool[rows[rng.integers(count, size=step)], rng.integers(first, end, size=step)].sum()
            else:
                total += rng.normal(step * mean, np.sqrt(step * variance))
            sums[b, j], previous = total, size
    lower, median, upper = np.quantile(sums, [0.05, 0.5, 0.95], axis=0)
    bands = {"events": grid.tolist(), "median": median.tolist(), "lower_90": lower.tolist(), "upper_90": upper.tolist()}
    for name, curve in (("median", median), ("lower_90", upper), ("upper_90", lower)):
        events[name] = _first_crossing(grid, curve, threshold)
    events.update(_crossing_errors(sums, grid, threshold, events))
    events["reached_fraction"] = float(np.mean(sums[:, -1] >= threshold))
    events["horizon"] = int(grid[-1])
    return bands, events


def _crossing_errors(sums, grid, threshold, events) -> dict:
    """Monte-Carlo standard errors of the three crossing sizes (``<name>_err``): the same crossings found in
    ``ERROR_BATCHES`` equal batches of the simulated catalogs (each with its own resamples and its own noise
    realizations), their standard deviation over the square root of the number of batches (batch means); None
    when a crossing, or a batch's, is not reached."""
    found = {name: [] for name in ("median", "lower_90", "upper_90")}
    for batch in np.array_split(sums, ERROR_BATCHES):
        low, middle, high = np.quantile(batch, [0.05, 0.5, 0.95], axis=0)
        for name, curve in (("median", middle), ("lower_90", high), ("upper_90", low)):
            found[name].append(_first_crossing(grid, curve, threshold))
    out = {}
    for name, values in found.items():
        usable = events[name] is not None and len(values) > 1 and all(v is not None for v in values)
        out[f"{name}_err"] = float(np.std(values, ddof=1) / np.sqrt(len(values))) if usable else None
    return out


def _first_crossing(grid, curve, threshold):
    above = np.flatnonzero(curve >= threshold)
    if not above.size:
        return None
    j = int(above[0])
    if j == 0:
        return float(grid[0])
    low, high = curve[j - 1], curve[j]
    return float(grid[j - 1] + (threshold - low) / (high - low) * (grid[j] - grid[j - 1]))


def expected_events(values, threshold: float, bootstrap: int, seed: int) -> dict:
    """``threshold / mean`` with the 90% range of the mean over resampled injections (None when mean <= 0)."""
    values = np.asarray(values, dtype=float)
    if values.size == 0:
        return {"median": None, "lower_90": None, "upper_90": None}
    rng = np.random.default_rng([int(seed), 13])
    means = np.array([values[rng.integers(values.size, size=values.size)].mean() for _ in range(bootstrap)])
    low, high = np.quantile(means, [0.05, 0.95])
    return {"median": _count(threshold, values.mean()), "lower_90": _count(threshold, high),
            "upper_90": _count(threshold, low)}


def _count(threshold, mean):
    return float(threshold / mean) if mean > 0 else None


def pp_test(records, campaign) -> dict:
    """KS test of the injected A's posterior quantiles against uniform, only where it can say something: A drawn
    from its prior, Gaussian noise, and a recovery that can fail (reweighting or nested sampling)."""
    from scipy.stats import kstest

    empty = {"ks_pvalue": None, "count": 0, "quantiles": []}
    if campaign.injected_amplitude != "prior":
        return dict(empty, method=f"not run: A was fixed at {campaign.injected_amplitude}, not drawn from its prior")
    if campaign.noise != "gaussian":
        return dict(empty, method="not run: without noise the posterior quantiles are not uniform")
    for key, method in quantile_columns().items():
        quantiles = [r[key] for r in records if r.get(key) is not None]
        if len(quantiles) >= 5:
            result = kstest(quantiles, "uniform")
            return {"ks_pvalue": float(result.pvalue), "ks_statistic": float(result.statistic),
                    "count": len(quantiles), "method": method, "quantiles": quantiles}
    return dict(empty, method="not run: fewer than 5 injections with a reweighting or nested recovery of A")


def calibration(records) -> dict:
    """Fast (two-point) against full ln BF+ on the injections that have both."""
    fast_key = f"ln_bf_plus_{approximate_column()}"
    for key in (f"ln_bf_plus_{column}" for column in full_columns()):
        pairs = [(r[fast_key], r[key]) for r in records
                 if r.get(key) is not None and r.get(fast_key) is not None]
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


def forecast(detected, campaign):
    """Forecast numbers from the expected ln BF over noise (see :func:`catalog_growth`); (forecast, bands, events)."""
    usable = [r for r in detected if r.get("ln_bf_plus_expected") is not None]
    threshold, bootstrap, seed = campaign.threshold, campaign.bootstrap, campaign.seed
    bands, events = catalog_growth(noise_pool(usable, seed), threshold, bootstrap, seed)
    column = lambda name: [r[name] for r in usable]
    out = {
        "expected": dict(distribution(column("ln_bf_plus_expected")),
                         note="expected ln BF₊ per detected event over Gaussian noise: the two-point estimator at "
                              "the true parameters, averaged by Gauss-Hermite quadrature (exact up to "
                              "quadrature_error)"),
        "spread": dict(distribution(column("ln_bf_plus_expected_spread")),
                       note="standard deviation of one event's ln BF₊ over noise"),
        "quadrature_error": max(column("ln_bf_plus_expected_err"), default=None),
        "known_sign": dict(distribution(column("ln_bf_plus_known_sign")),
                           note="known-sign bound per event: A_t rho^2 - rho^2/2 = rho^2/2 for A_t = 1 (parameters "
                                "and sign known; PRD 46, 5236 (1992))"),
        "zero_noise": dict(distribution(column("ln_bf_plus_zero_noise")),
                           note="diagnostic only: the estimator on noiseless data, not an expectation (negative "
                                "for sign-degenerate events with rho < 1.4)"),
        "expected_minus": dict(distribution(column("ln_bf_minus_expected")),
                               note="expected ln BF- (flipped sign against no memory) per detected event"),
        "events_from_mean": dict(expected_events(column("ln_bf_plus_expected"), threshold, bootstrap, seed),
                                 method="threshold / mean expected ln BF₊ (no noise scatter), 90% range over "
                                        "resampled injections"),
        "events_known_sign": dict(expected_events(column("ln_bf_plus_known_sign"), threshold, bootstrap, seed),
                                  method="threshold / mean known-sign bound"),
        "events_to_bound_spread": events_to_bound_spread([r.get("memory_snr") for r in detected], bootstrap, seed),
    }
    return out, bands, events


SPREAD_BOUND = 0.5  # the amplitudes' spread sigma a catalog should bound (90%) when every event holds GR's memory
ONE_SIDED_90 = 1.2815515655446004  # the standard normal's 90% quantile


def events_to_bound_spread(memory_snrs, bootstrap: int, seed: int, bound: float = SPREAD_BOUND) -> dict:
    """Events for the 90% upper bound on the spread sigma of the amplitudes A_i ~ N(mu, sigma^2) to fall below
    ``bound`` when every event holds general relativity's memory (sigma = 0).

    For a known signal each event's best-fit A is normal with variance 1/rho_i^2 (PRD 46, 5236 (1992)); with a
    spread it is 1/rho_i^2 + sigma^2, so the Fisher information on s = sigma^2 at s = 0 is sum_i rho_i^4 / 2, and the
    one-sided 90% bound s_90 = 1.28 / sqrt(N <rho^4> / 2) reaches bound^2 at N = 2 (1.28 / bound^2)^2 / <rho^4>
    (large-N, fixed-parameter approximation). It is optimistic: catalogs of that size analysed by the catalog's
    spread model (uniform prior on sigma) bound sigma at a median 0.65, and about twice as many events reach 0.5
    (tests/campaign/test_summary.py). The 90% range resamples the detected injections.
    """
    snrs = np.asarray([value for value in memory_snrs if value is not None and np.isfinite(value)], dtype=float)
    method = ("2 (1.28 / bound^2)^2 / <rho_mem^4> over detected injections: the Fisher information on sigma^2 at 0 "
              "(known signals, PRD 46, 5236 (1992)); optimistic, about half the events the spread model needs "
              "on simulated catalogs; 90% range over resampled injections")
    if snrs.size == 0 or not np.any(snrs > 0):
        return {"bound": bound, "median": None, "lower_90": None, "upper_90": None, "method": method}
    rng = np.random.default_rng(seed + 7)
    fourth = snrs ** 4
    resampled = np.array([np.mean(rng.choice(fourth, fourth.size)) for _ in range(max(int(bootstrap), 20))])
    scale = 2 * (ONE_SIDED_90 / bound ** 2) ** 2

    def count(mean):
        return None if not mean > 0 else float(np.ceil(scale / mean))

    counts = [count(mean) for mean in resampled]
    finite = np.array([c for c in counts if c is not None])
    return {"bound": bound, "median": count(np.mean(fourth)),
            "lower_90": float(np.quantile(finite, 0.05)) if finite.size else None,
            "upper_90": float(np.quantile(finite, 0.95)) if finite.size == len(counts) else None,
            "method": method}


def population_reach(campaign) -> float | None:
    """The redshift range the campaign's population was drawn to (None for an injection table)."""
    from ..inputs.population import load_population, redshift_reach

    if not campaign.injections.endswith(".toml"):
        return None
    return redshift_reach(load_population(campaign.injections_path), campaign.network)


def summarize(records, campaign) -> CampaignSummary:
    """The campaign's summary from its records and settings (:class:`memory_infer.inputs.settings.CampaignSettings`)."""
    ok = [r for r in records if r.get("status") == "ok"]
    detected = [r for r in ok if r.get("detected")]
    key = headline_key(detected)
    values = [r[key] for r in detected if r.get(key) is not None]
    outlook, bands, events = forecast(detected, campaign)
    warnings = []
    reach = population_reach(campaign)
    if reach:
        warning = truncation_warning([r["redshift"] for r in detected], reach)
        warnings += [warning] if warning else []
    return CampaignSummary(
        label=campaign.label, n_injections=len(records), n_failed=len(records) - len(ok),
        n_detected=len(detected), detection_snr=campaign.detection_snr,
        ln_bf=dict(distribution(values), method=key,
                   note="ln BF₊ (A = +1 vs 0) over detected injections, each on its own simulated data"),
        memory_snr=distribution([r["memory_snr"] for r in detected]),
        events_to_threshold=events, cumulative=bands, forecast=outlook,
        pp=pp_test(ok, campaign), calibration=calibration(detected),
        failures=[{"index": r["index"], "error": r["error"]} for r in records if r.get("status") != "ok"][:50],
        ln_bf_values=[float(v) for v in values], warnings=warnings)
