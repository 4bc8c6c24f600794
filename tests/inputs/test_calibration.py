"""Calibration uncertainty: bilby's cubic-spline model per detector, its priors, and the calibrated likelihood
against bilby's own."""
import json

import numpy as np
import pytest

from helpers import event_config

CONSTANT = "\n[calibration]\nkind = \"constant\"\namplitude_sigma = 0.05\nphase_sigma = 0.05\n"


def _setup(tmp_path, extra="", likelihood="", name="event.toml", priors=None):
    from memory_infer.inference.setup import prepare
    from memory_infer.inputs.config import load_evidence_settings

    keywords = {"priors": priors} if priors else {}
    path = event_config(tmp_path, name=name, detectors='["H1", "L1"]', noise_curve="ligo-design", noise="gaussian",
                        distance=800.0, likelihood=likelihood, evidence_extra=extra, **keywords)
    return prepare(load_evidence_settings(path))


def _with_calibration_draw(setup, seed=2):
    from memory_infer.inputs.calibration import draw_calibration

    point = dict(setup.injection, memory_amplitude=0.0)
    point.update({k: float(v[0]) for k, v in draw_calibration(setup.priors, 1, seed).items()})
    return point


def test_spline_factor_at_the_nodes_is_the_published_form():
    """At each node the factor is (1 + dA_k)(2 + i dphi_k)/(2 - i dphi_k): the spline passes through the nodes
    (reference: bilby's CubicSpline, after the calibration note LIGO-T1400682)."""
    from memory_infer.inputs.calibration import NominalDefaultSpline

    spline = NominalDefaultSpline("recalib_H1_", 20.0, 500.0, 6, {f"{k}_{i}": 0.0 for k in ("amplitude", "phase")
                                                                   for i in range(6)})
    rng = np.random.default_rng(3)
    amplitude, phase = rng.normal(0, 0.05, 6), rng.normal(0, 0.05, 6)
    values = {f"recalib_H1_amplitude_{i}": amplitude[i] for i in range(6)}
    values.update({f"recalib_H1_phase_{i}": phase[i] for i in range(6)})
    nodes = np.logspace(np.log10(20.0), np.log10(500.0), 6)
    factor = spline.get_calibration_factor(nodes, **values)
    np.testing.assert_allclose(factor, (1 + amplitude) * (2 + 1j * phase) / (2 - 1j * phase), rtol=1e-12, atol=1e-12)


def test_a_point_without_calibration_values_gets_the_nominal_one():
    """bilby's own model keeps the previous call's node values; ours resets to the prior means."""
    from bilby.gw.detector.calibration import CubicSpline

    from memory_infer.inputs.calibration import NominalDefaultSpline

    nominal = {f"{k}_{i}": 0.0 for k in ("amplitude", "phase") for i in range(4)}
    ours, theirs = NominalDefaultSpline("recalib_L1_", 20.0, 400.0, 4, nominal), CubicSpline("recalib_L1_", 20.0, 400.0, 4)
    frequencies = np.linspace(20, 400, 50)
    shifted = {f"recalib_L1_{k}": 0.1 for k in nominal}
    for model in (ours, theirs):
        model.get_calibration_factor(frequencies, **shifted)
    np.testing.assert_array_equal(ours.get_calibration_factor(frequencies, mass_1=30.0), np.ones(50))
    assert np.max(np.abs(theirs.get_calibration_factor(frequencies, mass_1=30.0) - 1)) > 0.05


