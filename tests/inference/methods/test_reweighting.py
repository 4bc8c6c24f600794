import json
import os

import bilby
import numpy as np
import pytest

from memory_infer.inference.methods.fast import fast_estimates, sign_partner
from memory_infer.inference.methods.nested import run_nested
from memory_infer.inference.methods.reweighting import (amplitude_curve, mean_ratio as _mean_ratio, proposal_corrected,
                                                        ratio_of_means, reweighting_estimate, sign_from_curve)
from memory_infer import MemoryTransient, waveform_generator

from helpers import event_config


def test_mean_ratio_matches_direct_sums():
    # common practice, no source: importance-sampling mean, effective sample size (sum w)^2 / sum w^2
    rng = np.random.default_rng(1)
    log_w = rng.normal(0.0, 0.5, 5000) - 700.0  # far below float range: log-space must cope
    ln_mean, error, ess = _mean_ratio(log_w)
    w = np.exp(log_w + 700.0)
    assert ln_mean == pytest.approx(np.log(w.mean()) - 700.0, abs=1e-12)
    assert ess == pytest.approx(w.sum() ** 2 / np.sum(w ** 2), rel=1e-12)
    assert error == pytest.approx(w.std(ddof=1) / np.sqrt(w.size) / w.mean(), rel=1e-12)


def test_reweighting_both_directions_and_collapse_flag():
    grid = np.array([-1.0, 0.0, 1.0])
    rng = np.random.default_rng(2)
    table = np.column_stack([rng.normal(0, 0.1, 4000), np.zeros(4000), rng.normal(0.5, 0.1, 4000)])
    forward = reweighting_estimate(table, grid, 0.0, 1.0, 0.0)
    backward = reweighting_estimate(table, grid, 1.0, 1.0, 0.0)
    # with a Gaussian log weight of mean mu and spread s: ln E[w] = mu + s^2/2, -ln E[1/w] = mu - s^2/2
    assert forward.ln_bf == pytest.approx(0.5 + 0.005, abs=5 * forward.ln_bf_err)
    assert backward.ln_bf == pytest.approx(0.5 - 0.005, abs=5 * backward.ln_bf_err)
    assert forward.reliable and backward.reliable
    loud = np.column_stack([np.zeros(500), np.zeros(500), rng.normal(0, 8.0, 500)])
    collapsed = reweighting_estimate(loud, grid, 0.0, 1.0, 0.0, minimum_effective_samples=50)
    assert not collapsed.reliable and "do not overlap" in collapsed.note
    assert collapsed.effective_sample_size < 50


def test_error_is_undefined_below_two_effective_samples():
    # one weight carries the whole mean (effective sample size 1): the variance estimate says nothing, and the
    # ratio of two means dominated by the same sample gave an error of exactly 0 before
    log_w = np.array([0.0] + [-400.0] * 99)
    ln_mean, error, ess = _mean_ratio(log_w)
    assert ess == pytest.approx(1.0) and error is None
    assert ratio_of_means(log_w, log_w - 1.0)[1] is None
    grid = np.array([-1.0, 0.0, 1.0])
    table = np.column_stack([np.zeros(100), np.zeros(100), log_w])
    estimate = reweighting_estimate(table, grid, 0.0, 1.0, 0.0)
    assert estimate.ln_bf_err is None and "fewer than two effective samples" in estimate.note
    assert json.loads(json.dumps(estimate.to_dict()))["ln_bf_err"] is None  # null in evidence.json
    corrected, curve = proposal_corrected(table, np.zeros(100), grid, 50.0)
    assert corrected[0].ln_bf_err is None and curve.ln_mean_ratio_err[2] is None
    assert sign_from_curve(amplitude_curve(table, grid, 0.0), (-1, 1)).ln_bf_sign_err is None
    two = _mean_ratio(np.array([0.0, 0.0] + [-400.0] * 98))  # two equal weights: defined
    assert two[2] == pytest.approx(2.0) and two[1] is not None and two[1] > 0


