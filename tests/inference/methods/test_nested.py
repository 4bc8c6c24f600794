import json
import os

import bilby
import numpy as np
import pytest

from memory_infer.inference.methods.fast import fast_estimates, sign_partner
from memory_infer.inference.methods.nested import run_nested
from memory_infer.inference.methods.reweighting import (amplitude_curve, mean_ratio as _mean_ratio, reweighting_estimate,
                                                        sign_from_curve)
from memory_infer import MemoryTransient, waveform_generator

from helpers import event_config


class GaussianLikelihood(bilby.core.likelihood.Likelihood):
    def __init__(self):
        super().__init__(parameters={"x": 0.0, "y": 0.0})

    def log_likelihood(self, parameters=None):
        p = parameters or self.parameters
        return -0.5 * ((p["x"] - 0.3) ** 2 + (p["y"] + 0.2) ** 2) / 0.25 - np.log(2 * np.pi * 0.25)


def test_nested_wrapper_recovers_analytic_gaussian_evidence(tmp_path):
    # textbook integral: a normalized Gaussian well inside a uniform prior on [-3, 3]^2 gives Z = 1/36
    priors = bilby.core.prior.PriorDict({"x": bilby.core.prior.Uniform(-3, 3, "x"),
                                         "y": bilby.core.prior.Uniform(-3, 3, "y")})
    result = run_nested(GaussianLikelihood(), priors, "gauss", str(tmp_path), live_points=150, accepted_walks=15,
                        seed=11, progress=False)
    assert abs(result.log_evidence - np.log(1 / 36)) < 3 * result.log_evidence_err
    # nested sampling's error is about sqrt(H / n_live), H the information (Skilling, Bayesian Analysis 1, 833
    # (2006)); here H = ln(36) - ln(2 pi 0.25) - 1 = 2.13 nats for the 2-D Gaussian, so about 0.12; a factor 2 allowed
    information = np.log(36.0) - np.log(2 * np.pi * 0.25) - 1.0
    assert 0.5 < result.log_evidence_err / np.sqrt(information / 150) < 2.0


def test_sign_error_comes_from_the_two_signed_runs():
    # the sign ln BF is ln Z(+1) - ln Z(-1): the shared A = 0 run (error 0.3 here) cancels, so the error is that of
    # the two signed runs' ln Z (0.1 and 0.2), not the quadrature of the two Bayes factors' errors (common practice,
    # no source: independent errors add in quadrature)
    from memory_infer.inference.methods.nested import sign_from_nested
    from memory_infer.results.estimates import EvidenceEstimate

    plus = EvidenceEstimate(method="nested sampling", ln_bf=1.5, ln_bf_err=np.hypot(0.1, 0.3))
    minus = EvidenceEstimate(method="nested sampling", ln_bf=-0.5, ln_bf_err=np.hypot(0.2, 0.3), numerator="flipped")
    sign = sign_from_nested(plus, minus, 0.1, 0.2)
    assert sign.ln_bf_sign == pytest.approx(2.0) and sign.ln_bf_sign_err == pytest.approx(np.sqrt(0.05), rel=1e-12)
    assert sign.ln_bf_sign_err < np.hypot(plus.ln_bf_err, minus.ln_bf_err) - 0.2
    # weight of the A = +1 branch against A = -1: BF+ / (BF+ + BF-) (the posterior odds of the two signs)
    assert sign.weight_plus == pytest.approx(1 / (1 + np.exp(-2.0)))

