"""A catalog release drawn with a time-domain model (IMRPhenomTHM; SEOBNRv5PHM through pyseobnr), reweighted at full
strength.

The release is made here with the trade's own tools: Gaussian noise and an IMRPhenomTHM injection by bilby, the
strain in the open-data layout, samples around the truth with their ``log_likelihood`` from bilby's own
``GravitationalWaveTransient`` (``lal_binary_black_hole``, which takes a time-domain model through lalsimulation's
``SimInspiralFD`` conditioning) on the strain as bilby windows it, and pesummary's own writer. Reference: the
release's own log-likelihood column (bilby), spread below 0.1 nats and every sample kept.
"""
import json
import os

import bilby
import numpy as np
import pandas as pd
import pytest

from memory_infer.cli import main
from memory_infer.waveform.models import pyseobnr_modes

START, DURATION, RATE = 1_000_000_000.0, 4.0, 1024.0
TRUTH = dict(mass_1=36.0, mass_2=29.0, luminosity_distance=900.0, a_1=0.2, a_2=0.1, tilt_1=0.0, tilt_2=0.0,
             phi_12=0.0, phi_jl=0.0, theta_jn=0.6, phase=1.2, ra=1.0, dec=0.2, psi=0.3, geocent_time=START + 2.0)
SOURCES = {"IMRPhenomTHM": bilby.gw.source.lal_binary_black_hole,  # bilby's own model for each approximant
           "SEOBNRv5PHM": bilby.gw.source.gwsignal_binary_black_hole}
CONFIG = """
[event]
label = "release-thm"
[data]
kind = "files"
duration = 4.0
sampling_rate = {rate}
start_time = 1000000000.0
[data.files.H1]
strain = "H1.hdf5"
psd_from_samples = true
[data.files.L1]
strain = "L1.hdf5"
psd_from_samples = true
[evidence]
methods = ["reweighting"]
samples_file = "release.h5"
"""
RUN_CONFIG = """[config]
trigger-time = 1000000002.0
duration = 4
sampling-frequency = {rate:g}
minimum-frequency = {{ 'H1': 20, 'L1': 20 }}
reference-frequency = 20
waveform-approximant = {model}
detectors = ['H1', 'L1']
"""


def write_release(folder, model="IMRPhenomTHM", count=120, rate=RATE):
    """Strain files and a pesummary release whose log-likelihood column is bilby's own."""
    from pesummary.gw.file.formats.pesummary import write_pesummary

    from memory_infer.inputs.open_data import write_open_data

    generator = bilby.gw.WaveformGenerator(
        duration=DURATION, sampling_frequency=rate, start_time=START,
        frequency_domain_source_model=SOURCES[model],
        parameter_conversion=bilby.gw.conversion.convert_to_lal_binary_black_hole_parameters,
        waveform_arguments=dict(waveform_approximant=model, reference_frequency=20.0, minimum_frequency=20.0))
    injected = bilby.gw.detector.InterferometerList(["H1", "L1"])
    bilby.core.utils.random.seed(11)
    injected.set_strain_data_from_power_spectral_densities(rate, DURATION, START)
    injected.inject_signal(waveform_generator=generator, parameters=TRUTH)
    detectors = bilby.gw.detector.InterferometerList(["H1", "L1"])
    psds = {}
    for source, detector in zip(injected, detectors):
        strain = bilby.core.utils.infft(source.strain_data.frequency_domain_strain, rate)  # the strain a user has
        write_open_data(os.path.join(folder, f"{detector.name}.hdf5"), strain, rate, START, detector.name)
        detector.minimum_frequency = 20.0
        detector.power_spectral_density = source.power_spectral_density
        detector.strain_data.set_from_time_domain_strain(strain, sampling_frequency=rate, duration=DURATION,
                                                         start_time=START)  # bilby's 0.2 s Tukey roll-off
        psds[detector.name] = np.column_stack([detector.power_spectral_density.frequency_array,
                                               detector.power_spectral_density.psd_array])
    likelihood = bilby.gw.GravitationalWaveTransient(detectors, generator)
    rng = np.random.default_rng(3)
    rows = []
    for _ in range(count):
        point = dict(TRUTH, mass_1=TRUTH["mass_1"] * rng.normal(1, 0.01), mass_2=TRUTH["mass_2"] * rng.normal(1, 0.01),
                     luminosity_distance=TRUTH["luminosity_distance"] * rng.normal(1, 0.1),
                     phase=TRUTH["phase"] + rng.normal(0, 0.2), geocent_time=TRUTH["geocent_time"] + rng.normal(0, 5e-4))
        point["log_likelihood"] = likelihood.log_likelihood_ratio(point) + likelihood.noise_log_likelihood()
        rows.append(point)
    posterior = pd.DataFrame(rows)
    ini = os.path.join(folder, "config.ini")
    with open(ini, "w") as handle:
        handle.write(RUN_CONFIG.format(model=model, rate=rate))
    label = f"C01:{model}"
    write_pesummary(list(posterior.columns), posterior.to_numpy(float), outdir=str(folder), label=label,
                    config=[ini], psd={label: psds}, approximant={label: model}, hdf5=True, filename="release.h5",
                    file_kwargs={label: {"sampler": {}, "meta_data": {"f_ref": 20.0, "approximant": model}}})
    os.remove(ini)


@pytest.mark.slow
@pytest.mark.parametrize("model, count, rate", [("IMRPhenomTHM", 120, 1024.0), ("SEOBNRv5PHM", 60, 2048.0)])
def test_time_domain_release_reweighted_with_its_own_likelihood(tmp_path, model, count, rate):
    if model == "SEOBNRv5PHM" and not pyseobnr_modes.available() and not os.environ.get("MEMORY_INFER_REQUIRE_PYSEOBNR"):
        pytest.skip("pyseobnr (the optional seobnr extra) is not installed")
    write_release(tmp_path, model, count, rate)
    (tmp_path / "event.toml").write_text(CONFIG.format(rate=rate))  # no model and no priors: the release's own
    assert main(["evidence", str(tmp_path / "event.toml"), "--outdir", str(tmp_path / "out"), "--quiet"]) == 0
    record = json.loads((tmp_path / "out" / "evidence.json").read_text())
    assert record["settings"]["approximant"] == model
    check = next(iter(record["sample_checks"].values()))["mismatch"]
    # reference: the release's own ln L (bilby's likelihood); measured spread 9e-11 nats, median 6e-12, ESS 113 of 120
    # (before time-domain models were conditioned as bilby does: spread 0.45, median -0.34, ESS 69 and 87 of 120)
    assert check["spread"] < 0.1 and abs(check["median"]) < 0.1, check
    estimates = [m for m in record["methods"] if m["family"] == "reweighting"]
    assert estimates
    for estimate in estimates:
        assert estimate["number_of_samples"] == count
        assert estimate["effective_sample_size"] >= 0.9 * estimate["number_of_samples"]
