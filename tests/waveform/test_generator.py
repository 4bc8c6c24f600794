"""The memory generator: parts handed to the likelihood, failures counted, caches kept to one generator."""
import pickle

import bilby
import numpy as np
import pytest

from memory_infer import MemoryTransient, waveform_generator

ARGUMENTS = dict(waveform_approximant="IMRPhenomTHM", minimum_frequency=20.0, reference_frequency=20.0)
POINT = dict(mass_1=36.0, mass_2=29.0, luminosity_distance=400.0, a_1=0.0, a_2=0.0, tilt_1=0.0, tilt_2=0.0,
             phi_12=0.0, phi_jl=0.0, theta_jn=1.0, phase=0.3, ra=1.0, dec=0.2, psi=0.3, geocent_time=1e9 + 1.0)


def test_chirp_mass_parameters_are_converted_like_bilby():
    # bilby's conversion (chirp mass and mass ratio to component masses) runs before the source model
    generator = waveform_generator(2.0, 1024.0, 1e9, ARGUMENTS)
    components = bilby.gw.conversion.generate_mass_parameters({"mass_1": 36.0, "mass_2": 29.0})
    point = {k: v for k, v in POINT.items() if k not in ("mass_1", "mass_2")}
    point.update(chirp_mass=components["chirp_mass"], mass_ratio=components["mass_ratio"])
    a, _ = generator.parts(point)
    b, _ = waveform_generator(2.0, 1024.0, 1e9, ARGUMENTS).parts(POINT)
    assert np.max(np.abs(a["plus"] - b["plus"])) < 1e-9 * np.max(np.abs(b["plus"]))


def test_caches_stay_with_their_generator():
    generator = waveform_generator(2.0, 1024.0, 1e9, ARGUMENTS)
    generator.parts(POINT)
    assert len(generator.source_cache.parts) == 1 and len(generator.source_cache.modes) == 1
    other = waveform_generator(2.0, 1024.0, 1e9, ARGUMENTS)
    assert len(other.source_cache.parts) == 0
    copied = pickle.loads(pickle.dumps(generator))
    assert len(copied.source_cache.parts) == 0
    assert np.array_equal(copied.parts(POINT)[1]["plus"], generator.parts(POINT)[1]["plus"])


def test_waveform_failure_inside_sampling_is_minus_infinity_and_counted():
    import bilby

    from memory_infer import MemoryTransient, waveform_generator

    generator = waveform_generator(2.0, 1024.0, 1e9, dict(waveform_approximant="IMRPhenomTHM", minimum_frequency=20.0,
                                                          reference_frequency=20.0, catch_waveform_errors=True))
    detectors = bilby.gw.detector.InterferometerList(["H1"])
    detectors.set_strain_data_from_zero_noise(1024.0, 2.0, 1e9)
    likelihood = MemoryTransient(detectors, generator)
    # mass ratio 1/300 is outside IMRPhenomTHM's range: the waveform fails
    point = dict(mass_1=300.0, mass_2=1.0, luminosity_distance=400.0, a_1=0.0, a_2=0.0, tilt_1=0.0, tilt_2=0.0,
                 phi_12=0.0, phi_jl=0.0, theta_jn=1.0, phase=0.3, ra=1.0, dec=0.2, psi=0.3, geocent_time=1e9 + 1.0,
                 memory_amplitude=1.0)
    before = generator.failures
    value = likelihood.log_likelihood_ratio(point)
    assert value < -1e300
    assert np.all(np.isneginf(likelihood.log_likelihood_ratio_curve(point, [0.0, 1.0])))
    assert generator.failures >= before + 1


def test_the_private_bilby_members_the_generator_uses_keep_their_meaning(monkeypatch):
    """bilby's WaveformGenerator (reference library, bilby 2.x): ``frequency_domain_strain`` hands the converted
    parameters to ``_strain_from_model(model_data_points, model, parameters)``, and ``_format_parameters`` converts
    them and adds the waveform arguments. The generator overrides the first and calls the second; pyproject bounds
    bilby below its next minor version, and this test names whichever changed."""
    import inspect

    from bilby.gw.waveform_generator import WaveformGenerator

    changed = []
    if list(inspect.signature(WaveformGenerator._strain_from_model).parameters) != [
            "self", "model_data_points", "model", "parameters"]:
        changed.append("_strain_from_model (its arguments)")
    generator = waveform_generator(2.0, 1024.0, 1e9, ARGUMENTS)
    seen = []
    original = WaveformGenerator._strain_from_model

    def recording(self, model_data_points, model, parameters):
        seen.append(dict(parameters))
        return original(self, model_data_points, model, parameters)

    monkeypatch.setattr(WaveformGenerator, "_strain_from_model", recording)
    components = bilby.gw.conversion.generate_mass_parameters({"mass_1": 36.0, "mass_2": 29.0})
    point = {k: v for k, v in POINT.items() if k not in ("mass_1", "mass_2")}
    point.update(chirp_mass=components["chirp_mass"], mass_ratio=components["mass_ratio"], memory_amplitude=1.0)
    bilby.gw.waveform_generator.WaveformGenerator(  # a plain bilby generator: does it call the member?
        duration=2.0, sampling_frequency=1024.0, start_time=1e9,
        frequency_domain_source_model=bilby.gw.source.lal_binary_black_hole,
        parameter_conversion=bilby.gw.conversion.convert_to_lal_binary_black_hole_parameters,
        waveform_arguments=dict(ARGUMENTS)).frequency_domain_strain(dict(point))
    if not seen or abs(seen[0].get("mass_1", 0.0) - 36.0) > 1e-9:
        changed.append("_strain_from_model (not called with converted parameters by frequency_domain_strain)")
    formatted = generator._format_parameters(dict(point))
    if abs(formatted.get("mass_1", 0.0) - 36.0) > 1e-9 or formatted.get("waveform_approximant") != "IMRPhenomTHM":
        changed.append("_format_parameters (no longer converts and adds the waveform arguments)")
    assert not changed, (f"bilby {bilby.__version__} changed private members memory_infer.waveform.generator uses: "
                         + "; ".join(changed))
