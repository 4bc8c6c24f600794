"""Bad input: one clear sentence, a non-zero exit, and nothing written (README, "Input formats")."""
import os

import numpy as np
import pandas as pd
import pytest

from memory_infer.cli import main

from helpers import FIXED_SKY_AND_TIME, event_config

RATE, DURATION, START = 1024.0, 4.0, 1e9


def write_strain(path, values=None, rate=RATE, duration=DURATION, start=START):
    n = int(rate * duration)
    times = start + np.arange(n) / rate
    values = np.random.default_rng(0).normal(0, 1e-22, n) if values is None else values
    np.savetxt(path, np.column_stack([times, values]))


def write_psd(path, values=None):
    f = np.linspace(1, 512, 600)
    values = np.full(f.size, 1e-46) if values is None else values
    np.savetxt(path, np.column_stack([f, values]))


def files_config(tmp_path, strain="H1.txt", psd="H1_psd.txt", extra=""):
    text = f"""
[event]
label = "files-event"
[data]
kind = "files"
duration = {DURATION}
sampling_rate = {RATE}
start_time = {START}
[data.files.H1]
strain = "{strain}"
psd = "{psd}"
[priors]
mass_1 = 36.0
mass_2 = 29.0
luminosity_distance = {{ kind = "uniform", minimum = 100.0, maximum = 2000.0 }}
{FIXED_SKY_AND_TIME}
[evidence]
methods = ["reweighting"]
{extra}
"""
    path = tmp_path / "files.toml"
    path.write_text(text)
    return str(path)


def run_and_capture(capsys, argv, outdir):
    code = main(argv)
    captured = capsys.readouterr()
    lines = [line for line in captured.err.strip().splitlines() if line.strip()]
    assert code != 0
    assert len(lines) == 1, captured.err
    assert "Traceback" not in captured.err
    assert not os.path.exists(outdir), "nothing may be written for bad input"
    return lines[0]


def evidence_case(tmp_path, capsys, config):
    outdir = str(tmp_path / "out")
    return run_and_capture(capsys, ["evidence", config, "--outdir", outdir], outdir)


def test_nan_strain(tmp_path, capsys):
    values = np.random.default_rng(0).normal(0, 1e-22, int(RATE * DURATION))
    values[100] = np.nan
    write_strain(tmp_path / "H1.txt", values)
    write_psd(tmp_path / "H1_psd.txt")
    message = evidence_case(tmp_path, capsys, files_config(tmp_path))
    assert message == "memory-infer evidence: strain file 'H1.txt' contains NaN or infinite values."


def test_non_positive_psd(tmp_path, capsys):
    write_strain(tmp_path / "H1.txt")
    values = np.full(600, 1e-46)
    values[10] = 0.0
    write_psd(tmp_path / "H1_psd.txt", values)
    message = evidence_case(tmp_path, capsys, files_config(tmp_path))
    assert message == "memory-infer evidence: PSD file 'H1_psd.txt' has non-positive values."


def test_wrong_sampling_rate(tmp_path, capsys):
    write_strain(tmp_path / "H1.txt", np.zeros(int(512 * DURATION)), rate=512.0)
    write_psd(tmp_path / "H1_psd.txt")
    message = evidence_case(tmp_path, capsys, files_config(tmp_path))
    assert message == ("memory-infer evidence: strain file 'H1.txt' is sampled at 512 Hz, below the analysis rate "
                       "1024 Hz.")


def test_wrong_duration(tmp_path, capsys):
    write_strain(tmp_path / "H1.txt", np.zeros(int(RATE * 2)), duration=2.0)
    write_psd(tmp_path / "H1_psd.txt")
    message = evidence_case(tmp_path, capsys, files_config(tmp_path))
    assert message == ("memory-infer evidence: strain file 'H1.txt' covers 1000000000.000 to 1000000002.000, not "
                       "the stretch 1000000000.000 to 1000000004.000.")


