"""Frequency-domain mode models (IMRPhenomXHM, IMRPhenomXPHM) through lalsimulation's
``SimInspiralChooseFDModes``, taken to the time domain for the memory's flux.

Conventions of ``SimInspiralChooseFDModes`` (lalsimulation 6.2, pinned by tests/waveform/models/test_fd_modes.py
against ``SimInspiralChooseFDWaveform``):

- each mode is one series of ``2 N + 1`` samples on ``f = (k - N) deltaF``, negative frequencies first (the
  series' ``f0`` attribute reads 0 nonetheless); ``h_lm(f) = int h_lm(t) e^{-2 pi i f t} dt`` with ``t = 0`` at
  the transform's origin, the time ``SimInspiralChooseFDWaveform`` also refers to. In lalsimulation's
  convention ``h_22 ~ e^{-2 i Phi}`` lives at negative frequencies;
- IMRPhenomXHM (aligned spins): modes generated at phi_ref = 0 and summed with ``-2Y_lm(inclination, pi/2 -
  phi_ref)`` give the polarizations, as for the time-domain models;
- IMRPhenomXPHM: the modes are in the inertial frame of the total angular momentum J (lalsimulation's default
  ``ModesL0Frame = 0``) and depend on phi_ref. The observer sits at polar angle ``thetaJN`` and azimuth 0 of that
  frame, and the polarizations are those of the sum turned by ``2 zeta``: ``h+ - i hx = e^{2 i zeta} sum h_lm
  -2Y_lm(thetaJN, 0)``, with ``thetaJN`` and ``zeta`` from lalsimulation's
  ``SimIMRPhenomXPCalculateModelParametersFromSourceFrame``. This reproduces lalsimulation's polarizations
  built from the same modes (``PhenomXPHMUseModes = 1``) to rounding; its default polarizations twist the
  modes up on a coarser (multibanded) grid of Euler angles and differ from that by ~1e-4 relative.

Time domain: the conditioning of lalsimulation's ``SimInspiralFD`` for frequency-domain models: the modes are
generated from a lower start frequency (chirp time bound at the minimum frequency plus 10%, plus three cycles)
and raised by a half-cosine in |f| between it and the minimum frequency; the segment holds the chirp, merger
and ringdown time bounds (``SimInspiralChirpTimeBound``, ``SimInspiralMergeTimeBound``,
``SimInspiralRingdownTimeBound``). The spectra are generated once up to the model's own cutoff frequency, so a
finer time sampling is an inverse FFT of the same spectra to a higher rate (band-limited interpolation):
:func:`time_modes`; the finer levels of the merger for the memory's flux take only the late stretch of a series
that holds the whole band and interpolate it the same way (:func:`late_modes`), every mode on its own (precessing
modes have no m <-> -m symmetry).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.fft

from .lal_call import call, checked_binary, conditioning_bounds, lal_modules, quiet, walk, waveform_dictionary
from .precessing_twist import twisted_modes
from ..compiled import alternating_columns, first_loud, first_reaching, loud_end
from .refine import QUIET_AMPLITUDE
from .series import MEGAPARSEC_METRES, SOLAR_MASS_SECONDS, ModeSeries

MODELS = ("IMRPhenomXHM", "IMRPhenomXPHM")
PRECESSING = ("IMRPhenomXPHM",)
CUTOFF = 0.3  # the (2, 2) mode's internal cutoff of the IMRPhenomX family, M f (lalsimulation)
# The modes for the memory start this long (s, lalsimulation's chirp time bound) before the merger, or at the
# minimum frequency if that is later: the memory's in-band content comes from the late inspiral and merger, the
# earlier inspiral only adds a slow ramp below the band (its accumulated memory is the leading-order constant
# at the first sample). Checked against modes from the minimum frequency in tests/waveform/test_frequency_source.py.
MEMORY_LEAD = 0.5  # in-band memory within ~2e-4 of modes from 20 Hz (10 + 8 solar masses); halves the cost of 1 s
START_AMPLITUDE = 0.01  # the time-domain modes begin where the (2, 2) mode first reaches this fraction of its peak
RAMP_SAMPLES = 32  # a finer level's stretch rises and falls over this many samples of the band-complete series


@dataclass
class ModeSpectra:
    """Two-sided mode spectra ``(l, m) -> h_lm(f)`` on ``f = (k - N) delta_f`` (SI strain per Hz at the distance).

    ``theta``, ``phi`` are the observer's angles in the modes' frame; ``rotation`` multiplies the complex
    ``h+ - i hx`` summed there to give lalsimulation's polarizations. ``lead`` and ``tail`` (s) bound the signal
    before and after t = 0.
    """

    delta_f: float
    modes: dict
    theta: float
    phi: float
    rotation: complex
    lead: float
    tail: float
    total_mass: float
    luminosity_distance: float
    symmetric_mass_ratio: float
    approximant: str
    aligned_spins: bool
    block: np.ndarray | None = None  # when the modes are the rows of one array, in their order: that array


def time_bounds(mass_1, mass_2, spin_1z, spin_2z, minimum_frequency):
    """(start frequency, lead before t = 0, tail after it) by lalsimulation's bounds, as in SimInspiralFD."""
    lal, lalsim = lal_modules()
    _, merger, extra, start = conditioning_bounds(mass_1, mass_2, spin_1z, spin_2z, minimum_frequency, False)
    m1, m2 = mass_1 * lal.MSUN_SI, mass_2 * lal.MSUN_SI
    lead = lalsim.SimInspiralChirpTimeBound(start, m1, m2, spin_1z, spin_2z) + extra
    return float(start), float(lead), float(merger)


