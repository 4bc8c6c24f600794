import json
import os

import numpy as np
import pytest

from memory_infer.campaign.injection import sign_columns
from memory_infer.common.errors import MemoryInferError
from memory_infer.results.estimates import EvidenceEstimate
from memory_infer.results.methods import DESCRIPTIONS, FIXED_POINT, NESTED, REWEIGHTING, TWO_POINT

from helpers import INJECTIONS, campaign_config, run_store, stored


@pytest.mark.slow
def test_reweighting_recovery_runs_and_is_calibrated_against_fast(tmp_path):
    from memory_infer.cli import main

    config = campaign_config(tmp_path, count=2, network="ce", noise="zero", method="reweighting", detection_snr=8.0,
                             injections="loud_third_generation.csv", sampling_rate=512.0,
                             extra="[recovery]\nfree_parameters = [\"phase\"]\nlive_points = 25")
    assert main(["campaign", config, "--outdir", str(tmp_path / "full"), "--quiet"]) == 0
    summary = json.loads((tmp_path / "full" / "campaign.json").read_text())
    assert summary["calibration"]["count"] == 2
    # two of our own estimators agree (consistency only, no outside value): reweighting a 25-live-point posterior
    # over the phase carries a Monte-Carlo error of a few tenths of a nat (nested sampling's sqrt(H / n_live),
    # Skilling, Bayesian Analysis 1, 833 (2006)); the two-point approximation's bias grows with ln BF: 20% allowed
    for fast, full in summary["calibration"]["pairs"]:
        assert abs(full - fast) < 0.5 + 0.2 * abs(fast), summary["calibration"]["pairs"]


def test_sign_columns_are_keyed_by_family_and_named_by_each_description():
    # the estimates in an order unlike the descriptions', a family with one sign only, and a family twice (the
    # last of a family's estimates is kept, as a reweighting of several sample sets leaves them)
    estimate = lambda family, numerator, value, error=None: EvidenceEstimate(
        method=family, ln_bf=value, ln_bf_err=error, numerator=numerator, family=family)
    estimates = [estimate(TWO_POINT.family, "flipped", -0.5), estimate(FIXED_POINT.family, "memory", 1.0),
                 estimate(TWO_POINT.family, "memory", 0.5), estimate(FIXED_POINT.family, "flipped", -1.0),
                 estimate(NESTED.family, "memory", 2.0, 0.1),
                 estimate(REWEIGHTING.family, "memory", 3.0, 0.2), estimate(REWEIGHTING.family, "flipped", -3.0, 0.3),
                 estimate(REWEIGHTING.family, "memory", 4.0, 0.4)]
    columns = sign_columns(estimates, DESCRIPTIONS)
    assert columns == {"ln_bf_plus_reweighting": 4.0, "ln_bf_plus_reweighting_err": 0.4,
                       "ln_bf_minus_reweighting": -3.0, "ln_bf_minus_reweighting_err": 0.3,
                       "ln_bf_plus_fixed": 1.0, "ln_bf_minus_fixed": -1.0,
                       "ln_bf_plus_fast": 0.5, "ln_bf_minus_fast": -0.5}
    # the descriptions' order, not the estimates': the record's columns come out in one order whatever ran first
    assert list(columns)[:4] == ["ln_bf_plus_reweighting", "ln_bf_plus_reweighting_err", "ln_bf_minus_reweighting",
                                 "ln_bf_minus_reweighting_err"]
    assert sign_columns(estimates, (TWO_POINT,)) == {"ln_bf_plus_fast": 0.5, "ln_bf_minus_fast": -0.5}


def brute_force_two_point(record, settings, realizations, seed):
    """The two-point ln BF+ on ``realizations`` full Gaussian-noise data sets (bilby's own noise generator) with the
    record's injection added, averaged: the brute-force reference for the campaign's exact expectation."""
    import bilby

    from memory_infer.campaign.injection import build_network
    from memory_infer.inference.likelihood import MemoryTransient
    from memory_infer.inference.methods.fast import fast_estimates
    from memory_infer.inputs.checks import SOURCE_PARAMETERS

    network = build_network(settings)
    generator, detectors = network.generator, network.detectors
    source = {k: record[k] for k in SOURCE_PARAMETERS}
    start = source["geocent_time"] - settings.data.duration + 2.0
    generator.start_time = start
    detectors.set_strain_data_from_zero_noise(settings.data.sampling_rate, settings.data.duration, start)
    detectors.inject_signal(waveform_generator=generator, parameters=dict(source, memory_amplitude=record["amplitude"]),
                            raise_error=False)
    signal = [d.frequency_domain_strain.copy() for d in detectors]
    bilby.core.utils.random.seed(seed)
    values = []
    for _ in range(realizations):
        for detector, injected in zip(detectors, signal):
            noise, _ = detector.power_spectral_density.get_noise_realisation(settings.data.sampling_rate,
                                                                               settings.data.duration)
            detector.set_strain_data_from_frequency_domain_strain(injected + noise,
                                                                  sampling_frequency=settings.data.sampling_rate,
                                                                  duration=settings.data.duration, start_time=start)
        estimates, _ = fast_estimates(MemoryTransient(detectors, generator), source)
        values.append(next(e.ln_bf for e in estimates if (e.family, e.numerator) == (TWO_POINT.family, "memory")))
    return np.asarray(values)


@pytest.mark.slow
def test_expected_ln_bf_matches_brute_force_over_noise(tmp_path):
    # brute force (common practice, no source): the campaign's exact expectation of the two-point ln BF+ over
    # noise equals its average over 2,000 full Gaussian-noise realizations (bilby's noise generator) within 5%
    # on a small loud third-generation population (summed over its events: Monte-Carlo error ~1%)
    from memory_infer.cli import main

    config = campaign_config(tmp_path, count=5, network="ce", noise="zero", detection_snr=8.0,
                             injections="loud_third_generation.csv")
    assert main(["campaign", config, "--outdir", str(tmp_path / "c"), "--quiet", "--workers", "1"]) == 0
    records = [r for r in stored(str(tmp_path / "c")).values() if r["detected"]]
    assert len(records) == 5
    from memory_infer.campaign.config import load_campaign_settings

    settings = load_campaign_settings(config)  # ce, 4 s at 1024 Hz from 20 Hz, IMRPhenomTHM
    expected, brute, variance = 0.0, 0.0, 0.0
    for record in records:
        values = brute_force_two_point(record, settings, 2000, 17 + record["index"])
        expected += record["ln_bf_plus_expected"]
        brute += values.mean()
        variance += values.var(ddof=1) / values.size
        assert abs(values.std() / record["ln_bf_plus_expected_spread"] - 1) < 0.1
    print(f"expected {expected:.5f}, brute force {brute:.5f} +- {np.sqrt(variance):.5f}")
    assert abs(expected / brute - 1) < 0.05, (expected, brute, np.sqrt(variance))
    assert abs(expected - brute) < 4 * np.sqrt(variance)
