"""lalsimulation's frequency-domain modes (SimInspiralChooseFDModes): conventions pinned against its own
polarizations (SimInspiralChooseFDWaveform), and the time-domain modes they give."""
import numpy as np
import pytest

from memory_infer.common.errors import WaveformError
from memory_infer.waveform.models import generate_modes, takes_precessing_spins
from memory_infer.waveform.models.fd_modes import (RAMP_SAMPLES, _columns, band_step, late_modes, mode_spectra,
                                                   polarizations, time_modes)
from memory_infer.waveform.source import observer_angles

CASES = [("IMRPhenomXHM", (0, 0, 0.3), (0, 0, -0.2)), ("IMRPhenomXPHM", (0.4, 0.1, 0.3), (0.1, -0.3, -0.2))]


def lalsimulation_polarizations(approximant, spin_1, spin_2, delta_f, f_max, inclination, phase, use_modes=False):
    import lal  # a hard dependency: missing, the test fails
    import lalsimulation as lalsim
    params = lal.CreateDict()
    if use_modes:
        lalsim.SimInspiralWaveformParamsInsertPhenomXPHMUseModes(params, 1)
    plus, cross = lalsim.SimInspiralChooseFDWaveform(
        30 * lal.MSUN_SI, 20 * lal.MSUN_SI, *spin_1, *spin_2, 400e6 * lal.PC_SI, inclination, phase, 0, 0, 0,
        delta_f, 20.0, f_max, 20.0, params, lalsim.GetApproximantFromString(approximant))
    return np.array(plus.data.data), np.array(cross.data.data)


@pytest.mark.parametrize("approximant, spin_1, spin_2", CASES)
def test_mode_sum_reproduces_lalsimulation_polarizations(approximant, spin_1, spin_2):
    # reference library: lalsimulation SimInspiralChooseFDWaveform (tolerance 1e-6 relative, CHECKS of the project)
    inclination, phase = 0.8, 1.1
    spectra = mode_spectra(approximant, 30.0, 20.0, 400.0, 20.0, spin_1, spin_2, 20.0, inclination, phase, 4.0,
                           memory_lead=None)
    if approximant == "IMRPhenomXHM":  # modes at phi_ref = 0, observer at (inclination, pi/2 - phase)
        ours = polarizations(spectra, *observer_angles(inclination, phase))
    else:  # J-frame modes, observer at (thetaJN, 0), polarizations turned by 2 zeta
        ours = polarizations(spectra, spectra.theta, spectra.phi, spectra.rotation)
    f_max = spectra.delta_f * (ours["plus"].size - 1)
    # IMRPhenomXPHM's default polarizations twist up on a multibanded grid of Euler angles; lalsimulation's own
    # polarizations from its modes (PhenomXPHMUseModes = 1) are the exact reference, the default is ~1e-4 off
    plus, cross = lalsimulation_polarizations(approximant, spin_1, spin_2, spectra.delta_f, f_max, inclination, phase,
                                              use_modes=approximant == "IMRPhenomXPHM")
    f = np.arange(plus.size) * spectra.delta_f
    band = (f > 21.0) & (f < 1000.0)  # above the start taper of the conditioned modes
    scale = np.max(np.abs(plus[band]))
    assert np.max(np.abs(ours["plus"][band] - plus[band])) < 1e-6 * scale
    assert np.max(np.abs(ours["cross"][band] - cross[band])) < 1e-6 * scale
    if approximant == "IMRPhenomXPHM":
        plus, _ = lalsimulation_polarizations(approximant, spin_1, spin_2, spectra.delta_f, f_max, inclination, phase)
        assert np.max(np.abs(ours["plus"][band] - plus[band])) < 1e-3 * scale  # measured 7e-5


def test_columns_of_the_circular_transform_equal_the_gather_by_index():
    # the kept samples are copied out, scaled, as one or two blocks; reference: numpy's gather modulo the length
    # times the scale (no source), to the last bit
    series = np.random.default_rng(3).normal(size=(3, 16)) * (1 + 1j)
    for low in range(-15, 16):
        for high in range(low + 1, min(low + 16, 16) + 1):
            assert np.array_equal(_columns(series, low, high, 0.37), series[:, np.arange(low, high) % 16] * 0.37)
            signs = np.where(np.arange(low, high) % 2, -0.37, 0.37)  # alternate: (-1)^j of the column j mod 16
            assert np.array_equal(_columns(series, low, high, 0.37, True),
                                  series[:, np.arange(low, high) % 16] * signs)


