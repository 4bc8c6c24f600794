import json
import os

import numpy as np
import pytest

from memory_infer.common.errors import MemoryInferError

from helpers import INJECTIONS, campaign_config, run_store, stored


def test_pp_test_runs_only_where_it_can_fail():
    # the PP test needs A drawn from its prior, Gaussian noise, and a recovery that can fail; the fast estimate's
    # quantile is an exact Gaussian at the truth, so it is never used
    from dataclasses import replace

    from memory_infer.campaign.summary import pp_test
    from memory_infer.inputs.settings import CampaignSettings

    rng = np.random.default_rng(3)
    uniform = [{"amplitude_quantile_reweighting": float(q)} for q in rng.uniform(size=60)]
    prior = CampaignSettings(injected_amplitude="prior", noise="gaussian")
    assert pp_test(uniform, replace(prior, injected_amplitude=1.0))["method"].startswith("not run: A was fixed at 1.0")
    assert pp_test(uniform, replace(prior, noise="zero"))["ks_pvalue"] is None
    assert pp_test([{"amplitude_quantile_fast": 0.5}] * 60, prior)["count"] == 0
    passed = pp_test(uniform, prior)
    assert passed["count"] == 60 and passed["ks_pvalue"] > 0.01
    clustered = [{"amplitude_quantile_reweighting": float(q)} for q in rng.uniform(0.3, 0.7, size=60)]
    assert pp_test(clustered, prior)["ks_pvalue"] < 1e-3  # an overconfident recovery fails


@pytest.mark.slow
def test_reweighting_amplitude_posterior_passes_a_pp_test(tmp_path):
    # PP test (common practice, no source): with A drawn from its prior [-4, 4] and Gaussian noise, the
    # reweighted posterior quantiles of the injected A are uniform; 12 Cosmic Explorer injections, phase free.
    # Kept cheap: data sampled at 512 Hz and 20 live points (injection and recovery share the model, so the
    # quantiles stay uniform); a KS p-value below 0.001 fails, so a calibrated recovery fails 0.1% of the time.
    # Power is low: these sources are quiet in memory (posteriors near the prior) and 12 quantiles fail only
    # at a KS distance above about 0.55 (scipy's kstwo), e.g. every quantile at one end of the prior
    from memory_infer.cli import main

    config = campaign_config(tmp_path, count=12, network="ce", amplitude='"prior"', detection_snr=0.0,
                             method="reweighting", extra='[recovery]\nfree_parameters = ["phase"]\nlive_points = 20',
                             sampling_rate=512.0)
    text = open(config).read().replace("bootstrap = 200", "bootstrap = 200\nfree_amplitude_limits = [-4.0, 4.0]")
    open(config, "w").write(text)
    assert main(["campaign", config, "--outdir", str(tmp_path / "pp"), "--workers", "2", "--quiet"]) == 0
    summary = json.loads((tmp_path / "pp" / "campaign.json").read_text())
    assert summary["pp"]["count"] == 12
    assert summary["pp"]["method"] == "reweighted A curve from the A = 0 posterior"
    assert summary["pp"]["ks_pvalue"] > 0.001


@pytest.mark.slow
def test_design_network_forecast_is_of_order_a_thousand(tmp_path):
    # published forecasts: of order a thousand or more binary black holes at second-generation design sensitivity
    # for a confident memory detection (PRD 101, 023011 (2020); PRD 101, 083026 (2020); PRD 107, 064056 (2023); their
    # numbers from memory); order of magnitude only, 1e2 to 1e4
    from memory_infer.cli import main

    config = campaign_config(tmp_path, count=2500, network="hlv-design", noise="zero", detection_snr=12.0,
                             extra="[model]\napproximant = \"IMRPhenomTHM\"")
    assert main(["campaign", config, "--outdir", str(tmp_path / "forecast"), "--workers", "2", "--quiet"]) == 0
    summary = json.loads((tmp_path / "forecast" / "campaign.json").read_text())
    threshold = summary["events_to_threshold"]
    assert summary["n_detected"] > 25
    assert threshold["threshold"] == 8.0
    assert threshold["median"] is not None and 1e2 <= threshold["median"] <= 1e4


def test_catalog_growth_matches_a_gaussian_random_walk():
    # closed form (common practice, no source): events with ln BF ~ N(mu, sigma^2) each sum to N(N mu, N sigma^2);
    # the median reaches T at N = T / mu, the 5% curve where N mu - 1.645 sigma sqrt(N) = T and the 95% curve
    # where N mu + 1.645 sigma sqrt(N) = T; one population row, so resampling adds nothing
    from scipy.optimize import brentq

    from memory_infer.campaign.summary import catalog_growth

    mu, sigma, threshold = 0.01, 0.15, 8.0
    pool = np.random.default_rng(2).normal(mu, sigma, size=(1, 200_000))
    pool += mu - pool.mean()
    bands, events = catalog_growth(pool, threshold, 2000, 9)
    spread = pool.std()
    later = brentq(lambda n: n * mu - 1.645 * spread * np.sqrt(n) - threshold, 1, 1e6)
    earlier = brentq(lambda n: n * mu + 1.645 * spread * np.sqrt(n) - threshold, 1, threshold / mu)
    assert abs(events["median"] / (threshold / mu) - 1) < 0.03
    assert abs(events["upper_90"] / later - 1) < 0.05
    assert abs(events["lower_90"] / earlier - 1) < 0.1
    assert bands["events"][-1] >= events["upper_90"]  # the bands reach past the slowest crossing


