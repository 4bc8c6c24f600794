"""The memory's flux from finer samplings: convergence in the data's sampling rate, and every consumer.

Reference for all checks here: a convergence study (common practice, no source): the same binary's modes
sampled 16 times finer than the finest data rate tested (65536 Hz) and differenced on that uniform grid,
with no finer levels. Tolerance 0.5% (benchmarks/convergence.py prints the table).

Models that stop before merger (TaylorT4, the leading-order inspiral) have no peak to fix their time origin:
lalsimulation puts t = 0 one step after the last sample, so the same binary at two rates is shifted by up to a
step (0.2-1.1 ms measured), and the analytic model's last sample may lie up to half a step past its nominal end.
Their reference is therefore read on the series' own time axis, shifted by the offset of the (2, 2) amplitude
(monotonic in the inspiral) over the last 40 samples, and the analytic reference runs a little further (x = 0.18).
"""
from functools import lru_cache

import numpy as np
import pytest

from memory_infer.waveform.memory import memory_at_direction
from memory_infer.waveform.models import generate_modes, pyseobnr_modes
from memory_infer.waveform.models.analytic import NAME as LEADING_ORDER, leading_order_inspiral
from memory_infer.waveform.models.refine import PHASE_STEP_LIMIT, dominant_phase_step
from memory_infer.waveform.source import TimeSignal, circular_layout, observer_angles, to_frequency_domain

REFERENCE_RATE = 16 * 4096.0
SKY = dict(ra=1.1, dec=0.3, psi=0.4, geocent_time=1_000_000_010.0)
INCLINATION, PHASE = 1.0, 0.4
DURATION = 16.0


def binary(total_mass, spin_1=(0, 0, 0), spin_2=(0, 0, 0)):
    return (total_mass * 5 / 9, total_mass * 4 / 9, tuple(spin_1), tuple(spin_2))


CASES = {
    "12": ("IMRPhenomTHM", binary(12.0)),
    "18": ("IMRPhenomTHM", binary(18.0)),
    "30": ("IMRPhenomTHM", binary(30.0)),
    "65": ("IMRPhenomTHM", binary(65.0)),
    "150": ("IMRPhenomTHM", binary(150.0)),
    "18-aligned-spins": ("IMRPhenomTHM", binary(18.0, (0, 0, 0.7), (0, 0, 0.4))),
    "18-precessing": ("IMRPhenomTPHM", binary(18.0, (0.4, 0.2, 0.3), (-0.1, 0.3, 0.2))),
    "65-SEOBNRv4PHM": ("SEOBNRv4PHM", binary(65.0)),
    "65-SEOBNRv5PHM-precessing": ("SEOBNRv5PHM", binary(65.0, (0.4, 0.2, 0.3), (-0.1, 0.3, 0.2))),
    "TaylorT4-8+6": ("TaylorT4", (8.0, 6.0, (0, 0, 0), (0, 0, 0))),
    "TaylorT4-20+15": ("TaylorT4", (20.0, 15.0, (0, 0, 0), (0, 0, 0))),
    "TaylorT4-30+10": ("TaylorT4", (30.0, 10.0, (0, 0, 0), (0, 0, 0))),
    "leading-order-8+6": (LEADING_ORDER, (8.0, 6.0, (0, 0, 0), (0, 0, 0))),
}
RATES = {"65-SEOBNRv4PHM": (2048.0, 4096.0),  # SEOBNRv4PHM refuses a ringdown above the Nyquist frequency
         "65-SEOBNRv5PHM-precessing": (2048.0, 4096.0)}  # and SEOBNRv5PHM a (4, 4) ringdown above it
ENDS_BEFORE_MERGER = ("TaylorT4", LEADING_ORDER)


def rates(case):
    return RATES.get(case, (1024.0, 2048.0, 4096.0))


def direction_memory(series, finer=True):
    """Memory strain (SI, complex) towards the test observer at ``series.times``."""
    times, modes = series.geometric()
    theta, phi = observer_angles(INCLINATION, PHASE)
    memory = memory_at_direction(modes, times, theta, phi, finer=series.geometric_finer() if finer else ())
    return memory * series.strain_scale


@lru_cache(maxsize=None)
def reference_series(case):
    """The modes at 65536 Hz on one uniform grid (the analytic inspiral a little past its nominal end)."""
    approximant, (m1, m2, s1, s2) = CASES[case]
    if approximant == LEADING_ORDER:
        return leading_order_inspiral(m1, m2, 100.0, 1 / REFERENCE_RATE, 20.0, final_x=0.18)
    return generate_modes(approximant, m1, m2, 100.0, 1 / REFERENCE_RATE, 20.0, s1, s2, 20.0,
                          finer_for_memory=False)


@lru_cache(maxsize=None)
def reference(case):
    """(times, memory) from modes at 65536 Hz on one uniform grid."""
    series = reference_series(case)
    return series.times, direction_memory(series, finer=False)


def on_times(times, case):
    reference_times, memory = reference(case)
    return np.interp(times, reference_times, memory.real) + 1j * np.interp(times, reference_times, memory.imag)


