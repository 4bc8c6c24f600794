"""Digests of what a stored run depends on: equal inputs give equal digests, any change (one strain sample, a
PSD value, a prior's bound) another."""
import bilby
import numpy as np

from memory_infer.inference.digests import changed_parts, data_digest, digest_of, priors_digest


def _detectors(seed=1, scale=1.0):
    detectors = bilby.gw.detector.InterferometerList(["H1"])
    detectors[0].power_spectral_density = bilby.gw.detector.PowerSpectralDensity(
        frequency_array=np.linspace(0, 512, 2049), psd_array=np.full(2049, 1e-46 * scale))
    rng = np.random.default_rng(seed)
    detectors[0].strain_data.set_from_time_domain_strain(rng.normal(0, 1e-22, 4096), sampling_frequency=1024.0,
                                                         duration=4.0, start_time=0.0)
    return detectors


def test_data_digest_follows_strain_and_psd():
    assert data_digest(_detectors()) == data_digest(_detectors())
    assert data_digest(_detectors(seed=2)) != data_digest(_detectors())
    assert data_digest(_detectors(scale=1.0 + 1e-12)) != data_digest(_detectors())
    changed = _detectors()
    changed[0].minimum_frequency = 30.0
    assert data_digest(changed) != data_digest(_detectors())


def test_priors_digest_and_changed_parts():
    first = bilby.core.prior.PriorDict({"phase": bilby.core.prior.Uniform(0, 6.28, name="phase")})
    second = bilby.core.prior.PriorDict({"phase": bilby.core.prior.Uniform(0, 6.0, name="phase")})
    assert priors_digest(first) == priors_digest(bilby.core.prior.PriorDict(dict(first)))
    assert priors_digest(first) != priors_digest(second)
    assert digest_of({"a": 1, "b": [1.0, 2.0]}) == digest_of({"b": [1.0, 2.0], "a": 1})
    stored = {"priors": priors_digest(first), "data": "x"}
    assert changed_parts(stored, {"priors": priors_digest(second), "data": "x"}) == ["priors"]
    assert changed_parts(None, stored) == ["priors", "data"] and changed_parts(stored, dict(stored)) == []