def test_sign_from_curve_weights():
    grid = np.linspace(-4, 4, 81)
    # a Gaussian L(A)/L(0) centred at 1 with width 0.5: the mass above zero is Phi(2) (textbook)
    ln = -0.5 * ((grid - 1) / 0.5) ** 2 + 0.5 * (1 / 0.5) ** 2
    table = np.tile(ln, (10, 1))
    curve = amplitude_curve(table - table[:, [40]], grid, 0.0)
    sign = sign_from_curve(curve, (-4, 4))
    assert sign.ln_bf_plus == pytest.approx(2.0, abs=1e-9)
    assert sign.ln_bf_minus == pytest.approx(2.0 - 8.0, abs=1e-9)
    assert sign.mass_above_zero == pytest.approx(0.97725, abs=2e-3)
    assert sign.weight_plus == pytest.approx(1 / (1 + np.exp(-8.0)), abs=1e-12)  # BF+ / (BF+ + BF-)
    wide = sign_from_curve(curve, (-5, 5))  # the prior is limited to the grid, and the note says so
    assert wide.mass_above_zero == sign.mass_above_zero and "limited to the grid's span [-4, 4]" in wide.note


@pytest.mark.slow
def test_small_loud_problem_nested_and_reweighting_agree(tmp_path):
    from memory_infer.cli import main

    config = event_config(tmp_path, distance=1500.0, amplitude=1.0)
    assert main([ "evidence", config, "--outdir", str(tmp_path / "gr"), "--quiet"]) == 0
    record = json.loads((tmp_path / "gr" / "evidence.json").read_text())
    nested = next(m for m in record["methods"] if m["method"].startswith("nested") and m["numerator"] == "memory")
    reweighted = next(m for m in record["methods"] if m["method"].startswith("importance") and m["numerator"] == "memory")
    assert reweighted["reliable"]
    assert abs(nested["ln_bf"] - reweighted["ln_bf"]) < 3 * np.hypot(nested["ln_bf_err"], reweighted["ln_bf_err"])
    assert reweighted["ln_bf"] > 0 and nested["ln_bf"] > 0
    # zero noise and the phase free: close to rho^2/2 (PRD 46, 5236 (1992)), which is > 1 here
    assert record["memory_snr"]["value"] ** 2 / 2 > 1
    assert abs(reweighted["ln_bf"] - record["memory_snr"]["value"] ** 2 / 2) < 0.3
    assert os.path.exists(tmp_path / "gr" / "report.html")
    assert os.path.exists(tmp_path / "gr" / "runs" / "test-event_none_result.json")

    config = event_config(tmp_path, name="none.toml", distance=1500.0, amplitude=0.0, hypotheses='["none"]')
    assert main(["evidence", config, "--outdir", str(tmp_path / "none"), "--quiet"]) == 0
    record = json.loads((tmp_path / "none" / "evidence.json").read_text())
    reweighted = next(m for m in record["methods"] if m["method"].startswith("importance") and m["numerator"] == "memory")
    assert reweighted["ln_bf"] < 0
    assert record["sign"]["ln_bf_plus"] < 0 and record["sign"]["ln_bf_minus"] < 0


def test_duplicated_samples_count_once_and_failed_waveforms_are_left_out():
    # module docstring formulas: k copies of every sample give the same ln BF, error and effective sample size as
    # the distinct samples (a repeated draw carries no new information); failed waveforms (NaN) leave n
    rng = np.random.default_rng(5)
    log_w = rng.normal(0.0, 0.7, 400)
    distinct = _mean_ratio(log_w)
    tripled = _mean_ratio(np.repeat(log_w, 3), labels=np.repeat(np.arange(400), 3))
    assert np.allclose(tripled, distinct, rtol=1e-12)
    naive = _mean_ratio(np.repeat(log_w, 3))
    assert naive[2] == pytest.approx(3 * distinct[2]) and naive[1] == pytest.approx(distinct[1] / np.sqrt(3), rel=0.01)
    with_failures = _mean_ratio(np.concatenate([log_w, [np.nan] * 100]))
    assert np.allclose(with_failures, distinct, rtol=1e-12)


