import numpy as np
import pytest
from scipy.stats import norm

from memory_infer.catalog.population import EventCurves
from memory_infer.catalog.shared_amplitude import SharedAmplitude


def test_shared_evidence_of_gaussian_curves_is_the_closed_form():
    # closed form: a product of Gaussians in A is a Gaussian (inverse-variance weights); its integral over the
    # prior's span [a, b] is a difference of normal CDFs (scipy.stats.norm)
    grid = np.linspace(-4, 4, 4001)
    centres, widths = np.array([0.6, 1.4, 0.9]), np.array([0.7, 0.9, 0.5])
    ln = -0.5 * ((grid[None, :] - centres[:, None]) / widths[:, None]) ** 2 + 0.3
    result = SharedAmplitude().analyse(EventCurves(grid, ln, 0.0))
    precision = np.sum(widths ** -2.0)
    mean, sd = np.sum(centres / widths ** 2) / precision, precision ** -0.5
    exponent = 0.5 * (mean ** 2 * precision - np.sum(centres ** 2 / widths ** 2))
    expected = (3 * 0.3 + exponent + np.log(np.sqrt(2 * np.pi) * sd * (norm.cdf(4, mean, sd) - norm.cdf(-4, mean, sd)))
                - np.log(8.0))
    assert result["ln_evidence"] == pytest.approx(expected, abs=1e-6)
    assert result["parameters"]["A"]["median"] == pytest.approx(mean, abs=1e-4)
    assert result["parameters"]["A"]["upper_90"] == pytest.approx(mean + norm.ppf(0.95) * sd, abs=1e-4)


def test_flat_curves_give_no_evidence_and_the_prior():
    # Bayes' theorem: likelihood 1 everywhere leaves Z = 1 and the uniform prior's quantiles
    grid = np.linspace(-2, 2, 41)
    model = SharedAmplitude()
    result = model.analyse(EventCurves(grid, np.zeros((2, 41)), 0.0))
    assert result["ln_evidence"] == pytest.approx(0.0, abs=1e-12)
    assert result["parameters"]["A"]["lower_90"] == pytest.approx(-1.8, abs=1e-9)
    assert model.prior(EventCurves(grid, np.zeros((1, 41)), 0.0)) == "A uniform on [-2, 2]"
