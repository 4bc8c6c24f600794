"""The public Python API, exercised with the README's own example (run verbatim)."""
import contextlib
import io
import os
import re

import bilby
import numpy as np
import pandas as pd

import memory_infer as mi

README = os.path.join(os.path.dirname(os.path.dirname(os.path.abspath(__file__))), "README.md")
START, RATE, DURATION = 1126259460.0, 2048.0, 4.0
TRUTH = dict(mass_1=36.0, mass_2=29.0, luminosity_distance=300.0, a_1=0.0, a_2=0.0, tilt_1=0.0, tilt_2=0.0,
             phi_12=0.0, phi_jl=0.0, theta_jn=1.1, phase=0.7, ra=1.2, dec=-0.3, psi=0.5, geocent_time=START + 2.0)


def readme_example() -> str:
    section = open(README).read().split("## Python", 1)[1]
    return re.search(r"```python\n(.*?)```", section, re.S).group(1)


def write_inputs(folder):
    generator = mi.waveform_generator(DURATION, RATE, START, {"waveform_approximant": "IMRPhenomTHM",
                                                              "reference_frequency": 20.0, "minimum_frequency": 20.0})
    detectors = bilby.gw.detector.InterferometerList(["H1", "L1"])
    bilby.core.utils.random.seed(4)
    detectors.set_strain_data_from_power_spectral_densities(RATE, DURATION, START)
    detectors.inject_signal(waveform_generator=generator, parameters=dict(TRUTH, memory_amplitude=0.0))
    for detector in detectors:
        data = detector.strain_data
        np.savetxt(folder / f"{detector.name}-strain.txt", np.column_stack([data.time_array, data.time_domain_strain]))
        psd = detector.power_spectral_density
        np.savetxt(folder / f"{detector.name}-psd.txt", np.column_stack([psd.frequency_array, psd.psd_array]))
    rng = np.random.default_rng(2)
    samples = pd.DataFrame([dict(TRUTH, phase=(TRUTH["phase"] + rng.normal(0, 0.05)) % (2 * np.pi),
                                 psi=TRUTH["psi"] + rng.normal(0, 0.02), log_likelihood=0.0) for _ in range(40)])
    samples.to_csv(folder / "posterior.csv", index=False)


def test_readme_example_runs_and_reports_both_signs(tmp_path):
    write_inputs(tmp_path)
    here = os.getcwd()
    output = io.StringIO()
    try:
        os.chdir(tmp_path)
        with contextlib.redirect_stdout(output):
            exec(readme_example(), {})
    finally:
        os.chdir(here)
    lines = output.getvalue().strip().splitlines()
    assert [line.split()[0] for line in lines] == ["memory", "flipped"]
    for line in lines:
        assert np.isfinite(float(line.split()[3]))
    assert len(readme_example().strip().splitlines()) <= 14