def mode_spectra(approximant, mass_1, mass_2, luminosity_distance, minimum_frequency, spin_1, spin_2,
                 reference_frequency, inclination, phase, duration, mode_list=None,
                 memory_lead: float | None = MEMORY_LEAD, maximum_frequency: float = 0.0) -> ModeSpectra:
    """The conditioned spectra of one binary (see the module docstring); ``duration`` (s) is the shortest buffer
    (0: just long enough for the signal).

    ``memory_lead`` (s): start the modes that long before the merger when that is after the minimum frequency
    (``MEMORY_LEAD``); None starts them at the minimum frequency. ``maximum_frequency`` (Hz): generate the spectra
    at least that far (by default to the model's cutoff)."""
    lal, lalsim = lal_modules()
    precessing = approximant in PRECESSING
    spin_1, spin_2, aligned = checked_binary(approximant, mass_1, mass_2, luminosity_distance, spin_1, spin_2,
                                             precessing, "IMRPhenomXPHM")
    if memory_lead:
        later = lalsim.SimInspiralChirpStartFrequencyBound(float(memory_lead), mass_1 * lal.MSUN_SI,
                                                            mass_2 * lal.MSUN_SI)
        minimum_frequency = max(float(minimum_frequency), float(later))
    start, lead, tail = time_bounds(mass_1, mass_2, spin_1[2], spin_2[2], minimum_frequency)
    length = max(float(duration), 1.25 * (lead + tail))  # the whole signal, a quarter spare against wrap-around
    delta_f = 1.0 / 2 ** np.ceil(np.log2(length))
    mass_s = (mass_1 + mass_2) * SOLAR_MASS_SECONDS
    top = max(1.05 * CUTOFF / mass_s, float(maximum_frequency))  # every mode ends at the cutoff (checked in the tests)
    f_max = delta_f * 2 ** np.ceil(np.log2(top / delta_f))
    phi_ref = float(phase) if precessing else 0.0
    if precessing and not mode_list:  # the J-frame modes from one generation of the co-precessing modes
        with quiet():
            try:
                twisted = twisted_modes(mass_1, mass_2, spin_1, spin_2, delta_f, start, f_max, reference_frequency,
                                        phi_ref, float(inclination), luminosity_distance * MEGAPARSEC_METRES,
                                        2 * int(round(f_max / delta_f)) + 1)
            except RuntimeError:  # lalsimulation's own call below explains the error
                twisted = None
        if twisted is not None:
            return _conditioned(twisted, delta_f, start, minimum_frequency, lead, tail, approximant, mass_1, mass_2,
                                luminosity_distance, reference_frequency, phase, inclination, spin_1, spin_2,
                                precessing, aligned, mode_list)
    arguments = (mass_1 * lal.MSUN_SI, mass_2 * lal.MSUN_SI, *spin_1, *spin_2, delta_f, start, f_max,
                 reference_frequency, phi_ref, luminosity_distance * MEGAPARSEC_METRES, float(inclination),
                 waveform_dictionary(mode_list), lalsim.GetApproximantFromString(approximant))
    linked = call(lalsim.SimInspiralChooseFDModes, arguments, approximant, mass_1, mass_2)
    modes = {key: np.array(series.data.data, dtype=complex) for key, series in walk(linked)}
    return _conditioned(modes, delta_f, start, minimum_frequency, lead, tail, approximant, mass_1, mass_2,
                        luminosity_distance, reference_frequency, phase, inclination, spin_1, spin_2, precessing,
                        aligned, mode_list)


