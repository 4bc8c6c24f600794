"""Write the posterior-sample corpus of tests/corpus: files exactly as bilby writes them.

Each parameterization is a real ``bilby.run_sampler`` run (dynesty) with bilby's BBH priors and its standard
conversion (``generate_all_bbh_parameters``, which adds the derived columns and, through a real
``GravitationalWaveTransient``, the per-detector SNR columns). Only the sampling is made cheap: the likelihood
being sampled is a Gaussian around a fixed binary, so a run takes seconds; the files' shape, columns, metadata and
encodings are bilby's own. Each run is written as the result JSON, the result HDF5 (``save_to_file``), the
space-separated samples file (``save_posterior_samples``) and a CSV as pandas writes a posterior by default (with
its index column). The posteriors are cut to their first 30 rows to keep the corpus small.

Run: ``python scripts/make_sample_corpus.py [OUTDIR]`` (default tests/corpus); needs only bilby and lalsuite.
"""
from __future__ import annotations

import os
import sys

import bilby
import numpy as np

START = 1_000_000_000.0
DURATION, RATE = 4.0, 1024.0
TRUTH = dict(mass_1=36.0, mass_2=29.0, chirp_mass=28.09, mass_ratio=0.806, a_1=0.4, a_2=0.3, tilt_1=0.6, tilt_2=1.1,
             phi_12=1.7, phi_jl=0.3, chi_1=0.3, chi_2=-0.2, luminosity_distance=3000.0, theta_jn=1.2, psi=0.4,
             phase=0.6, geocent_time=START + 2.0, ra=1.1, dec=0.3)


class CheapTransient(bilby.gw.GravitationalWaveTransient):
    """A real transient likelihood (its detectors and generator serve the SNR columns) whose sampled log-likelihood
    is a Gaussian around ``TRUTH``: the sampling costs nothing, the files are bilby's."""

    def __init__(self, *args, widths=None, **kwargs):
        super().__init__(*args, **kwargs)
        self.widths = widths

    def log_likelihood_ratio(self, parameters=None):
        parameters = self.parameters if parameters is None else parameters
        return -0.5 * sum(((parameters[k] - TRUTH[k]) / w) ** 2 for k, w in self.widths.items())

    def noise_log_likelihood(self):
        return -100.0


def priors_for(masses: str, spins: str, time_free: bool):
    priors = bilby.gw.prior.BBHPriorDict(aligned_spin=spins == "aligned")
    for key in ("mass_1", "mass_2", "chirp_mass", "mass_ratio"):
        priors.pop(key, None)
    if masses == "components":
        priors["mass_1"] = bilby.core.prior.Uniform(30, 42, name="mass_1")
        priors["mass_2"] = bilby.core.prior.Uniform(24, 34, name="mass_2")
        priors["mass_ratio"] = bilby.core.prior.Constraint(0.125, 1, name="mass_ratio")
    else:
        priors["chirp_mass"] = bilby.gw.prior.UniformInComponentsChirpMass(25, 31, name="chirp_mass")
        priors["mass_ratio"] = bilby.gw.prior.UniformInComponentsMassRatio(0.5, 1, name="mass_ratio")
        priors["mass_1"] = bilby.core.prior.Constraint(5, 100, name="mass_1")
        priors["mass_2"] = bilby.core.prior.Constraint(5, 100, name="mass_2")
    if spins == "aligned":
        for i in ("1", "2"):
            priors[f"chi_{i}"] = bilby.gw.prior.AlignedSpin(a_prior=bilby.core.prior.Uniform(0, 0.8),
                                                            name=f"chi_{i}")
    elif spins == "none":
        for key in ("a_1", "a_2", "tilt_1", "tilt_2", "phi_12", "phi_jl"):
            priors[key] = bilby.core.prior.DeltaFunction(0.0, name=key)
    else:
        priors["a_1"] = bilby.core.prior.Uniform(0, 0.8, name="a_1")
        priors["a_2"] = bilby.core.prior.Uniform(0, 0.8, name="a_2")
    priors["luminosity_distance"] = bilby.gw.prior.UniformSourceFrame(1000, 5000, name="luminosity_distance")
    priors["geocent_time"] = (bilby.core.prior.Uniform(START + 1.95, START + 2.05, name="geocent_time")
                              if time_free else bilby.core.prior.DeltaFunction(START + 2.0, name="geocent_time"))
    return priors


def run(label: str, masses: str, spins: str, time_free: bool, outdir: str):
    approximant = "IMRPhenomXP" if spins == "precessing" else "IMRPhenomXAS"
    generator = bilby.gw.WaveformGenerator(
        duration=DURATION, sampling_frequency=RATE, start_time=START,
        frequency_domain_source_model=bilby.gw.source.lal_binary_black_hole,
        parameter_conversion=bilby.gw.conversion.convert_to_lal_binary_black_hole_parameters,
        waveform_arguments=dict(waveform_approximant=approximant, reference_frequency=20.0, minimum_frequency=20.0))
    detectors = bilby.gw.detector.InterferometerList(["H1", "L1"])
    bilby.core.utils.random.seed(7)
    detectors.set_strain_data_from_power_spectral_densities(RATE, DURATION, START)
    priors = priors_for(masses, spins, time_free)
    widths = {k: (p.maximum - p.minimum) / 6 for k, p in priors.items()
              if k in TRUTH and not p.is_fixed and type(p).__name__ != "Constraint"}
    likelihood = CheapTransient(detectors, generator, priors=priors, widths=widths)
    result = bilby.run_sampler(likelihood, priors, sampler="dynesty", nlive=40, dlogz=1.0, naccept=10,
                               outdir=os.path.join(outdir, "work"), label=label, seed=11, save=False,
                               conversion_function=bilby.gw.conversion.generate_all_bbh_parameters,
                               check_point_plot=False, print_progress=False)
    result.posterior = result.posterior.iloc[:30].reset_index(drop=True)
    result.samples = result.samples[:30]
    result.log_likelihood_evaluations = result.log_likelihood_evaluations[:30]
    if result.nested_samples is not None:
        result.nested_samples = result.nested_samples.iloc[:30]
    result.outdir = outdir
    result.save_to_file(extension="json", overwrite=True, outdir=outdir)
    result.save_to_file(extension="hdf5", overwrite=True, outdir=outdir)
    result.save_posterior_samples(outdir=outdir)
    result.posterior.to_csv(os.path.join(outdir, f"{label}_posterior.csv"))
    print(label, len(result.posterior), "samples,", len(result.posterior.columns), "columns")


PARAMETERIZATIONS = {
    "components-precessing-time-free": ("components", "precessing", True),
    "chirp-precessing-time-fixed": ("chirp", "precessing", False),
    "chirp-aligned-time-free": ("chirp", "aligned", True),
    "components-aligned-time-fixed": ("components", "aligned", False),
    "chirp-nonspinning-time-free": ("chirp", "none", True),
}


def main(outdir: str):
    bilby.core.utils.logger.setLevel("WARNING")
    os.makedirs(outdir, exist_ok=True)
    np.random.seed(5)
    for label, (masses, spins, time_free) in PARAMETERIZATIONS.items():
        run(label, masses, spins, time_free, outdir)
    work = os.path.join(outdir, "work")
    if os.path.isdir(work):
        import shutil

        shutil.rmtree(work)


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else os.path.join(os.path.dirname(__file__), "..", "tests", "corpus"))