def test_missing_sample_columns(tmp_path, capsys):
    write_strain(tmp_path / "H1.txt")
    write_psd(tmp_path / "H1_psd.txt")
    pd.DataFrame({"phase": [0.1, 0.2]}).to_csv(tmp_path / "samples.csv", index=False)
    config = files_config(tmp_path, extra='samples_file = "samples.csv"')
    message = evidence_case(tmp_path, capsys, config)
    assert message == ("memory-infer evidence: posterior samples in 'samples.csv' lack the column "
                       "'luminosity_distance'.")


def test_missing_sample_columns_all_at_once(tmp_path, capsys):
    write_strain(tmp_path / "H1.txt")
    write_psd(tmp_path / "H1_psd.txt")
    pd.DataFrame({"phase": [0.1, 0.2]}).to_csv(tmp_path / "samples.csv", index=False)
    config = files_config(tmp_path, extra='samples_file = "samples.csv"')
    text = open(config).read().replace("mass_1 = 36.0\nmass_2 = 29.0", 'chirp_mass = { kind = "uniform", minimum = 25.0, '
                                       'maximum = 30.0 }\nmass_ratio = { kind = "uniform", minimum = 0.5, maximum = 1.0 }')
    open(config, "w").write(text)
    message = evidence_case(tmp_path, capsys, config)
    assert message == ("memory-infer evidence: posterior samples in 'samples.csv' lack the columns 'chirp_mass', "
                       "'mass_ratio', 'luminosity_distance'.")


def test_nan_samples(tmp_path, capsys):
    write_strain(tmp_path / "H1.txt")
    write_psd(tmp_path / "H1_psd.txt")
    pd.DataFrame({"luminosity_distance": [400.0, 410.0, np.nan, 420.0, np.nan]}).to_csv(tmp_path / "samples.csv",
                                                                                      index=False)
    message = evidence_case(tmp_path, capsys, files_config(tmp_path, extra='samples_file = "samples.csv"'))
    assert message == ("memory-infer evidence: posterior samples in 'samples.csv' hold NaN in column "
                       "'luminosity_distance' at row 3 (and 1 more row).")


def test_unphysical_samples(tmp_path, capsys):
    write_strain(tmp_path / "H1.txt")
    write_psd(tmp_path / "H1_psd.txt")
    pd.DataFrame({"luminosity_distance": [400.0, -3.0]}).to_csv(tmp_path / "samples.csv", index=False)
    message = evidence_case(tmp_path, capsys, files_config(tmp_path, extra='samples_file = "samples.csv"'))
    assert message == "memory-infer evidence: 'luminosity_distance' in posterior samples in 'samples.csv' must be positive."


def test_phase_marginalization_with_memory(tmp_path, capsys):
    config = event_config(tmp_path, likelihood="phase_marginalization = true")
    message = evidence_case(tmp_path, capsys, config)
    assert message == ("memory-infer evidence: analytic phase marginalization is not valid with memory and higher "
                       "modes (the memory does not change by an overall phase); sample the phase instead.")


def test_missing_configuration(tmp_path, capsys):
    message = evidence_case(tmp_path, capsys, str(tmp_path / "nope.toml"))
    assert message == f"memory-infer evidence: configuration file '{tmp_path / 'nope.toml'}' does not exist."


def test_invalid_toml(tmp_path, capsys):
    path = tmp_path / "broken.toml"
    path.write_text("[event\nlabel = 3")
    message = evidence_case(tmp_path, capsys, str(path))
    assert message.startswith(f"memory-infer evidence: configuration file '{path}' is not valid TOML (")


def test_unknown_key(tmp_path, capsys):
    config = event_config(tmp_path, likelihood="distance_marginalisation = true")
    message = evidence_case(tmp_path, capsys, config)
    assert message == ("memory-infer evidence: unknown key 'distance_marginalisation' in [likelihood] of event.toml "
                       "(did you mean 'distance_marginalization'?).")