def test_grid_evaluates_each_distinct_sample_once_and_reports_failures():
    import pandas as pd

    from memory_infer.common.errors import WaveformError
    from memory_infer.inference.methods.reweighting import log_likelihood_grid, reweighting_estimate, sample_labels

    class Counting:
        priors, time_marginalization, waveform_generator, calls = {}, False, None, 0

        def log_likelihood_ratio_curve(self, point, amplitudes):
            self.calls += 1
            if point["x"] < 0:
                raise WaveformError("failed")
            return point["x"] * np.asarray(amplitudes)

    frame = pd.DataFrame({"x": [0.1, 0.2, 0.1, 0.3, -1.0, 0.2, 0.1]})
    likelihood = Counting()
    grid = np.array([-1.0, 0.0, 1.0])
    table = log_likelihood_grid(likelihood, frame, grid)
    assert likelihood.calls == 4 and np.isnan(table[4]).all()
    labels = sample_labels(frame)
    assert list(labels) == [0, 1, 0, 2, 3, 1, 0]
    estimate = reweighting_estimate(table, grid, 0.0, 1.0, 0.0, minimum_effective_samples=1, labels=labels)
    assert estimate.number_of_samples == 6 and "1 samples with a failed waveform left out" in estimate.note
    assert "(3 distinct)" in estimate.note
    assert estimate.ln_bf == pytest.approx(np.log(np.mean(np.exp([0.1, 0.2, 0.1, 0.3, 0.2, 0.1]))))


def _outside_run(config_path, tmp_path, reference_frequency, mode_list=None):
    """Posterior samples with A = 0 from 'someone else's' likelihood on the same data: our generator at another
    reference frequency or with other modes, run through bilby's run_sampler and saved by bilby as result JSON
    (log_likelihood column and meta_data included)."""
    import bilby

    from memory_infer.inference.hypotheses import hypothesis_priors
    from memory_infer.inference.likelihood import MemoryTransient
    from memory_infer.inference.setup import prepare
    from memory_infer.inputs.config import load_evidence_settings
    from memory_infer.waveform.generator import waveform_generator

    setup = prepare(load_evidence_settings(config_path))
    data = setup.settings.data
    arguments = dict(setup.settings.model.waveform_arguments(data), reference_frequency=reference_frequency)
    if mode_list:
        arguments["mode_list"] = mode_list
    generator = waveform_generator(data.duration, data.sampling_rate, data.start_time, arguments)
    priors = hypothesis_priors(setup.priors, "none")
    likelihood = MemoryTransient(setup.detectors, generator, priors=priors)
    label = f"outside_{reference_frequency:g}_{len(mode_list or [])}"
    result = bilby.run_sampler(likelihood, priors, sampler="dynesty", nlive=150, naccept=10, sample="acceptance-walk",
                               outdir=str(tmp_path / "outside"), label=label, seed=7, save="json", plot=False,
                               check_point_plot=False, resume=False, print_method="interval-600")
    return str(tmp_path / "outside" / f"{label}_result.json"), result


def _use_samples(config_path, samples, methods=None):
    text = open(config_path).read().replace('reweight_from = ["none"]', f'reweight_from = []\nsamples_file = "{samples}"')
    if methods:
        text = text.replace('methods = ["nested", "reweighting"]', f"methods = {methods}")
    path = config_path.replace(".toml", f"-{abs(hash(samples)) % 10 ** 6}.toml")
    open(path, "w").write(text)
    return path


