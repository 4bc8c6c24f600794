"""A = 0 is bilby's own likelihood for every model: polarizations, ln L on bilby-made data, quiet and loud."""
import os
import zlib

import bilby
import numpy as np
import pytest

from memory_infer.inference.likelihood import MemoryTransient
from memory_infer.waveform.conditioning import LIBRARY, LOWERED_START, START_TAPER, conditioning, route
from memory_infer.waveform.source_model import signal_parts
from memory_infer.waveform.generator import waveform_generator
from memory_infer.waveform.models import pyseobnr_modes

START = 1e9
ALIGNED = dict(mass_1=36.0, mass_2=29.0, a_1=0.3, a_2=0.2, tilt_1=0.0, tilt_2=np.pi, phi_12=0.0, phi_jl=0.0,
               theta_jn=0.9, phase=1.3, ra=1.1, dec=0.3, psi=0.4)
PRECESSING = dict(ALIGNED, a_1=0.6, tilt_1=1.0, phi_12=0.5, phi_jl=1.0, tilt_2=2.0)
NONSPINNING = dict(ALIGNED, mass_1=20.0, mass_2=15.0, a_1=0.0, a_2=0.0)
# (model, source, random points per data set); SEOBNRv4PHM costs about a second per call
CASES = [("IMRPhenomTHM", ALIGNED, 20), ("IMRPhenomTPHM", ALIGNED, 20), ("IMRPhenomTPHM", PRECESSING, 20),
         ("SEOBNRv4PHM", ALIGNED, 2), ("SEOBNRv4PHM", PRECESSING, 2), ("TaylorT4", NONSPINNING, 20),
         ("IMRPhenomXHM", ALIGNED, 20), ("IMRPhenomXPHM", PRECESSING, 6), ("SEOBNRv5PHM", ALIGNED, 4),
         ("SEOBNRv5PHM", PRECESSING, 4)]
# quiet: H1 + L1 at design sensitivity, SNR 12; loud: Cosmic Explorer, SNR 2,000 (the distance is set to give it)
NETWORKS = {"quiet": (("H1", "L1"), 12.0), "loud": (("CE",), 2000.0)}


def reference_model(approximant):
    """bilby's own source model for the approximant: gwsignal's route for the pyseobnr models, else lalsimulation's."""
    if approximant in pyseobnr_modes.MODELS:
        if not pyseobnr_modes.available() and not os.environ.get("MEMORY_INFER_REQUIRE_PYSEOBNR"):
            pytest.skip("pyseobnr (the optional seobnr extra) is not installed")
        return bilby.gw.source.gwsignal_binary_black_hole
    return bilby.gw.source.lal_binary_black_hole