def test_misspelled_required_key(tmp_path, capsys):
    config = event_config(tmp_path)
    text = open(config).read().replace('label = "test-event"', 'lable = "test-event"')
    open(config, "w").write(text)
    message = evidence_case(tmp_path, capsys, config)
    assert message == ("memory-infer evidence: key 'label' is missing from [event] of event.toml, and 'lable' there "
                       "is unknown (did you mean 'label'?).")


def test_misspelled_section(tmp_path, capsys):
    config = event_config(tmp_path)
    text = open(config).read().replace("[priors]", "[prior]")
    open(config, "w").write(text)
    message = evidence_case(tmp_path, capsys, config)
    assert message.startswith("memory-infer evidence: unknown section [prior] in event.toml (did you mean "
                              "'priors'?); known: event, data,")


def test_wrong_type(tmp_path, capsys):
    config = event_config(tmp_path, evidence_extra='minimum_effective_samples = "many"')
    message = evidence_case(tmp_path, capsys, config)
    assert message == "memory-infer evidence: key 'minimum_effective_samples' in [evidence] of event.toml must be a number."


def test_unknown_noise_curve(tmp_path, capsys):
    config = event_config(tmp_path, noise_curve="ligo-o9")
    message = evidence_case(tmp_path, capsys, config)
    assert message.startswith("memory-infer evidence: unknown noise curve 'ligo-o9' for CE; choose one of ligo-o4,")


def test_unknown_detector(tmp_path, capsys):
    config = event_config(tmp_path, detectors='["X9"]')
    message = evidence_case(tmp_path, capsys, config)
    assert message.startswith("memory-infer evidence: unknown detector 'X9'; use one of bilby's: A1, CE, ET,")


def test_surrogate_model_unavailable(tmp_path, capsys):
    config = event_config(tmp_path)
    text = open(config).read().replace('approximant = "IMRPhenomTHM"', 'approximant = "NRSur7dq4"')
    open(config, "w").write(text)
    message = evidence_case(tmp_path, capsys, config)
    assert message == ("memory-infer evidence: the injection cannot be generated: waveform model 'NRSur7dq4' needs "
                       "lalsimulation's downloadable data files (surrogate or ROM tables), which are not available "
                       "on this machine; use IMRPhenomTHM or IMRPhenomTPHM instead.")


def test_unphysical_injection(tmp_path, capsys):
    config = event_config(tmp_path, distance=-5.0)
    message = evidence_case(tmp_path, capsys, config)
    assert message == "memory-infer evidence: 'luminosity_distance' in the injection must be positive."


def test_unknown_prior_kind(tmp_path, capsys):
    config = event_config(tmp_path, priors='phase = { kind = "triangle", minimum = 0.0, maximum = 1.0 }')
    message = evidence_case(tmp_path, capsys, config)
    assert message.startswith("memory-infer evidence: prior kind 'triangle' for 'phase' is unknown;")


def test_psd_not_covering_band(tmp_path, capsys):
    write_strain(tmp_path / "H1.txt")
    f = np.linspace(100, 512, 300)
    np.savetxt(tmp_path / "H1_psd.txt", np.column_stack([f, np.full(f.size, 1e-46)]))
    message = evidence_case(tmp_path, capsys, files_config(tmp_path))
    assert message == "memory-infer evidence: the PSD for H1 does not cover the analysis band 20-512 Hz."


@pytest.mark.parametrize("arguments, expected", [
    (["--distance", "-1"], "memory-infer waveform: the distance must be positive."),
    (["--inclination", "4"], "memory-infer waveform: the inclination must lie between 0 and pi."),
    (["--model", "NoSuchModel"], "memory-infer waveform: unknown waveform model 'NoSuchModel'; try IMRPhenomTHM, "
                                 "IMRPhenomTPHM, SEOBNRv4PHM or TaylorT4."),
])
def test_waveform_bad_input(tmp_path, capsys, arguments, expected):
    outdir = str(tmp_path / "wave")
    assert run_and_capture(capsys, ["waveform", *arguments, "--outdir", outdir], outdir) == expected