def test_calibrated_likelihood_equals_bilbys_own(tmp_path):
    """ln L at A = 0 with drawn calibration parameters equals bilby's GravitationalWaveTransient on the same
    detectors (with our spline model) and the same waveform, to 1e-8; with and without time marginalization
    (reference library: bilby)."""
    import bilby

    for likelihood, name in (("", "plain.toml"), ("time_marginalization = true", "time.toml")):
        priors = ('phase = { kind = "periodic", minimum = 0.0, maximum = 6.283185307179586 }\n'
                  'geocent_time = { kind = "uniform", minimum = 1000000001.9, maximum = 1000000002.1 }')
        setup = _setup(tmp_path, CONSTANT, likelihood, name=name, priors=priors)
        from memory_infer.inference.hypotheses import hypothesis_priors

        ours, _ = setup.likelihood("none")
        point = _with_calibration_draw(setup)
        reference = bilby.gw.GravitationalWaveTransient(setup.detectors, setup.generator,
                                                        priors=hypothesis_priors(setup.priors, "none"),
                                                        time_marginalization=bool(likelihood))
        if likelihood:
            point["geocent_time"] = setup.detectors.start_time
            point["time_jitter"] = 0.0
        expected = reference.log_likelihood_ratio(dict(point))
        value = ours.log_likelihood_ratio_curve(point, [0.0])[0]
        assert abs(value - expected) < 1e-8
        nominal = dict(setup.injection, memory_amplitude=0.0, geocent_time=point["geocent_time"], time_jitter=0.0)
        assert abs(ours.log_likelihood_ratio_curve(nominal, [0.0])[0] - value) > 1e-3  # calibration matters


def test_zero_uncertainty_fixes_the_nodes_and_changes_nothing(tmp_path):
    """Zero sigma: every node fixed at 0, the factor exactly 1, ln L(A) equal to the run without calibration."""
    plain = _setup(tmp_path, name="plain.toml")
    zero = _setup(tmp_path, "\n[calibration]\nkind = \"constant\"\n", name="zero.toml")
    assert not [k for k in zero.priors if k.startswith("recalib_")]  # nothing extra for the sampler to draw
    assert zero.detectors[0].calibration_model.nominal == {f"{k}_{i}": 0.0 for k in ("amplitude", "phase")
                                                          for i in range(10)}
    point = dict(zero.injection)
    first = plain.likelihood("none")[0].log_likelihood_ratio_curve(point, [-1.0, 0.0, 1.0])
    second = zero.likelihood("none")[0].log_likelihood_ratio_curve(point, [-1.0, 0.0, 1.0])
    np.testing.assert_array_equal(first, second)


def test_envelope_file_priors_are_bilbys(tmp_path):
    """An envelope file (frequency, median amplitude and phase, -1 sigma, +1 sigma) gives node priors equal to
    bilby's CalibrationPriorDict.from_envelope_file (reference library: bilby)."""
    import bilby

    frequencies = np.logspace(np.log10(10), np.log10(2000), 40)
    amplitude = 1 + 0.01 * np.sin(np.log(frequencies))
    phase = 0.02 * np.cos(np.log(frequencies))
    table = np.column_stack([frequencies, amplitude, phase, amplitude - 0.04, phase - 0.03, amplitude + 0.04,
                             phase + 0.03])
    for detector in ("H1", "L1"):
        np.savetxt(tmp_path / f"{detector}_envelope.txt", table)
    extra = ("\n[calibration]\nkind = \"envelope\"\nspline_nodes = 6\n"
             "envelope_files = { H1 = \"H1_envelope.txt\", L1 = \"L1_envelope.txt\" }\n")
    setup = _setup(tmp_path, extra)
    expected = bilby.gw.prior.CalibrationPriorDict.from_envelope_file(
        str(tmp_path / "H1_envelope.txt"), 20.0, 512.0, 6, "H1", correction_type="data")
    for name, prior in expected.items():
        if prior.is_fixed:  # the node frequencies: held by the model
            assert name not in setup.priors
            continue
        ours = setup.priors[name]
        assert (ours.mu, ours.sigma) == pytest.approx((prior.mu, prior.sigma), rel=1e-12)
    model = setup.detectors[0].calibration_model
    assert model.nominal["amplitude_0"] == pytest.approx(expected["recalib_H1_amplitude_0"].mu, rel=1e-12)


