import numpy as np
import pytest
from scipy.stats import norm

from memory_infer.catalog.combine import EventEntry
from memory_infer.catalog.consistency import expected_versus_observed, leave_one_out


def test_expected_sum_has_the_spread_of_gr_memory_and_matches_simulated_catalogs():
    # PRD 46, 5236 (1992): for known parameters, ln BF(1 vs 0) = <d,h> - <h,h>/2 is normal with mean rho^2/2
    # and variance rho^2 when the data hold h; checked here against a direct simulation of the inner products
    rng = np.random.default_rng(5)
    snrs = np.array([3.0, 1.5, 0.8, 4.2])
    entries = [EventEntry(f"e{i}", 0.0, 0.0, 0.01, 0.01, 0.01, memory_snr=s) for i, s in enumerate(snrs)]
    versus = expected_versus_observed(entries)
    assert versus["expected_ln_bf_plus"] == pytest.approx(np.sum(snrs ** 2) / 2)
    assert versus["expected_spread"] == pytest.approx(np.sqrt(np.sum(snrs ** 2)))
    # ln BF_i = rho_i^2 - rho_i^2/2 + rho_i n_i with n_i standard normal (the whitened noise projected on h/rho)
    sums = (snrs ** 2 / 2 + snrs * rng.normal(size=(20000, snrs.size))).sum(axis=1)
    assert sums.mean() == pytest.approx(versus["expected_ln_bf_plus"], abs=0.1)
    assert sums.std() == pytest.approx(versus["expected_spread"], rel=0.02)
    assert versus["standard_deviations"] == pytest.approx(-versus["expected_ln_bf_plus"] / versus["expected_spread"])
    assert versus["p_value"] == pytest.approx(2 * norm.sf(abs(versus["standard_deviations"])))
    assert expected_versus_observed([EventEntry("x", 0.3, 0.1, 0.01)])["expected_ln_bf_plus"] is None


def test_leave_one_out_flags_events_that_exclude_each_other():
    grid = np.linspace(-4, 4, 801)
    curve = lambda centre, width: (-0.5 * ((grid - centre) / width) ** 2).tolist()
    agreeing = leave_one_out(grid, {"a": curve(1.0, 0.3), "b": curve(0.8, 0.3), "c": curve(1.1, 0.5)})
    assert agreeing["in_tension"] == []
    # two Gaussians: A_a - A_b is normal with mean 1.2 and spread hypot(0.1, 0.1) (textbook), far in tension
    apart = leave_one_out(grid, {"a": curve(1.0, 0.1), "b": curve(-0.2, 0.1)})
    expected = 2 * norm.sf(1.2 / np.hypot(0.1, 0.1))
    assert apart["events"]["a"]["p_value"] == pytest.approx(expected, abs=1e-6)
    assert apart["in_tension"] == ["a", "b"] and apart["level"] == pytest.approx(0.025)
    mild = leave_one_out(grid, {"a": curve(0.5, 0.5), "b": curve(-0.2, 0.5)})
    assert mild["events"]["b"]["p_value"] == pytest.approx(2 * norm.cdf(-0.7 / np.hypot(0.5, 0.5)), abs=1e-4)
    assert leave_one_out(grid, {"a": curve(0.0, 1.0)})["in_tension"] == []