def test_files_and_outside_samples_run_end_to_end(tmp_path, capsys):
    """Strain and PSD from files plus posterior samples from elsewhere: reweighting runs and reports."""
    import json

    import bilby

    from memory_infer.waveform.generator import waveform_generator

    generator = waveform_generator(DURATION, RATE, START, dict(waveform_approximant="IMRPhenomTHM",
                                                              minimum_frequency=20.0, reference_frequency=20.0))
    detectors = bilby.gw.detector.InterferometerList(["H1"])
    detectors.set_strain_data_from_zero_noise(RATE, DURATION, START)
    truth = dict(mass_1=36.0, mass_2=29.0, luminosity_distance=400.0, a_1=0.0, a_2=0.0, tilt_1=0.0, tilt_2=0.0,
                 phi_12=0.0, phi_jl=0.0, theta_jn=1.0, phase=0.5, ra=1.0, dec=0.2, psi=0.3,
                 geocent_time=START + 2.0, memory_amplitude=1.0)
    detectors.inject_signal(waveform_generator=generator, parameters=truth)
    write_strain(tmp_path / "H1.txt", detectors[0].strain_data.time_domain_strain)
    psd = detectors[0].power_spectral_density
    f = np.linspace(15, 512, 2000)
    np.savetxt(tmp_path / "H1_psd.txt", np.column_stack([f, psd.power_spectral_density_interpolated(f)]))
    pd.DataFrame({"luminosity_distance": np.random.default_rng(3).normal(400, 20, 300)}).to_csv(
        tmp_path / "samples.csv", index=False)
    config = files_config(tmp_path, extra='samples_file = "samples.csv"\nmethods = ["reweighting", "fast"]')
    config_text = open(config).read().replace('methods = ["reweighting"]\n', "")
    open(config, "w").write(config_text)
    assert main(["evidence", config, "--outdir", str(tmp_path / "out"), "--quiet"]) == 0
    record = json.loads((tmp_path / "out" / "evidence.json").read_text())
    reweighted = [m for m in record["methods"] if m["method"].startswith("importance")]
    assert reweighted and all(m["effective_sample_size"] > 50 for m in reweighted)
    assert record["memory_snr"]["value"] > 0
    assert (tmp_path / "out" / "report.html").exists()


def test_noise_curve_for_a_detector_not_analysed(tmp_path, capsys):
    config = event_config(tmp_path, detectors='["H1", "L1"]', noise_curve="ligo-design")
    text = open(config).read().replace('noise_curve = "ligo-design"', 'noise_curve = "ligo-design"\n'
                                                                       'noise_curves = { XX = "ce" }')
    open(config, "w").write(text)
    message = evidence_case(tmp_path, capsys, config)
    assert message == ("memory-infer evidence: noise_curves in [data] names 'XX', which is not a detector of this "
                       "analysis (H1, L1).")


@pytest.mark.slow
def test_ctrl_c_in_the_sampler_is_one_line_and_keeps_a_checkpoint(tmp_path):
    """SIGINT (Ctrl-C) while dynesty samples: exit status 130, one line on standard error, no traceback, the run's
    checkpoint kept so that the same command resumes it, and no result written."""
    import signal
    import subprocess
    import sys
    import time

    config = event_config(tmp_path, live_points=300, hypotheses='["memory", "none"]', checkpoint_seconds=2.0)
    environment = dict(os.environ, PYTHONPATH=os.pathsep.join([os.getcwd(), os.environ.get("PYTHONPATH", "")]))
    process = subprocess.Popen([sys.executable, "-m", "memory_infer.cli", "evidence", config, "--outdir",
                                str(tmp_path / "out"), "--quiet"], stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                               text=True, env=environment,
                               preexec_fn=lambda: signal.signal(signal.SIGINT, signal.SIG_DFL))  # as a shell does
    assert "nested sampling" in process.stdout.readline()  # the first run is being set up
    checkpoint = tmp_path / "out" / "runs" / "test-event_memory_resume.pickle"
    deadline = time.time() + 90
    while time.time() < deadline and not checkpoint.exists():  # dynesty is sampling: its first checkpoint is out
        time.sleep(0.2)
    time.sleep(1.0)
    process.send_signal(signal.SIGINT)
    output, error = process.communicate(timeout=120)
    assert process.returncode == 130
    lines = [line for line in error.splitlines() if line.strip()]
    assert len(lines) == 1 and lines[0].startswith("memory-infer: interrupted during nested run 'test-event_memory';"), error
    assert "Traceback" not in error + output and "Exception while calling" not in output
    assert checkpoint.exists() and not os.path.exists(tmp_path / "out" / "evidence.json")