@pytest.mark.parametrize("extra, expected", [
    ("kind = \"spline\"", "must be 'none', 'constant' or 'envelope'"),
    ("kind = \"constant\"\namplitude_sigma = -0.1", "must not be negative"),
    ("kind = \"constant\"\nspline_nodes = 3", "at least 4"),
    ("kind = \"envelope\"", "needs envelope_files"),
    ("kind = \"envelope\"\nenvelope_files = { H1 = \"missing.txt\" }", "does not exist"),
    ("kind = \"constant\"\ncorrection_type = \"both\"", "'data' or 'template'"),
])
def test_bad_calibration_settings_get_one_sentence(tmp_path, capsys, extra, expected):
    from memory_infer.cli import main

    path = event_config(tmp_path, detectors='["H1"]', noise_curve="ligo-design", evidence_extra=f"\n[calibration]\n{extra}\n")
    assert main(["evidence", path, "--outdir", str(tmp_path / "out"), "--quiet"]) != 0
    error = capsys.readouterr().err
    assert expected in error and "Traceback" not in error


def test_envelope_not_covering_the_spline_gets_one_sentence(tmp_path, capsys):
    from memory_infer.cli import main

    np.savetxt(tmp_path / "short.txt", np.column_stack([np.linspace(30, 300, 10)] + [np.ones(10)] * 6))
    path = event_config(tmp_path, detectors='["H1"]', noise_curve="ligo-design",
                        evidence_extra='\n[calibration]\nkind = "envelope"\nenvelope_files = { H1 = "short.txt" }\n')
    assert main(["evidence", path, "--outdir", str(tmp_path / "out"), "--quiet"]) != 0
    assert "covers 30-300 Hz" in capsys.readouterr().err


def _numbers(path):
    result = json.loads(path.read_text())
    return {"methods": [(m["method"], m["ln_bf"], m["ln_bf_err"]) for m in result["methods"]],
            "curve": result["amplitude_curve"]["ln_mean_ratio"], "headline": result["headline"]["ln_bf"]}


def test_zero_uncertainty_reproduces_every_number(tmp_path):
    """The whole evidence run (nested sampling, reweighting, two-point) with calibration of zero uncertainty gives
    the same numbers as without calibration, to 1e-10."""
    from memory_infer.cli import main

    common = dict(noise="gaussian", seed=4, hypotheses='["none"]', live_points=30,
                  methods='["nested", "reweighting", "fast"]')
    plain = event_config(tmp_path, name="plain.toml", evidence_extra="minimum_effective_samples = 10", **common)
    zero = event_config(tmp_path, name="zero.toml", evidence_extra="minimum_effective_samples = 10\n"
                        "\n[calibration]\nkind = \"constant\"\nspline_nodes = 5\n", **common)
    for path, out in ((plain, "plain"), (zero, "zero")):
        assert main(["evidence", path, "--outdir", str(tmp_path / out), "--quiet"]) == 0
    first, second = _numbers(tmp_path / "plain" / "evidence.json"), _numbers(tmp_path / "zero" / "evidence.json")
    assert [m[0] for m in first["methods"]] == [m[0] for m in second["methods"]]
    for (_, a, a_err), (_, b, b_err) in zip(first["methods"], second["methods"]):
        assert abs(a - b) < 1e-10 and (a_err == b_err or abs(a_err - b_err) < 1e-10)
    np.testing.assert_allclose(first["curve"], second["curve"], rtol=0, atol=1e-10)
    assert abs(first["headline"] - second["headline"]) < 1e-10


