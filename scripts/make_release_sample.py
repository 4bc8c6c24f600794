"""Write the small catalog-release fixture of tests/releases/ with the trade's own tools (run once, committed).

An invented binary (36 + 29 solar masses, aligned spins, network SNR about 20) injected with IMRPhenomXHM into
Gaussian noise of bilby's default H1 and L1 noise curves, 4 s at 1024 Hz; a short real bilby ``run_sampler``
(dynesty, 60 live points; chirp mass, mass ratio, distance and phase free, the rest fixed at the injection);
the posterior written by pesummary's own writer (``pesummary.io.write``, pesummary metafile layout) with the
PSDs, the model and the reference frequency; the strain in the open-data HDF5 layout, windowed by bilby as any
time-domain strain is.

    python scripts/make_release_sample.py tests/releases
"""
import os
import sys

import bilby
import h5py
import numpy as np
import pandas as pd

START, DURATION, RATE, SEED = 1_000_000_000.0, 4.0, 1024.0, 7
MODEL = "IMRPhenomXHM"
TRUTH = dict(mass_1=36.0, mass_2=29.0, luminosity_distance=1300.0, a_1=0.2, a_2=0.1, tilt_1=0.0, tilt_2=0.0,
             phi_12=0.0, phi_jl=0.0, theta_jn=0.6, phase=1.2, ra=1.0, dec=0.2, psi=0.3, geocent_time=START + 2.0)
ARGUMENTS = dict(waveform_approximant=MODEL, reference_frequency=20.0, minimum_frequency=20.0)


def generator():
    return bilby.gw.WaveformGenerator(
        duration=DURATION, sampling_frequency=RATE, start_time=START,
        frequency_domain_source_model=bilby.gw.source.lal_binary_black_hole,
        parameter_conversion=bilby.gw.conversion.convert_to_lal_binary_black_hole_parameters,
        waveform_arguments=ARGUMENTS)


def strain_with_signal(seed):
    """Noise plus signal in the time domain, per detector (the strain a user downloads)."""
    noise = bilby.gw.detector.InterferometerList(["H1", "L1"])
    bilby.core.utils.random.seed(seed)
    noise.set_strain_data_from_power_spectral_densities(RATE, DURATION, START)
    polarizations = generator().frequency_domain_strain(TRUTH)
    out = {}
    for detector in noise:
        response = detector.get_detector_response(polarizations, TRUTH)
        signal = np.fft.irfft(response) * RATE  # bilby's frequency series are dt x FFT
        out[detector.name] = detector.strain_data.time_domain_strain + signal
    return out, noise


def write_open_data(path, name, strain):
    with h5py.File(path, "w") as handle:
        dataset = handle.create_dataset("strain/Strain", data=strain)
        dataset.attrs["Xspacing"], dataset.attrs["Xstart"], dataset.attrs["Npoints"] = 1 / RATE, START, strain.size
        handle["meta/GPSstart"], handle["meta/Duration"], handle["meta/Detector"] = int(START), int(DURATION), name
        handle["quality/simple/DQmask"] = np.full(int(DURATION), 127)


def main(outdir):
    os.makedirs(outdir, exist_ok=True)
    strains, noise = strain_with_signal(SEED)
    detectors = bilby.gw.detector.InterferometerList(["H1", "L1"])
    for detector in detectors:
        detector.minimum_frequency = 20.0
        detector.strain_data.set_from_time_domain_strain(strains[detector.name], sampling_frequency=RATE,
                                                         duration=DURATION, start_time=START)
        write_open_data(os.path.join(outdir, f"{detector.name}.hdf5"), detector.name, strains[detector.name])
    priors = bilby.gw.prior.BBHPriorDict()
    for key in ("a_1", "a_2", "tilt_1", "tilt_2", "phi_12", "phi_jl", "theta_jn", "ra", "dec", "psi", "geocent_time"):
        priors[key] = TRUTH[key]
    for key in ("mass_1", "mass_2"):
        priors.pop(key, None)
    priors["chirp_mass"] = bilby.gw.prior.UniformInComponentsChirpMass(25.0, 32.0, name="chirp_mass")
    priors["mass_ratio"] = bilby.gw.prior.UniformInComponentsMassRatio(0.5, 1.0, name="mass_ratio")
    priors["luminosity_distance"] = bilby.gw.prior.UniformSourceFrame(300.0, 2000.0, name="luminosity_distance")
    likelihood = bilby.gw.GravitationalWaveTransient(detectors, generator(), priors=priors)
    snr = np.sqrt(sum(d.optimal_snr_squared(d.get_detector_response(generator().frequency_domain_strain(TRUTH),
                                                                         TRUTH)).real for d in detectors))
    print(f"network optimal SNR {snr:.1f}")
    result = bilby.run_sampler(likelihood, priors, sampler="dynesty", nlive=60, naccept=10, sample="acceptance-walk",
                               outdir=os.path.join(outdir, "run"), label="release", seed=SEED, npool=1,
                               conversion_function=bilby.gw.conversion.generate_all_bbh_parameters,
                               save=False, plot=False, resume=True)
    # the sampler's own working files stay out of the fixture: only the release and the strain are kept
    posterior = result.posterior
    columns = [c for c in posterior.columns if pd.api.types.is_numeric_dtype(posterior[c])
               and not pd.api.types.is_complex_dtype(posterior[c])]  # complex matched-filter SNRs stay out
    from pesummary.io import write

    label = f"C01:{MODEL}"
    psds = {label: {d.name: np.column_stack([d.frequency_array[1:], d.power_spectral_density_array[1:]]).tolist()
                    for d in detectors}}
    write(columns, posterior[columns].to_numpy().tolist(), file_format="pesummary", outdir=outdir, label=label,
          filename="release.h5", psd=psds, approximant={label: MODEL},
          config={label: {"config": {"reference-frequency": "20.0", "waveform-approximant": MODEL,
                                     "duration": str(DURATION), "sampling-frequency": str(RATE)}}},
          file_kwargs={label: {"sampler": {"nsamples": len(posterior)},
                               "meta_data": {"f_ref": 20.0, "approximant": MODEL}}})
    print(f"{len(posterior)} samples written to {os.path.join(outdir, 'release.h5')}")


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else "tests/releases")