def time_offset(series, case):
    """Time (s) to add to ``series.times`` to reach the reference's axis: zero for models with a merger; for those
    that end before it, where the reference's (2, 2) amplitude equals the series' over its last 40 samples."""
    if CASES[case][0] not in ENDS_BEFORE_MERGER:
        return 0.0
    fine = reference_series(case)
    rising = np.abs(fine.modes[(2, 2)])[:int(np.argmax(np.abs(fine.modes[(2, 2)]))) + 1]
    late = slice(-41, -1)
    return float(np.median(np.interp(np.abs(series.modes[(2, 2)][late]), rising, fine.times[:rising.size])
                           - series.times[late]))


def expected_memory(series, case):
    """The reference memory at the series' samples (on its axis, :func:`time_offset`)."""
    return on_times(series.times + time_offset(series, case), case)


def fresh_detectors(network, rate):
    import bilby

    from memory_infer.inputs.detectors import network as members, power_spectral_density

    detectors = bilby.gw.detector.InterferometerList([name for name, _ in members(network)])
    for detector, (_, curve) in zip(detectors, members(network)):
        detector.power_spectral_density = power_spectral_density(curve)
        detector.minimum_frequency = 20.0
    detectors.set_strain_data_from_zero_noise(rate, DURATION, SKY["geocent_time"] - DURATION + 2.0)
    return detectors


def network_snr(times, memory, rate, distance=100.0, network="hlv-design"):
    """Network optimal SNR of a memory time series laid out as the source model lays it out."""
    detectors = fresh_detectors(network, rate)
    n_buffer, delta_t = int(DURATION * rate), 1 / rate
    signal = TimeSignal(times, np.zeros(times.size, complex), memory * (100.0 / distance), 0.0)
    _, buffer, shift = circular_layout(signal, n_buffer, delta_t, 1.0, 0.1)
    polarizations = to_frequency_domain(buffer, delta_t, shift, detectors[0].frequency_array)
    total = 0.0
    for detector in detectors:
        response = detector.get_detector_response(polarizations, SKY)
        total += float(np.real(detector.optimal_snr_squared(response)))
    return np.sqrt(total)


@pytest.mark.slow
@pytest.mark.parametrize("case", list(CASES))
def test_memory_converged_at_every_data_rate(case):
    approximant, (m1, m2, s1, s2) = CASES[case]
    if approximant in pyseobnr_modes.MODELS and not pyseobnr_modes.available():
        pytest.skip("pyseobnr (the optional seobnr extra) is not installed")
    for rate in rates(case):
        series = generate_modes(approximant, m1, m2, 100.0, 1 / rate, 20.0, s1, s2, 20.0)
        ours = direction_memory(series)
        expected = expected_memory(series, case)
        # convergence study (common practice, no source): final memory within 0.5% of the 16x finer grid
        assert abs(abs(ours[-1]) / abs(expected[-1]) - 1) < 5e-3, (case, rate)
        # and the network memory SNR (HLV design, 16 s, from 20 Hz) within 0.5%
        snr, snr_expected = network_snr(series.times, ours, rate), network_snr(series.times, expected, rate)
        assert abs(snr / snr_expected - 1) < 5e-3, (case, rate, snr, snr_expected)


def test_coarse_grid_alone_loses_the_memory_of_a_light_binary():
    # the failure the finer levels repair: 18 M_sun at 2048 Hz without them is far from the reference
    approximant, (m1, m2, s1, s2) = CASES["18"]
    series = generate_modes(approximant, m1, m2, 100.0, 1 / 2048, 20.0, s1, s2, 20.0)
    assert series.finer, "a light binary at 2048 Hz needs finer samplings"
    coarse, refined = direction_memory(series, finer=False), direction_memory(series)
    expected = on_times(series.times, "18")
    assert abs(abs(coarse[-1]) / abs(expected[-1]) - 1) > 0.1
    assert abs(abs(refined[-1]) / abs(expected[-1]) - 1) < 5e-3
    # the finest level resolves the (2, +-2) mode everywhere it is used
    finest = series.finer[-1]
    assert np.max(dominant_phase_step(finest)) <= PHASE_STEP_LIMIT
    # a heavy binary at 4096 Hz needs none
    assert not generate_modes("IMRPhenomTHM", 150.0, 120.0, 100.0, 1 / 4096, 20.0).finer


def test_finer_levels_continue_the_coarse_modes():
    # each level called from the model is the same binary: its (2, 2) mode agrees with the coarse one where both
    # resolve it (grids coarser than the interpolated levels take: 9.9 M and 50 M)
    for approximant, masses, rate in (("IMRPhenomTHM", (6.0, 4.0), 2048), ("TaylorT4", (2.4, 1.6), 1024)):
        series = generate_modes(approximant, *masses, 100.0, 1 / rate, 20.0)
        assert series.finer
        level = series.finer[0]
        window = (series.times > level.use_from - 0.02) & (series.times <= level.use_from)
        window &= series.times >= level.times[0] + 0.005
        fine = {k: np.interp(series.times[window], level.times, np.unwrap(np.angle(level.modes[k])))
                for k in ((2, 2), (2, 1))}
        coarse = {k: np.unwrap(np.angle(series.modes[k]))[window] for k in ((2, 2), (2, 1))}
        for key in fine:
            offset = np.angle(np.exp(1j * (fine[key] - coarse[key])))
            assert np.max(np.abs(offset)) < 2e-2, (approximant, key)