@pytest.mark.slow
def test_proposal_correction_and_mismatch_on_outside_samples(tmp_path):
    # reference: nested sampling on our own model (ln Z(A=1) - ln Z(A=0)) on the same data. Samples drawn with
    # another model ((2, +-2) modes only), reweighted to ours with the proposal correction, agree within 3 combined
    # standard errors. Samples drawn at a 15 Hz reference frequency make the mismatch diagnostic fire (phase means
    # something else there; their posterior hardly overlaps ours at this SNR); with matching settings it is quiet
    # (our simulated data follow the run's own reference frequency, so "matching" means their run at 20 Hz)
    from memory_infer.inference.runner import run_event
    from memory_infer.inference.setup import prepare
    from memory_infer.inputs.config import load_evidence_settings

    priors = ('phase = { kind = "periodic", minimum = 0.0, maximum = 6.283185307179586 }\n'
              'psi = { kind = "periodic", minimum = 0.0, maximum = 3.141592653589793 }')
    base = event_config(tmp_path, name="ours.toml", detectors='["H1", "L1"]', noise_curve="ligo-design",
                        noise="gaussian", seed=11, distance=1500.0, priors=priors, live_points=60,
                        methods='["nested", "reweighting"]', hypotheses='["memory", "none"]')
    with open(base) as handle:  # the analyst's own reference frequency: set, so the samples' 15 Hz is not adopted
        text = handle.read().replace('approximant = "IMRPhenomTHM"', 'approximant = "IMRPhenomTHM"\nreference_frequency = 20.0')
    with open(base, "w") as handle:
        handle.write(text)
    quadrupole, outside = _outside_run(base, tmp_path, 20.0, [(2, 2), (2, -2)])
    assert "log_likelihood" in outside.posterior.columns
    result = run_event(prepare(load_evidence_settings(_use_samples(base, quadrupole))), str(tmp_path / "ours"),
                       progress=False).to_json()
    nested = next(m for m in result["methods"] if m["family"] == "nested" and m["numerator"] == "memory")
    corrected = next(m for m in result["methods"] if m["method"].startswith("importance reweighting with the proposal")
                     and m["numerator"] == "memory")
    print(f"proposal-corrected {corrected['ln_bf']:.4f} +- {corrected['ln_bf_err']:.4f} "
          f"(ESS {corrected['effective_sample_size']:.0f} of {corrected['number_of_samples']}), "
          f"nested {nested['ln_bf']:.3f} +- {nested['ln_bf_err']:.3f}, "
          f"mismatch {result['sample_checks']['file (none)']['mismatch']}")
    assert corrected["reliable"], corrected["note"]
    assert abs(corrected["ln_bf"] - nested["ln_bf"]) < 3 * np.hypot(corrected["ln_bf_err"], nested["ln_bf_err"])

    shifted, _ = _outside_run(base, tmp_path, 15.0)
    loud = run_event(prepare(load_evidence_settings(_use_samples(base, shifted, methods='["reweighting"]'))),
                     str(tmp_path / "shifted"), progress=False).to_json()
    check = loud["sample_checks"]["file (none)"]
    assert check["reference_frequency"] == {"samples": 15.0, "this_run": 20.0, "from": "file metadata",
                                            "differs": True}
    assert check["mismatch"]["exceeded"] and any("departs from their own" in w for w in loud["warnings"])
    matched, _ = _outside_run(base, tmp_path, 20.0)  # the same likelihood as ours
    quiet = run_event(prepare(load_evidence_settings(_use_samples(base, matched, methods='["reweighting"]'))),
                      str(tmp_path / "matched"), progress=False).to_json()
    check = quiet["sample_checks"]["file (none)"]
    print(f"15 Hz samples: {loud['sample_checks']['file (none)']['mismatch']}; matched: {check['mismatch']}")
    assert not check["mismatch"]["exceeded"] and check["mismatch"]["spread"] < 1e-6
    assert check["reference_frequency"]["differs"] is False
    assert not any("departs from their own" in w for w in quiet["warnings"])


def test_time_marginalized_grid_ignores_the_samples_own_times():
    # reference library: bilby's own time-marginalized log_likelihood_ratio at the parameters its sampler uses
    # (geocent_time held at the segment start); samples that carry their own times (reconstructed, or from another
    # run) must give the same marginalized curve whatever those times are
    import pandas as pd

    from memory_infer.inference.methods.reweighting import log_likelihood_grid

    start = 1e9
    source = dict(mass_1=45.0, mass_2=15.0, luminosity_distance=800.0, a_1=0.0, a_2=0.0, tilt_1=0.0, tilt_2=0.0,
                  phi_12=0.0, phi_jl=0.0, theta_jn=1.3, phase=0.7, ra=1.1, dec=0.3, psi=0.4, geocent_time=start + 2.0)
    generator = waveform_generator(4.0, 1024.0, start, dict(waveform_approximant="IMRPhenomTHM",
                                                            minimum_frequency=20.0, reference_frequency=20.0))
    detectors = bilby.gw.detector.InterferometerList(["CE"])
    detectors[0].minimum_frequency = 20.0
    detectors.set_strain_data_from_zero_noise(1024.0, 4.0, start)
    detectors.inject_signal(waveform_generator=generator, parameters=dict(source, memory_amplitude=1.0))
    priors = bilby.core.prior.PriorDict({"geocent_time": bilby.core.prior.Uniform(start + 1.9, start + 2.1)})
    priors["memory_amplitude"] = 0.0
    marginalized = MemoryTransient(detectors, generator, priors=priors, time_marginalization=True)
    times = source["geocent_time"] + np.array([0.0, 0.004, -0.02])
    frame = pd.DataFrame([dict(source, geocent_time=t) for t in times])
    grid = np.array([-1.0, 0.0, 1.0])
    table = log_likelihood_grid(marginalized, frame, grid)
    assert np.allclose(table, table[0], rtol=0, atol=1e-12)
    direct = [marginalized.log_likelihood_ratio(dict(source, geocent_time=start, time_jitter=0.0, memory_amplitude=a))
              for a in grid]
    assert np.allclose(table[0], direct, rtol=0, atol=1e-8)