def _conditioned(modes, delta_f, start, minimum_frequency, lead, tail, approximant, mass_1, mass_2,
                 luminosity_distance, reference_frequency, phase, inclination, spin_1, spin_2, precessing, aligned,
                 mode_list) -> ModeSpectra:
    """The :class:`ModeSpectra` of lalsimulation's two-sided modes: lalsimulation's half-cosine window between
    the start and the minimum frequency, and the observer in the modes' frame."""
    lal, lalsim = lal_modules()
    if mode_list:
        modes = {k: v for k, v in modes.items() if k in {tuple(x) for x in mode_list}}
    size = next(iter(modes.values())).size
    half = size // 2
    # the window is 1 from the minimum frequency on: only |f| < f_min (the ramp and below it) is multiplied
    reach = min(half, int(np.ceil(minimum_frequency / delta_f)))
    ramp = slice(half - reach, half + reach + 1)
    frequencies = np.abs((np.arange(ramp.start, ramp.stop) - half) * delta_f)
    window = np.clip((frequencies - start) / max(minimum_frequency - start, delta_f), 0.0, 1.0)
    window = 0.5 - 0.5 * np.cos(np.pi * window)  # lalsimulation's half-cosine between start and f_min
    block = _rows_of_one_block(modes)
    if block is not None:  # one operation on the block (the twisted modes' rows)
        block[:, ramp] *= window
    else:
        modes = {k: _windowed(v, ramp, window) for k, v in modes.items()}
    if precessing:
        values = lalsim.SimIMRPhenomXPCalculateModelParametersFromSourceFrame(
            mass_1 * lal.MSUN_SI, mass_2 * lal.MSUN_SI, reference_frequency, float(phase), float(inclination),
            *spin_1, *spin_2, lal.CreateDict())
        theta, zeta = float(values[3]), float(values[6])  # (chi1_l, chi2_l, chi_p, thetaJN, alpha0, phi_aligned, zeta)
        phi, rotation = 0.0, np.exp(2j * zeta)
    else:
        theta, phi, rotation = float(inclination), float(np.pi / 2 - phase), 1.0 + 0j
    total = mass_1 + mass_2
    return ModeSpectra(delta_f=delta_f, modes=modes, theta=theta, phi=phi, rotation=complex(rotation), lead=lead,
                       tail=tail, total_mass=total, luminosity_distance=luminosity_distance,
                       symmetric_mass_ratio=mass_1 * mass_2 / total ** 2, approximant=approximant,
                       aligned_spins=aligned and not precessing, block=block)


def _rows_of_one_block(modes: dict) -> np.ndarray | None:
    """The 2-D array whose rows, in order, are the values of ``modes`` (as the twist hands them over), else None."""
    block = getattr(modes, "block", None)
    return block if block is not None and block.shape[0] == len(modes) else None