def frequencies(duration, rate):
    return np.arange(int(duration * rate) // 2 + 1) / duration


@pytest.mark.parametrize("approximant, source", [("IMRPhenomTHM", ALIGNED), ("IMRPhenomTPHM", PRECESSING),
                                                 ("SEOBNRv4PHM", ALIGNED), ("TaylorT4", NONSPINNING)])
def test_oscillatory_part_is_bilbys_own_polarizations(approximant, source):
    # reference library: bilby's lal_binary_black_hole (lalsimulation's SimInspiralFD), 1e-10 relative in the band
    f = frequencies(4.0, 2048.0)
    arguments = dict(waveform_approximant=approximant, minimum_frequency=20.0, reference_frequency=20.0)
    intrinsic = {k: v for k, v in source.items() if k not in ("ra", "dec", "psi")}
    theirs = bilby.gw.source.lal_binary_black_hole(f, luminosity_distance=400.0, **intrinsic, **arguments)
    ours = signal_parts(f, luminosity_distance=400.0, **intrinsic, **arguments)
    for key in ("plus", "cross"):
        assert np.linalg.norm(ours[key] - theirs[key]) < 1e-10 * np.linalg.norm(theirs[key])


def test_routes_and_the_lowered_start():
    # reference library: lalsimulation's chirp-time bounds as its SimInspiralTD uses them; the lowered start lies below
    # the minimum frequency and the step is the data's when the maximum frequency is the Nyquist frequency
    assert route("IMRPhenomTHM") == LOWERED_START and route("SEOBNRv4PHM") == START_TAPER
    assert route("TaylorT4") == LIBRARY and route("SomeFutureModel") == LIBRARY
    f = frequencies(4.0, 2048.0)
    plan = conditioning("IMRPhenomTHM", 36.0, 29.0, 0.3, -0.2, 20.0, 1024.0, f)
    assert 10.0 < plan.start_frequency < 20.0 and plan.delta_t == 1 / 2048.0 and plan.n_samples == 8192
    lower = conditioning("IMRPhenomTHM", 36.0, 29.0, 0.3, -0.2, 20.0, 896.0, f)  # 896 Hz rounds up to 1024 Hz
    assert lower.delta_t == 1 / 2048.0


def test_a_maximum_frequency_below_nyquist_still_gives_bilbys_polarizations():
    # reference library: bilby's lal_binary_black_hole with maximum_frequency = 512 Hz on 2048 Hz data (lalsimulation
    # then generates at 1024 Hz; the oscillatory part is bilby's own call)
    f = frequencies(4.0, 2048.0)
    arguments = dict(waveform_approximant="IMRPhenomTHM", minimum_frequency=20.0, reference_frequency=20.0,
                     maximum_frequency=512.0)
    intrinsic = {k: v for k, v in ALIGNED.items() if k not in ("ra", "dec", "psi")}
    theirs = bilby.gw.source.lal_binary_black_hole(f, luminosity_distance=400.0, **intrinsic, **arguments)
    ours = signal_parts(f, luminosity_distance=400.0, **intrinsic, **arguments)
    assert np.linalg.norm(ours["plus"] - theirs["plus"]) < 1e-10 * np.linalg.norm(theirs["plus"])


def _random_points(truth, count, rng, precessing):
    for _ in range(count):
        point = dict(truth, mass_1=truth["mass_1"] * rng.uniform(0.97, 1.03),
                     mass_2=truth["mass_2"] * rng.uniform(0.97, 1.03),
                     luminosity_distance=truth["luminosity_distance"] * rng.uniform(0.8, 1.2),
                     theta_jn=rng.uniform(0.2, 2.9), phase=rng.uniform(0, 2 * np.pi), psi=rng.uniform(0, np.pi),
                     ra=rng.uniform(0, 2 * np.pi), dec=rng.uniform(-1.2, 1.2),
                     geocent_time=truth["geocent_time"] + rng.uniform(-0.005, 0.005))
        if truth["a_1"] > 0:
            point.update(a_1=rng.uniform(0.0, 0.8), a_2=rng.uniform(0.0, 0.8))
        if precessing:
            point.update(tilt_1=rng.uniform(0.1, 3.0), tilt_2=rng.uniform(0.1, 3.0), phi_12=rng.uniform(0, 2 * np.pi),
                         phi_jl=rng.uniform(0, 2 * np.pi))
        yield point


@pytest.mark.slow
@pytest.mark.parametrize("loudness", ["quiet", "loud"])
@pytest.mark.parametrize("approximant, source, count", CASES,
                         ids=[f"{a}-{'precessing' if s is PRECESSING else 'aligned'}" for a, s, _ in CASES])
def test_zero_memory_likelihood_is_bilbys_at_random_points(approximant, source, count, loudness):
    # reference library: bilby GravitationalWaveTransient with lal_binary_black_hole on zero-noise data that bilby
    # injected; ln L(A = 0) within 1e-3 nats, or 5e-8 relative where |ln L| > 2e4 (away from a loud signal's peak;
    # IMRPhenomTPHM's own polarizations differ from the sum of its own modes by 5e-9 relative with aligned spins)
    names, target = NETWORKS[loudness]
    duration, rate = 4.0, 2048.0
    truth = dict(source, luminosity_distance=1000.0, geocent_time=START + 2.0)
    arguments = dict(waveform_approximant=approximant, minimum_frequency=20.0, reference_frequency=20.0)
    theirs = bilby.gw.WaveformGenerator(duration=duration, sampling_frequency=rate, start_time=START,
                                        frequency_domain_source_model=reference_model(approximant),
                                        parameter_conversion=bilby.gw.conversion.convert_to_lal_binary_black_hole_parameters,
                                        waveform_arguments=arguments)
    detectors = bilby.gw.detector.InterferometerList(list(names))
    for detector in detectors:
        detector.minimum_frequency = 20.0
    detectors.set_strain_data_from_zero_noise(rate, duration, START)
    polarizations = theirs.frequency_domain_strain(truth)
    snr = np.sqrt(sum(d.optimal_snr_squared(d.get_detector_response(polarizations, truth)).real for d in detectors))
    truth["luminosity_distance"] *= snr / target
    detectors.set_strain_data_from_zero_noise(rate, duration, START)
    detectors.inject_signal(waveform_generator=theirs, parameters=truth)
    reference = bilby.gw.GravitationalWaveTransient(detectors, theirs)
    ours = MemoryTransient(detectors, waveform_generator(duration, rate, START, arguments))
    rng = np.random.default_rng(zlib.crc32(f"{approximant} {loudness} {source is PRECESSING}".encode()))
    points = [truth] + list(_random_points(truth, count - 1, rng, source is PRECESSING))
    for point in points:
        expected = reference.log_likelihood_ratio(point)
        curve = ours.log_likelihood_ratio_curve(point, [0.0, 1.0])
        assert abs(curve[0] - expected) <= max(1e-3, 5e-8 * abs(expected)), (point, curve[0], expected)
    # at the truth, data without memory: ln BF+ = -rho_mem^2 / 2 (PRD 46, 5236 (1992), zero noise)
    curve = ours.log_likelihood_ratio_curve(truth, [0.0, 1.0])
    rho2 = ours.inner_products(truth).mem_mem
    assert rho2 > 0 and abs((curve[1] - curve[0]) + rho2 / 2) < 1e-6 * rho2 + 1e-9


@pytest.mark.slow
def test_memory_injected_from_lalsimulations_own_memory_modes_is_found():
    # reference library: lalsimulation's TaylorT4 returns its own post-Newtonian memory modes (2, 0) and (4, 0); data
    # = bilby's TaylorT4 signal plus those modes (laid on the segment with a 1 s taper after the model's end), loud
    # (Cosmic Explorer). Our memory comes from the same run's oscillatory modes, so ln BF+ = <m_lal, m_ours> -
    # rho^2 / 2 must be positive (the sign is exact). The size differs by the PN truncation: lalsimulation's own
    # (2, 0) is the leading-order formula, while its TaylorT4 modes at their default (highest) amplitude order are
    # smaller near the end (|h22| at the last sample 4.5e-19 against 5.5e-19 at amplitude order 3, at 1 Mpc), where
    # the in-band memory comes from: <m_lal, m_ours> / rho^2 = 1.32 measured (at amplitude order 3 the (2, 0)
    # modes agree within 0.9%, tests/waveform/test_memory.py)
    import lal
    import lalsimulation as lalsim

    from memory_infer.waveform.source import TimeSignal, circular_layout, observer_angles, to_frequency_domain
    from memory_infer.waveform.sphere import spin_weighted_harmonic

    duration, rate = 4.0, 2048.0
    truth = dict(NONSPINNING, luminosity_distance=40.0, geocent_time=START + 2.0)
    arguments = dict(waveform_approximant="TaylorT4", minimum_frequency=20.0, reference_frequency=20.0)
    generator = waveform_generator(duration, rate, START, arguments)
    detectors = bilby.gw.detector.InterferometerList(["CE"])
    for detector in detectors:
        detector.minimum_frequency = 20.0
    detectors.set_strain_data_from_zero_noise(rate, duration, START)
    linked = lalsim.SimInspiralChooseTDModes(
        0.0, 1 / rate, truth["mass_1"] * lal.MSUN_SI, truth["mass_2"] * lal.MSUN_SI, 0, 0, 0, 0, 0, 0, 20.0, 20.0,
        truth["luminosity_distance"] * 1e6 * lal.PC_SI, lal.CreateDict(), 4, lalsim.GetApproximantFromString("TaylorT4"))
    theta, phi = observer_angles(truth["theta_jn"], truth["phase"])
    memory, times = 0.0, None
    while linked is not None:
        if linked.m == 0:
            data = np.array(linked.mode.data.data)
            times = float(linked.mode.epoch) + np.arange(data.size) / rate
            memory = memory + data * spin_weighted_harmonic(-2, linked.l, 0, theta, phi)
        linked = linked.next
    signal = TimeSignal(times, np.zeros(times.size, complex), memory, 0.0)
    _, buffer, shift = circular_layout(signal, int(duration * rate), 1 / rate, 1.0, 0.0)
    lal_memory = to_frequency_domain(buffer, 1 / rate, shift, detectors[0].frequency_array)
    oscillatory, _ = generator.parts(truth)  # bilby's own TaylorT4 polarizations (the library route)
    injected = {k: oscillatory[k] + lal_memory[k] for k in oscillatory}
    for detector in detectors:
        detector.inject_signal_from_waveform_polarizations(truth, injected)
    likelihood = MemoryTransient(detectors, generator)
    curve = likelihood.log_likelihood_ratio_curve(truth, [0.0, 1.0, -1.0])
    rho2 = likelihood.inner_products(truth).mem_mem
    ln_bf = curve[1] - curve[0]
    assert rho2 > 1.0  # a memory SNR above 1
    assert ln_bf > 0 and curve[2] - curve[0] < 0  # the sign: GR's memory favoured, the flipped one disfavoured
    assert 1.0 < (ln_bf + rho2 / 2) / rho2 < 1.5, (ln_bf, rho2)  # the PN truncation above