@pytest.mark.slow
def test_time_marginalized_reweighting_equals_unmarginalized(tmp_path):
    # consistency (common practice, no source): reweighting the same posterior samples (phase and time free, each
    # sample with its own geocent_time) with and without time marginalization estimates the same Bayes factor;
    # agreement within 3 combined Monte-Carlo errors
    from memory_infer.inference.runner import run_event
    from memory_infer.inference.setup import prepare
    from memory_infer.inputs.config import load_evidence_settings

    priors = ('phase = { kind = "periodic", minimum = 0.0, maximum = 6.283185307179586 }\n'
              'geocent_time = { kind = "uniform", minimum = 1000000001.98, maximum = 1000000002.02 }')
    plain = event_config(tmp_path, name="plain.toml", noise="gaussian", seed=4, distance=4000.0, priors=priors,
                         live_points=60, methods='["nested", "reweighting"]', hypotheses='["none"]')
    first = run_event(prepare(load_evidence_settings(plain)), str(tmp_path / "plain"), progress=False).to_json()
    samples = str(tmp_path / "plain" / "runs" / "test-event_none_result.json")
    text = open(plain).read().replace('reweight_from = ["none"]', f'reweight_from = []\nsamples_file = "{samples}"\n'
                                      'samples_log_likelihood = ""')
    text = text.replace('methods = ["nested", "reweighting"]', 'methods = ["reweighting"]')
    text = text.replace("[likelihood]\n", "[likelihood]\ntime_marginalization = true\n")
    marginal = tmp_path / "marginal.toml"
    marginal.write_text(text)
    second = run_event(prepare(load_evidence_settings(str(marginal))), str(tmp_path / "marginal"),
                       progress=False).to_json()
    for numerator in ("memory", "flipped"):
        a = next(m for m in first["methods"] if m["family"] == "reweighting" and m["numerator"] == numerator)
        b = next(m for m in second["methods"] if m["family"] == "reweighting" and m["numerator"] == numerator)
        print(numerator, a["ln_bf"], a["ln_bf_err"], b["ln_bf"], b["ln_bf_err"])
        assert a["reliable"] and b["reliable"]
        assert abs(a["ln_bf"] - b["ln_bf"]) < 3 * np.hypot(a["ln_bf_err"], b["ln_bf_err"])


def test_a_waveform_the_generator_caught_is_left_out_too():
    """With catch_waveform_errors the generator returns no waveform (the curve is -inf) and counts the failure:
    the sample is NaN in the table, left out of n like a raised failure, and counted once."""
    import pandas as pd

    from memory_infer.inference.methods.reweighting import log_likelihood_grid, mean_ratio

    class Generator:
        failures = 0

    class Catching:
        priors, time_marginalization = {}, False

        def __init__(self):
            self.waveform_generator = Generator()

        def log_likelihood_ratio_curve(self, point, amplitudes):
            if point["x"] < 0:
                self.waveform_generator.failures += 1
                return np.full(len(amplitudes), -np.inf)
            return point["x"] * np.asarray(amplitudes)

    likelihood = Catching()
    table = log_likelihood_grid(likelihood, pd.DataFrame({"x": [0.1, -1.0, 0.3]}), np.array([0.0, 1.0]))
    assert np.isnan(table[1]).all() and np.isfinite(table[[0, 2]]).all()
    assert likelihood.waveform_generator.failures == 1
    ln_bf, _, _ = mean_ratio(table[:, 1] - table[:, 0])
    assert ln_bf == pytest.approx(np.log(np.mean(np.exp([0.1, 0.3]))), rel=1e-12)