def test_a_half_length_rotation_only_negates_odd_outputs_for_powers_of_two():
    # the property the block path rests on, for every power-of-two length it can meet (reference: scipy's pocketfft
    # itself, no source); it does not hold for every even length (202 = 2 x 101 fails), which take the buffer path
    import scipy.fft

    rng = np.random.default_rng(9)
    for power in range(2, 18):
        n = 2 ** power
        x = rng.normal(size=(2, n)) + 1j * rng.normal(size=(2, n))
        signs = np.where(np.arange(n) % 2, -1.0, 1.0)
        assert np.array_equal(scipy.fft.ifft(np.roll(x, n // 2, axis=1), axis=1), scipy.fft.ifft(x, axis=1) * signs), n


@pytest.mark.parametrize("rate", [1024.0, 2048.0, 8192.0, 2048.5, 2018.0])
def test_time_modes_from_the_block_as_ordered_equal_the_rotated_buffer_bit_for_bit(rate):
    # the twisted modes' block is transformed as it is ordered (from f = -n/2) and its alternating signs undone; it
    # must give the samples of the transform of the rotated buffer (k >= 0 first) to the last bit: a rotation by n/2
    # only negates the odd outputs of pocketfft's butterflies exactly (reference: the rotated-buffer path, no source).
    # 1024 Hz cuts the band (the block's rows hold exactly n frequencies), 2048 Hz holds it with f = +n/2 as well,
    # 8192 Hz zero-pads, 2048.5 Hz (an odd length, 4097) and 2018 Hz (4036 = 4 x 1009) are not powers of two (the
    # buffer path then)
    import dataclasses

    spectra = mode_spectra("IMRPhenomXPHM", 36.0, 29.0, 1.0, 20.0, (0.3, 0.1, 0.3), (-0.2, 0.1, -0.3), 20.0, 0.9,
                           0.7, 0.0)
    assert spectra.block is not None
    as_rows = dataclasses.replace(spectra, block=None, modes=dict(spectra.modes))  # the per-row buffer path
    ours, theirs = time_modes(spectra, 1 / rate), time_modes(as_rows, 1 / rate)
    assert np.array_equal(ours.times, theirs.times)
    for key in theirs.modes:
        assert np.array_equal(ours.modes[key], theirs.modes[key]), key


def test_spectra_end_at_the_model_cutoff_and_time_modes_keep_the_convention():
    spectra = mode_spectra("IMRPhenomXHM", 30.0, 20.0, 1.0, 20.0, (0, 0, 0.3), (0, 0, -0.2), 20.0, 0.8, 1.1, 4.0)
    size = spectra.modes[(2, 2)].size
    f = (np.arange(size) - size // 2) * spectra.delta_f
    mass_s = 50 * 4.925490947641267e-06
    for key, spectrum in spectra.modes.items():
        loud = np.abs(spectrum) > 1e-8 * np.abs(spectrum).max()
        assert np.max(np.abs(f[loud])) * mass_s < 0.3  # the IMRPhenomX cutoff, below the generated band
        assert np.all(np.sign(f[loud]) == -np.sign(key[1]))  # h_lm with m > 0 at negative frequencies
    series = time_modes(spectra, 1 / 4096)
    # lalsimulation's convention (h_22 = +8 sqrt(pi/5) eta x e^{-2i Phi}): the (2, 2) phase decreases
    phase = np.unwrap(np.angle(series.modes[(2, 2)]))
    loud = np.abs(series.modes[(2, 2)]) > 0.1 * np.abs(series.modes[(2, 2)]).max()
    assert np.all(np.diff(phase)[loud[1:]] < 0)
    peak = series.times[np.argmax(np.abs(series.modes[(2, 2)]))]
    assert abs(peak) < 0.01  # the transform's origin is the merger, as in SimInspiralChooseFDWaveform
    # a finer rate is band-limited interpolation of the same spectra: it agrees on the common samples
    finer = time_modes(spectra, 1 / 16384)
    common = np.interp(series.times, finer.times, finer.modes[(2, 2)].real)
    assert np.max(np.abs(common - series.modes[(2, 2)].real)) < 1e-3 * np.abs(series.modes[(2, 2)]).max()
    # a finer level cut from the band-complete series (a short zero-padded FFT) gives the whole transform's samples
    native = time_modes(spectra, band_step(spectra))
    level = late_modes(native, 1 / 16384, 100.0)
    inside = (level.times > level.times[0] + 2 * RAMP_SAMPLES * native.delta_t) & (level.times < 0.02)
    assert inside.sum() > 100 and level.times[0] > series.times[0] + 0.1  # the late part only
    for key in ((2, 2), (3, 3), (2, -1)):
        whole = finer.modes[key][np.searchsorted(finer.times, level.times[inside] - 1e-9)]
        assert np.max(np.abs(level.modes[key][inside] - whole)) < 1e-5 * np.abs(finer.modes[(2, 2)]).max(), key


def test_frequency_domain_models_and_refusals():
    assert takes_precessing_spins("IMRPhenomXPHM") and not takes_precessing_spins("IMRPhenomXHM")
    with pytest.raises(WaveformError, match="aligned spins only"):
        mode_spectra("IMRPhenomXHM", 30.0, 20.0, 1.0, 20.0, (0.3, 0, 0), (0, 0, 0), 20.0, 0.8, 1.1, 4.0)
    with pytest.raises(WaveformError, match="frequency-domain modes"):
        generate_modes("IMRPhenomXHM", 30.0, 20.0, 400.0, 1 / 4096, 20.0)
    with pytest.raises(WaveformError, match="eccentric") as caught:  # pyseobnr's eccentric model does not run here
        generate_modes("SEOBNRv5EHM", 30.0, 20.0, 400.0, 1 / 4096, 20.0)
    assert "\n" not in str(caught.value)
