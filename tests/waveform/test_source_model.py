"""bilby's boundary: the source model's parts, its cache keys, one dispatch on the model's domain."""
import numpy as np

from memory_infer.waveform.source import SourceCache
from memory_infer.waveform.source_model import memory_binary_black_hole, segment_note, signal_parts

BINARY = dict(mass_1=36.0, mass_2=29.0, luminosity_distance=440.0, a_1=0.0, a_2=0.0, tilt_1=0.0, tilt_2=0.0,
              phi_12=0.0, phi_jl=0.0, theta_jn=1.0, phase=0.4)


def frequencies(duration, rate=4096.0):
    return np.fft.rfftfreq(int(duration * rate), 1 / rate)


def test_zero_memory_likelihood_equals_bilby_on_its_own_model():
    # reference library: bilby GravitationalWaveTransient with its own lal_binary_black_hole (lalsimulation's
    # SimInspiralFD conditioning of IMRPhenomTHM), 1e-8 in ln L
    import bilby

    duration, rate, start = 4.0, 2048.0, 1e9
    injection = dict(BINARY, a_1=0.3, a_2=0.1, ra=1.2, dec=-0.4, psi=0.7, geocent_time=start + 2.0)
    arguments = dict(waveform_approximant="IMRPhenomTHM", minimum_frequency=20.0, reference_frequency=20.0)
    ours = bilby.gw.WaveformGenerator(duration=duration, sampling_frequency=rate,
                                      frequency_domain_source_model=memory_binary_black_hole,
                                      waveform_arguments=arguments)
    theirs = bilby.gw.WaveformGenerator(duration=duration, sampling_frequency=rate,
                                        frequency_domain_source_model=bilby.gw.source.lal_binary_black_hole,
                                        waveform_arguments=arguments)
    detectors = bilby.gw.detector.InterferometerList(["H1", "L1"])
    detectors.set_strain_data_from_power_spectral_densities(rate, duration, start)
    for detector in detectors:
        detector.minimum_frequency = 20.0
    detectors.inject_signal(waveform_generator=ours, parameters=dict(injection, memory_amplitude=1.0))
    ours_likelihood = bilby.gw.GravitationalWaveTransient(detectors, ours)
    reference = bilby.gw.GravitationalWaveTransient(detectors, theirs)
    for shift in (0.0, 0.002, -0.004):
        point = dict(injection, mass_1=36.0 + 100 * shift, geocent_time=start + 2.0 + shift)
        ours_value = ours_likelihood.log_likelihood_ratio(dict(point, memory_amplitude=0.0))
        reference_value = reference.log_likelihood_ratio(point)
        assert abs(ours_value - reference_value) < 1e-8


def test_segment_too_short_is_reported():
    f = frequencies(4.0, 2048.0)
    settings = dict(waveform_approximant="IMRPhenomTHM", minimum_frequency=20.0, reference_frequency=20.0)
    light = dict(BINARY, mass_1=6.0, mass_2=5.0)
    note = segment_note(f, 20.0, **light, **settings)
    assert note and "too short" in note
    assert segment_note(f, 20.0, **BINARY, **settings) is None
    assert segment_note(frequencies(32.0, 2048.0), 20.0, **light, **settings) is None


def test_early_inspiral_offset_moves_only_the_zero_frequency_bin():
    f = frequencies(4.0, 2048.0)
    with_offset = signal_parts(f, **BINARY, early_inspiral_memory=True)
    without = signal_parts(f, **BINARY, early_inspiral_memory=False)
    difference = with_offset["memory_plus"] - without["memory_plus"]
    assert abs(difference[0]) > 0
    assert np.max(np.abs(difference[1:])) < 1e-12 * np.max(np.abs(without["memory_plus"]))


def test_the_cache_returns_what_a_fresh_evaluation_gives_and_keys_on_every_option():
    f = frequencies(4.0, 2048.0)
    arguments = dict(waveform_approximant="IMRPhenomTHM", minimum_frequency=20.0, reference_frequency=20.0)
    cache = SourceCache()
    first = signal_parts(f, cache=cache, **BINARY, **arguments)
    again = signal_parts(f, cache=cache, **BINARY, **arguments)
    assert again is first and len(cache.parts) == 1
    fresh = signal_parts(f, **BINARY, **arguments)
    assert all(np.array_equal(fresh[key], first[key]) for key in fresh)
    other = signal_parts(f, cache=cache, **BINARY, **dict(arguments, memory_taper_duration=0.5))
    assert len(cache.parts) == 2 and len(cache.modes) == 1  # the same modes, another layout
    assert not np.array_equal(other["memory_plus"], first["memory_plus"])
    farther = signal_parts(f, cache=cache, **dict(BINARY, luminosity_distance=880.0), **arguments)
    assert len(cache.modes) == 1  # distance only rescales the modes
    scale = np.abs(first["memory_plus"]).max()
    assert np.allclose(farther["memory_plus"], 0.5 * first["memory_plus"], rtol=0, atol=1e-12 * scale)


def test_a_frequency_domain_model_runs_through_bilbys_source_function():
    f = frequencies(4.0, 2048.0)
    arguments = dict(waveform_approximant="IMRPhenomXHM", minimum_frequency=20.0, reference_frequency=20.0)
    parts = signal_parts(f, **BINARY, **arguments)
    strain = memory_binary_black_hole(f, **BINARY, memory_amplitude=-1.0, **arguments)
    assert np.array_equal(strain["plus"], parts["plus"] - parts["memory_plus"])
    assert segment_note(f, 20.0, **BINARY, **arguments) is None  # the model's own polarizations: nothing dropped