def test_light_binary_with_a_black_hole_model_gets_a_caution(tmp_path, capsys):
    """1.4 + 1.4 solar masses (a typical neutron-star binary) analysed with IMRPhenomTHM: a caution printed and
    recorded in the result's warnings; a binary-black-hole pair gets none."""
    import json

    config = event_config(tmp_path, methods='["fast"]', distance=40.0)
    text = open(config).read().replace("mass_1 = 36.0\nmass_2 = 29.0", "mass_1 = 1.4\nmass_2 = 1.4")
    text = text.replace('approximant = "IMRPhenomTHM"', 'approximant = "IMRPhenomTHM"\nminimum_frequency = 60.0')
    open(config, "w").write(text)
    assert main(["evidence", config, "--outdir", str(tmp_path / "out"), "--quiet"]) == 0
    printed = capsys.readouterr().out
    expected = ("both masses of the injected binary lie below 3 solar masses (1.4 + 1.4), so it may hold neutron "
                "stars, but IMRPhenomTHM is a binary-black-hole model without tides or tidal disruption")
    assert f"caution: {expected}" in printed and f"warning: {expected}" in printed
    warnings = json.loads((tmp_path / "out" / "evidence.json").read_text())["warnings"]
    assert any(w.startswith(expected) for w in warnings)
    from memory_infer.inputs.checks import light_binary_caution

    assert light_binary_caution(36.0, 29.0, "IMRPhenomTHM", "x") is None
    assert light_binary_caution(3.5, 1.4, "IMRPhenomTHM", "x") is None  # a light black hole and a neutron star


def test_the_shipped_example_configurations_are_valid_and_differ_only_in_size():
    # configs/example_event.toml is the quick one; configs/example_event_full.toml the four-hypothesis run
    import os

    from memory_infer.inputs.config import load_evidence_settings

    root = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
    quick = load_evidence_settings(os.path.join(root, "configs", "example_event.toml"))
    full = load_evidence_settings(os.path.join(root, "configs", "example_event_full.toml"))
    assert quick.evidence.nested_hypotheses == ("memory", "none")
    assert full.evidence.nested_hypotheses == ("memory", "none", "flipped", "free")
    assert quick.injection == full.injection and quick.priors == full.priors
    assert quick.sampler.live_points < full.sampler.live_points


@pytest.mark.parametrize("priors, message", [
    ('luminosity_distance = { kind = "uniform", minimum = -100.0, maximum = 2000.0 }',
     "the prior for 'luminosity_distance' reaches -100, but 'luminosity_distance' must be positive; give a prior "
     "inside the physical range"),
    ('a_1 = { kind = "uniform", minimum = 0.0, maximum = 1.5 }',
     "the prior for 'a_1' reaches 1.5, but 'a_1' must lie between 0 and 1; give a prior inside the physical range"),
    ('theta_jn = { kind = "sine", minimum = 0.0, maximum = 4.0 }',
     "the prior for 'theta_jn' reaches 4, but 'theta_jn' must lie between 0 and pi; give a prior inside the "
     "physical range"),
    ("luminosity_distance = -3.0", "'luminosity_distance' in [priors] must be positive"),
])
def test_unphysical_prior_is_refused_before_anything_is_written(tmp_path, capsys, priors, message):
    config = event_config(tmp_path, priors=priors)
    assert evidence_case(tmp_path, capsys, config) == f"memory-infer evidence: {message}."
    assert not (tmp_path / "out").exists()