@pytest.mark.slow
def test_calibration_in_nested_sampling_and_reweighting(tmp_path):
    """Nested sampling samples the spline nodes; reweighting of its posterior uses their values; samples without
    calibration columns get a draw per sample from the prior and the proposal correction, and say so. Nested and
    reweighting agree within 3 combined standard errors (a consistency check: both are ours)."""
    import pandas as pd

    from memory_infer.cli import main

    extra = ("minimum_effective_samples = 10\n\n[calibration]\nkind = \"constant\"\namplitude_sigma = 0.05\n"
             "spline_nodes = 4\n")
    path = event_config(tmp_path, detectors='["H1"]', noise_curve="ligo-design", noise="gaussian", seed=6,
                        distance=600.0, live_points=40, hypotheses='["memory", "none"]',
                        methods='["nested", "reweighting"]', evidence_extra=extra)
    assert main(["evidence", path, "--outdir", str(tmp_path / "out"), "--quiet"]) == 0
    result = json.loads((tmp_path / "out" / "evidence.json").read_text())
    posterior = pd.DataFrame(json.loads((tmp_path / "out" / "runs" / "test-event_none_result.json").read_text())
                             ["posterior"]["content"])
    nodes = [f"recalib_H1_amplitude_{k}" for k in range(4)]
    assert set(nodes) <= set(posterior.columns) and posterior[nodes].to_numpy().std() > 0.01
    assert len(result["settings"]["calibration"]["detectors"]) == 1
    nested = next(m for m in result["methods"] if m["family"] == "nested" and m["numerator"] == "memory")
    reweighted = next(m for m in result["methods"] if m["family"] == "reweighting" and m["numerator"] == "memory")
    assert "calibration drawn" not in reweighted["method"]
    assert abs(nested["ln_bf"] - reweighted["ln_bf"]) < 3 * np.hypot(nested["ln_bf_err"], reweighted["ln_bf_err"])

    posterior.drop(columns=[c for c in posterior.columns if c.startswith("recalib_")]).to_csv(
        tmp_path / "uncalibrated.csv", index=False)
    text = open(path).read().replace('reweight_from = ["none"]', 'reweight_from = []\nsamples_file = "uncalibrated.csv"')
    text = text.replace('methods = ["nested", "reweighting"]', 'methods = ["reweighting"]')
    drawn = tmp_path / "drawn.toml"
    drawn.write_text(text)
    assert main(["evidence", str(drawn), "--outdir", str(tmp_path / "drawn"), "--quiet"]) == 0
    result = json.loads((tmp_path / "drawn" / "evidence.json").read_text())
    estimate = next(m for m in result["methods"] if m["numerator"] == "memory")
    assert estimate["method"].startswith("importance reweighting, calibration drawn per sample from its prior")
    assert "the samples' own likelihood" in estimate["method"]
    assert "drawn per sample" in result["sample_checks"]["file (none)"]["calibration"]
    assert np.isfinite(estimate["ln_bf"]) and estimate["effective_sample_size"] > 10
    print(f"nested {nested['ln_bf']:.3f} +- {nested['ln_bf_err']:.3f}; reweighted {reweighted['ln_bf']:.4f} +- "
          f"{reweighted['ln_bf_err']:.4f}; calibration drawn {estimate['ln_bf']:.4f} +- {estimate['ln_bf_err']:.4f} "
          f"(ESS {estimate['effective_sample_size']:.0f} of {estimate['number_of_samples']})")


def test_envelope_under_a_detector_name_reaches_each_interferometer(tmp_path):
    """``envelope_files = { ET = ... }`` gives ET1, ET2 and ET3 (bilby's ET) the same envelope, each its own nodes;
    an envelope for a detector not analysed is refused."""
    from memory_infer.common.errors import MemoryInferError
    from memory_infer.inference.setup import prepare
    from memory_infer.inputs.config import load_evidence_settings

    frequencies = np.logspace(np.log10(10), np.log10(2000), 40)
    table = np.column_stack([frequencies, np.ones(40), np.zeros(40), np.full(40, 0.95), np.full(40, -0.03),
                             np.full(40, 1.05), np.full(40, 0.03)])
    np.savetxt(tmp_path / "ET_envelope.txt", table)
    extra = '\n[calibration]\nkind = "envelope"\nspline_nodes = 5\nenvelope_files = { ET = "ET_envelope.txt" }\n'
    path = event_config(tmp_path, detectors='["ET"]', noise_curve="et-d", evidence_extra=extra)
    setup = prepare(load_evidence_settings(path))
    assert [d.calibration_model.prefix for d in setup.detectors] == ["recalib_ET1_", "recalib_ET2_", "recalib_ET3_"]
    assert all(f"recalib_ET{k}_amplitude_0" in setup.priors for k in (1, 2, 3))
    wrong = event_config(tmp_path, name="wrong.toml", detectors='["ET"]', noise_curve="et-d",
                         evidence_extra=extra.replace("{ ET =", "{ H1 ="))
    with pytest.raises(MemoryInferError, match=r"envelope_files in \[calibration\] names 'H1', which is not a "
                                               r"detector of this analysis \(ET\)"):
        load_evidence_settings(wrong)
