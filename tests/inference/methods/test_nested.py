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
    assert 0.02 < result.log_evidence_err < 0.5