def test_the_finest_level_reaches_the_last_sample_of_a_model_that_ends_loud():
    # TaylorT4 stops at its loudest sample: the interpolated levels run to it (end-biased stencils), the (2, 2)
    # mode there being the model's own sample
    series = generate_modes("TaylorT4", 8.0, 6.0, 100.0, 1 / 2048, 20.0)
    finest = series.finer[-1]
    assert abs(finest.times[-1] - series.times[-1]) < 1e-6 * series.delta_t
    for key in ((2, 2), (3, 3), (2, -1)):
        assert abs(finest.modes[key][-1] - series.modes[key][-1]) < 1e-10 * abs(series.modes[(2, 2)][-1])
    # a model with a ringdown ends quiet: its levels stop a few samples after the last loud one, as before
    ringdown = generate_modes("IMRPhenomTHM", 10.0, 8.0, 100.0, 1 / 2048, 20.0)
    assert ringdown.finer[-1].times[-1] < ringdown.times[-1] - 0.01


def _consumer_binary():
    approximant, (m1, m2, _, _) = CASES["18"]
    return dict(mass_1=m1, mass_2=m2, luminosity_distance=100.0, a_1=0.0, a_2=0.0, tilt_1=0.0, tilt_2=0.0,
                phi_12=0.0, phi_jl=0.0, theta_jn=INCLINATION, phase=PHASE, **SKY)


def _reference_snr_at_2048():
    series = generate_modes("IMRPhenomTHM", *CASES["18"][1][:2], 100.0, 1 / 2048, 20.0, finer_for_memory=False)
    return network_snr(series.times, on_times(series.times, "18"), 2048.0)


@pytest.mark.slow
def test_source_model_rank_and_campaign_record_agree_with_the_reference():
    import dataclasses

    from memory_infer.campaign.config import InjectionTask
    from memory_infer.campaign.injection import build_network, run_injection
    from memory_infer.commands.rank import memory_snr, ranking_network
    from memory_infer.inputs.settings import CampaignSettings
    from memory_infer.waveform.source_model import signal_parts

    expected = _reference_snr_at_2048()
    source = _consumer_binary()
    # source model: the bilby frequency-domain memory, projected on the same network
    detectors = fresh_detectors("hlv-design", 2048.0)
    parts = signal_parts(detectors[0].frequency_array, **{k: v for k, v in source.items() if k not in SKY},
                         waveform_approximant="IMRPhenomTHM", minimum_frequency=20.0, reference_frequency=20.0)
    polarizations = {"plus": parts["memory_plus"], "cross": parts["memory_cross"]}
    model = np.sqrt(sum(float(np.real(d.optimal_snr_squared(d.get_detector_response(polarizations, SKY))))
                        for d in detectors))
    assert abs(model / expected - 1) < 5e-3  # convergence reference (module docstring)
    # rank
    ranked = memory_snr(dict(source), ranking_network("hlv-design", DURATION, 20.0))
    assert abs(ranked / expected - 1) < 5e-3  # convergence reference (module docstring)
    # a campaign record (zero noise, every injection recovered)
    base = CampaignSettings()
    settings = dataclasses.replace(base, network="hlv-design", noise="zero", seed=1, method="fast", detection_snr=0.0,
                                   data=dataclasses.replace(base.data, duration=DURATION, sampling_rate=2048.0,
                                                            minimum_frequency=20.0),
                                   model=dataclasses.replace(base.model, reference_frequency=20.0))
    record = run_injection(InjectionTask(0, source, 1.0, settings, "work"), build_network(settings))
    assert record["status"] == "ok", record["error"]
    assert abs(record["memory_snr"] / expected - 1) < 5e-3  # convergence reference (module docstring)


@pytest.mark.slow
def test_waveform_command_agrees_with_the_reference(tmp_path):
    from memory_infer.cli import main

    approximant, (m1, m2, _, _) = CASES["18"]
    code = main(["waveform", "--mass-1", str(m1), "--mass-2", str(m2), "--distance", "100", "--inclination",
                 str(INCLINATION), "--phase", str(PHASE), "--sampling-rate", "2048", "--segment", "16",
                 "--outdir", str(tmp_path)])
    assert code == 0
    table = np.loadtxt(tmp_path / "memory_waveform.csv", delimiter=",", skiprows=1)
    times, memory = table[:, 0], table[:, 3] - 1j * table[:, 4]
    expected = on_times(times, "18")
    offset = memory[0] - expected[0]  # the early-inspiral offset: a constant, not in the reference
    # convergence reference (module docstring): the memory's growth within 0.5% at every sample
    assert np.max(np.abs(memory - offset - expected)) < 5e-3 * np.max(np.abs(expected))
