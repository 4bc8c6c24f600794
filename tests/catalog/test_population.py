import numpy as np
import pytest
from scipy.stats import norm

from memory_infer.catalog.population import (EventCurves, PopulationSettings, highest_density_holds, interval,
                                             ln_trapezoid)
from memory_infer.common.errors import MemoryInferError


def test_log_trapezoid_equals_the_plain_rule_without_overflow():
    # the trapezoid rule itself (common practice, no source): numpy's trapezoid on values that fit in a float
    x = np.sort(np.random.default_rng(1).uniform(-2, 3, 40))
    ln_values = -0.5 * x ** 2 + 3.0
    assert ln_trapezoid(ln_values, x) == pytest.approx(np.log(np.trapezoid(np.exp(ln_values), x)), abs=1e-12)
    assert ln_trapezoid(ln_values + 2000.0, x) == pytest.approx(np.log(np.trapezoid(np.exp(ln_values), x)) + 2000.0,
                                                               abs=1e-9)
    table = np.stack([ln_values, ln_values - 5.0])
    assert np.allclose(ln_trapezoid(table, x, axis=1), [ln_trapezoid(ln_values, x), ln_trapezoid(ln_values, x) - 5])


def test_interval_of_a_normal_density_matches_scipy():
    # the normal distribution's quantiles from scipy.stats.norm
    x = np.linspace(-8, 8, 4001)
    found = interval(x, norm.logpdf(x, 0.3, 1.2))
    assert found["median"] == pytest.approx(0.3, abs=1e-4)
    assert found["lower_90"] == pytest.approx(norm.ppf(0.05, 0.3, 1.2), abs=1e-4)
    assert found["upper_90"] == pytest.approx(norm.ppf(0.95, 0.3, 1.2), abs=1e-4)
    assert found["upper_bound_90"] == pytest.approx(norm.ppf(0.9, 0.3, 1.2), abs=1e-4)


def test_highest_density_region_holds_the_peak_and_not_the_far_tail():
    # for a normal density the 90% highest-density region is mean +- 1.645 sd (scipy.stats.norm)
    x = np.linspace(-8, 8, 4001)
    ln_density = norm.logpdf(x, 1.0, 1.0)
    edge = norm.ppf(0.95)
    assert highest_density_holds(x, ln_density, 1.0)
    assert highest_density_holds(x, ln_density, 1.0 - edge + 0.01)
    assert not highest_density_holds(x, ln_density, 1.0 - edge - 0.01)
    assert highest_density_holds(x, ln_density, 1.0 - edge - 0.01, level=0.95)


def test_curves_are_checked_scaled_coarsened_and_replicated():
    grid = np.linspace(-1, 2, 7)
    curves = EventCurves(grid, [grid * 3.0, -grid], [0.1] * 7, ("a", "b"))
    assert np.allclose(curves.peaks, [6.0, 1.0]) and np.allclose(curves.scaled.max(axis=1), 1.0)
    assert curves.span == (-1.0, 2.0)
    assert curves.coarsened(10) is curves
    coarse = curves.coarsened(4)
    assert np.allclose(coarse.grid, [-1, 0, 1, 2]) and np.allclose(coarse.ln_curves[0], [-3, 0, 3, 6])
    replica = curves.replica(np.random.default_rng(0))
    assert 0 < np.std(replica.ln_curves - curves.ln_curves) < 0.2
    with pytest.raises(MemoryInferError, match="one value per amplitude grid point"):
        EventCurves(grid, [grid[:-1]], 0.0)
    with pytest.raises(MemoryInferError, match="rise"):
        EventCurves(grid[::-1], [grid], 0.0)


@pytest.mark.parametrize("largest", [0.0, -1.0, float("nan")])
def test_a_spread_limit_that_is_not_positive_is_refused(largest):
    with pytest.raises(MemoryInferError, match="largest spread of the amplitudes must be a positive number"):
        PopulationSettings(largest_spread=largest)