def _columns(series: np.ndarray, low: int, high: int, scale: float, alternate: bool = False) -> np.ndarray:
    """``scale`` times the columns ``low .. high - 1`` of ``series``, counted modulo its length (a circular buffer;
    ``-len < low < high <= len``): one or two contiguous blocks, as ``series[:, np.arange(low, high) % len] *
    scale``, scaled as they are copied. ``alternate`` (an even length): column ``j`` (modulo the length) is also
    multiplied by ``(-1)^j``, in one compiled pass."""
    n = series.shape[1]
    if alternate:
        out = np.empty((series.shape[0], high - low), dtype=series.dtype)
        alternating_columns(series, low, scale, out)
        return out
    if low >= 0 or high <= 0:
        return series[:, low % n:(high - 1) % n + 1] * scale
    out = np.empty((series.shape[0], high - low), dtype=series.dtype)
    np.multiply(series[:, n + low:], scale, out=out[:, :-low])
    np.multiply(series[:, :high], scale, out=out[:, -low:])
    return out


def _windowed(values: np.ndarray, ramp: slice, window: np.ndarray) -> np.ndarray:
    """``values`` (a fresh array, changed in place) times a window that is 1 outside ``ramp``."""
    values[ramp] *= window
    return values


def time_modes(spectra: ModeSpectra, delta_t: float, start_frequency: float | None = None) -> ModeSeries:
    """Modes ``h_lm(t)`` at step ``delta_t`` from ``-lead`` to ``tail`` (s): inverse FFT of the spectra, zero-padded
    (band-limited interpolation) when the rate exceeds the spectra's band. ``start_frequency`` drops the samples
    before the (2, 2) mode reaches that frequency (a finer level needs only the late part)."""
    size = next(iter(spectra.modes.values())).size
    half = size // 2
    n_time = int(round(1.0 / (spectra.delta_f * delta_t)))
    if n_time < 2 * half:  # a coarser rate than the spectra's band: keep what the rate holds
        keep = n_time // 2
        band = slice(half - keep, half + keep)
    else:
        keep, band = half, slice(0, size)
    tail_n = min(int(np.ceil(spectra.tail / delta_t)), n_time // 4)
    lead_n = min(int(np.ceil(spectra.lead / delta_t)), n_time - tail_n - 1)
    index = np.arange(-lead_n, tail_n + 1)
    keys = tuple(spectra.modes)
    width = spectra.modes[keys[0]][band].size  # every column is written when the band fills the buffer
    part = None if spectra.block is None else spectra.block[:, band]
    if part is not None and n_time >= 4 and n_time & (n_time - 1) == 0 and (
            part.shape[1] == n_time or part.shape[1] == n_time + 1 and np.array_equal(part[:, 0], part[:, -1])):
        # the block's rows, f = k delta_f for k = -n/2 .. n/2 - 1 in order, transformed as they are: the transform
        # of k at index k + n/2 is (-1)^j times h_j (undone as the kept samples are copied out). When the rows hold
        # f = +n/2 as well, it equals f = -n/2 (zero past the model's cutoff), so no frequency is lost. Only for a
        # length that is a power of two: there the rotation by n/2 only negates the odd outputs of pocketfft's
        # butterflies, exactly (the same numbers as the rotated buffer; not so for every even length)
        series, alternate = scipy.fft.ifft(part[:, :n_time], axis=1), True
    else:
        buffer = (np.empty if width >= n_time else np.zeros)((len(keys), n_time), dtype=complex)
        # f = k delta_f at index k mod n_time; the k >= 0 part last (it wins at f = N)
        for row, key in enumerate(keys):
            values = spectra.modes[key][band]
            buffer[row, n_time - keep:] = values[:keep]
            buffer[row, :values.size - keep] = values[keep:]
        # row by row, as one transform each (scipy's pocketfft: numpy's numbers, a little faster, in place)
        series, alternate = scipy.fft.ifft(buffer, axis=1, overwrite_x=True), False
    scale = n_time * spectra.delta_f  # h(t) = sum_f h(f) e^{2 pi i f t} df
    key = (2, 2) if (2, 2) in keys else (2, -2)
    if key in keys:  # the samples before the conditioned start hold only the transform's ringing: dropped
        index = index[first_loud(series[keys.index(key)], index[0], index.size, scale, START_AMPLITUDE):]
    # only the samples kept are copied out, scaled (and their alternating signs undone)
    picked = _columns(series, index[0], index[-1] + 1, scale, alternate)
    modes = {key: picked[row] for row, key in enumerate(keys)}
    times = index * delta_t
    start_h22 = None
    if n_time < 2 * half and (2, 2) in keys and start_frequency is None:  # cut below the band: see ModeSeries
        start_h22 = band_values(spectra, (2, 2), times[0], delta_t, min(17, times.size))
    if start_frequency is not None and key in modes:
        h = modes[key]
        step = np.abs(np.angle(h[1:] * np.conj(h[:-1]))) / (2 * np.pi * delta_t)
        loud = np.abs(h[1:]) > 1e-3 * np.abs(h).max()
        first = np.nonzero(loud & (step >= start_frequency))[0]
        if first.size and first[0] > 8:
            cut = first[0] - 8
            times, modes = times[cut:], {k: v[cut:] for k, v in modes.items()}
    return ModeSeries(times=times, modes=modes, total_mass=spectra.total_mass,
                      luminosity_distance=spectra.luminosity_distance,
                      symmetric_mass_ratio=spectra.symmetric_mass_ratio, approximant=spectra.approximant,
                      aligned_spins=spectra.aligned_spins, start_h22=start_h22)


def band_values(spectra: ModeSpectra, key, start: float, step: float, count: int) -> np.ndarray:
    """Mode ``key`` at ``start + j step`` (s), ``j < count``, from every frequency of its spectrum:
    ``sum_f h(f) e^{2 pi i f t} df`` (the samples of :func:`time_modes` at :func:`band_step`, to rounding)."""
    spectrum = spectra.modes[key]
    where = np.flatnonzero(spectrum)
    frequencies = (where - spectrum.size // 2) * spectra.delta_f
    terms = spectrum[where] * np.exp(2j * np.pi * frequencies * start)
    turn = np.exp(2j * np.pi * frequencies * step)
    out = np.empty(count, dtype=complex)
    for j in range(count):
        out[j] = terms.sum() * spectra.delta_f
        terms *= turn
    return out


def band_step(spectra: ModeSpectra) -> float:
    """The step (s) at which a series holds every frequency of the spectra: one over twice their top frequency."""
    return 1.0 / ((next(iter(spectra.modes.values())).size // 2) * 2 * spectra.delta_f)


def late_modes(native: ModeSeries, delta_t: float, start_frequency: float) -> ModeSeries | None:
    """The late part of ``native`` (a series at :func:`band_step` or finer, which holds the whole band) at the finer
    step ``delta_t``, from a few samples before the (2, 2) mode reaches ``start_frequency`` to the end: the stretch
    raised and lowered by half-Hann ramps of ``RAMP_SAMPLES`` and interpolated band-limited (zero-padded FFT). The
    same samples as :func:`time_modes` at that step (the ramps aside) for the cost of the stretch, not of the whole
    buffer; like the interpolated levels (:mod:`.refine`) it ends a few samples after every mode is below
    ``QUIET_AMPLITUDE`` of the (2, 2) peak. None when the stretch would start within the rise of the series or the
    step is coarser than ``native``'s (:func:`time_modes` then)."""
    key = (2, 2) if (2, 2) in native.modes else (2, -2)
    if key not in native.modes or delta_t > native.delta_t * (1 + 1e-9):  # a coarser step: the whole transform
        return None
    h, step = native.modes[key], native.delta_t
    reached, clear = first_reaching(h, step, float(start_frequency), 1e-3)  # one compiled pass, where it is clear
    if not clear:  # within rounding of the start frequency there: numpy's own steps decide
        frequency = np.abs(np.angle(h[1:] * np.conj(h[:-1]))) / (2 * np.pi * step)
        modulus = np.abs(h)
        loud = modulus[1:] > 1e-3 * modulus.max()
        candidates = np.nonzero(loud & (frequency >= start_frequency))[0]
        reached = int(candidates[0]) if candidates.size else -1
    if reached < 8 + RAMP_SAMPLES:
        return None
    first = reached - 8 - RAMP_SAMPLES
    rows = np.array([h[first:]] + [v[first:] for k, v in native.modes.items() if k != key])
    n = min(rows.shape[1], loud_end(rows, QUIET_AMPLITUDE) + 8 + RAMP_SAMPLES)  # to the ringdown's quiet end
    if n < 4 * RAMP_SAMPLES:
        return None
    padded = int(round(n * step / delta_t))
    stretch = rows[:, :n]  # raised and lowered in place: the ramps of :func:`_ramps`, 1 between them
    rise = _ramps(2 * RAMP_SAMPLES)
    stretch[:, :RAMP_SAMPLES] *= rise[:RAMP_SAMPLES]
    stretch[:, n - RAMP_SAMPLES:] *= rise[RAMP_SAMPLES:]
    # the ramped stretch, zero at both ends, is transformed zero-padded to a length with small prime factors (a
    # length with a large prime factor costs pocketfft several times more); the finer samples past its end are
    # dropped. With a whole factor between the steps only: the finer samples then fall on the same times.
    factor = int(round(step / delta_t))
    length = scipy.fft.next_fast_len(n) if abs(factor * delta_t - step) <= 1e-9 * step else n
    total = padded if length == n else length * factor
    spectrum = scipy.fft.fft(stretch, n=length, axis=1)
    buffer = np.zeros((rows.shape[0], total), dtype=complex)
    low = (length + 1) // 2  # non-negative frequencies first, then the negative ones (numpy's order)
    buffer[:, :low], buffer[:, total - (length - low):] = spectrum[:, :low], spectrum[:, low:]
    values = scipy.fft.ifft(buffer, axis=1, overwrite_x=True)[:, :padded]
    values *= total / length
    keys = [key] + [k for k in native.modes if k != key]  # the order of ``rows``
    modes = {k: values[keys.index(k)] for k in native.modes}
    times = native.times[first] + np.arange(padded) * (n * step / padded)
    return ModeSeries(times=times, modes=modes, total_mass=native.total_mass,
                      luminosity_distance=native.luminosity_distance,
                      symmetric_mass_ratio=native.symmetric_mass_ratio, approximant=native.approximant,
                      aligned_spins=native.aligned_spins)


def _ramps(n: int) -> np.ndarray:
    """Ones with half-Hann ramps of ``RAMP_SAMPLES`` at both ends (``n`` samples)."""
    ramp = np.ones(n)
    rise = 0.5 - 0.5 * np.cos(np.pi * (np.arange(RAMP_SAMPLES) + 0.5) / RAMP_SAMPLES)
    ramp[:RAMP_SAMPLES], ramp[n - RAMP_SAMPLES:] = rise, rise[::-1]
    return ramp


def polarizations(spectra: ModeSpectra, theta: float, phi: float, rotation: complex = 1.0) -> dict:
    """``h+(f)`` and ``hx(f)`` for ``f = k delta_f >= 0`` from the mode sum ``rotation sum h_lm(f) -2Y_lm(theta, phi)``
    of the complex ``h = h+ - i hx``: ``h+(f) = (h(f) + conj(h(-f))) / 2``, ``hx(f) = i (h(f) - conj(h(-f))) / 2``."""
    from ..sphere import HarmonicSet

    keys = tuple(spectra.modes)
    weights = HarmonicSet(keys)(theta, phi)
    total = rotation * sum(w * spectra.modes[k] for w, k in zip(weights, keys))
    half = total.size // 2
    positive, negative = total[half:], total[half::-1]
    return {"plus": 0.5 * (positive + np.conj(negative)), "cross": 0.5j * (positive - np.conj(negative))}