def test_catalog_growth_of_single_realizations_and_of_no_memory():
    from memory_infer.campaign.summary import catalog_growth, expected_events

    values = np.random.default_rng(4).normal(0.5, 0.3, size=80)
    _, events = catalog_growth(values, 8.0, 300, 1)
    assert 10 < events["median"] < 25
    _, never = catalog_growth(-np.abs(values), 8.0, 100, 1, max_events=5000)
    assert never["median"] is None and never["reached_fraction"] == 0.0
    assert expected_events(-np.abs(values), 8.0, 100, 1)["median"] is None


def test_noise_pool_keeps_each_event_exact_mean_and_spread():
    # the pool's per-event mean is the exact expectation, its spread the quadrature spread within 10%
    from memory_infer.campaign.summary import noise_pool
    from memory_infer.inference.methods.fast import two_point_noise_average

    terms = {"memory": 0.04, "partner_memory": 0.05, "memory_cross": -0.04, "split": 3.0, "memory_split": -0.01,
             "partner_split": 0.02}
    average = two_point_noise_average(terms, 1.0, 1.0)
    record = {f"term_{k}": v for k, v in terms.items()}
    record.update(amplitude=1.0, ln_bf_plus_expected=average["mean"])
    pool = noise_pool([record, record], 3)
    assert np.allclose(pool.mean(axis=1), average["mean"], rtol=0, atol=1e-15)
    assert abs(pool.std() / average["spread"] - 1) < 0.1


def test_crossing_errors_include_the_noise_draws_own_scatter():
    # consistency of the Monte-Carlo errors (batch means, common practice, no source) when each run also draws its
    # own heavy-tailed noise realizations (as each forecast draws its own): the crossing sizes of independent runs
    # scatter by about the error each run reports. Low power: 8 runs pin the ratio only to within about 25%, and
    # errors that leave out the noise draws' randomness passed too (ratios 0.96-1.31 against 0.54-1.22)
    from memory_infer.campaign.summary import NOISE_DRAWS, catalog_growth

    runs = []
    for seed in range(8):
        draws = np.random.default_rng(100 + seed).standard_t(3, size=(30, NOISE_DRAWS)) * 0.3
        pool = draws - draws.mean(axis=1, keepdims=True) + np.linspace(0.0, 0.05, 30)[:, None]
        runs.append(catalog_growth(pool, 8.0, 400, seed)[1])
    for name in ("median", "upper_90"):
        values = np.array([run[name] for run in runs])
        errors = np.array([run[f"{name}_err"] for run in runs])
        assert 0.3 < np.std(values, ddof=1) / np.median(errors) < 3.0, name


def test_events_to_bound_the_spread_agree_with_the_spread_model_on_simulated_catalogs():
    # reference: each event's best-fit A for a known signal is normal around the true A with variance 1/rho^2
    # (PRD 46, 5236 (1992)); catalogs analysed by the catalog's spread model. The forecast is a large-N Fisher estimate
    # and optimistic: at its size the median 90% bound on sigma is 0.65 (measured), at twice its size 0.48
    import numpy as np

    from memory_infer.campaign.summary import events_to_bound_spread
    from memory_infer.catalog.amplitude_spread import AmplitudeSpread
    from memory_infer.catalog.population import EventCurves

    rng = np.random.default_rng(11)
    snrs = rng.uniform(0.5, 1.5, 400)
    found = events_to_bound_spread(snrs, bootstrap=100, seed=1)
    count = int(found["median"])
    assert found["lower_90"] <= count <= found["upper_90"] and 2 <= count <= 200
    grid = np.linspace(-4, 4, 161)

    def median_bound(size):
        bounds = []
        for _ in range(30):
            rho = rng.choice(snrs, size)
            best = 1.0 + rng.normal(size=size) / rho  # every event holds GR's memory: sigma = 0
            ln_curves = -0.5 * (grid[None, :] - best[:, None]) ** 2 * rho[:, None] ** 2
            result = AmplitudeSpread().analyse(EventCurves(grid, ln_curves, np.zeros_like(ln_curves)))
            bounds.append(result["parameters"]["sigma"]["upper_bound_90"])
        return np.median(bounds)

    assert 0.5 < median_bound(count) < 0.8  # optimistic, as its method says
    assert 0.4 < median_bound(2 * count) < 0.56  # about twice the events reach the bound
    nothing = events_to_bound_spread([], bootstrap=10, seed=1)
    assert nothing["median"] is None
