import json
import os

import numpy as np
import pytest

from memory_infer.common.errors import MemoryInferError

from helpers import INJECTIONS, campaign_config, run_store, stored
from memory_infer.campaign.config import load_campaign_config, plan


def test_population_draws_are_seeded_and_physical(tmp_path):
    config = load_campaign_config(campaign_config(tmp_path, count=500))
    first, second = plan(config), plan(config)
    assert first == second
    sources = [t["source"] for t in first]
    redshift = np.array([s["redshift"] for s in sources])
    assert np.all((redshift > 0) & (redshift <= 1.0))
    assert all(s["mass_2"] <= s["mass_1"] for s in sources)
    # isotropic orientation: cos(theta_jn) uniform on [-1, 1] (common practice, no source), so its mean is ~0
    assert abs(np.mean(np.cos([s["theta_jn"] for s in sources]))) < 4 / np.sqrt(3 * 500)
    # uniform in comoving volume: at low z the count inside z grows like z^3 (common practice, no source)
    assert np.mean(redshift < 0.5) < np.mean(redshift < 1.0)
