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
:func:`time_modes`.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ...common.errors import WaveformError
from .lal_modes import _explain, _lal, _quiet, waveform_dictionary
from .series import MEGAPARSEC_METRES, SOLAR_MASS_SECONDS, ModeSeries

FD_MODELS = ("IMRPhenomXHM", "IMRPhenomXPHM")
PRECESSING = {"IMRPhenomXPHM"}
CUTOFF = 0.3  # the (2, 2) mode's internal cutoff of the IMRPhenomX family, M f (lalsimulation)
EXTRA_TIME_FRACTION, EXTRA_CYCLES = 0.1, 3.0  # lalsimulation's SimInspiralFD conditioning
# The modes for the memory start this long (s, lalsimulation's chirp time bound) before the merger, or at the
# minimum frequency if that is later: the memory's in-band content comes from the late inspiral and merger, the
# earlier inspiral only adds a slow ramp below the band (its accumulated memory is the leading-order constant
# at the first sample). Checked against modes from the minimum frequency in tests/waveform/test_frequency_source.py.
MEMORY_LEAD = 0.5  # in-band memory within ~2e-4 of modes from 20 Hz (10 + 8 solar masses); halves the cost of 1 s
START_AMPLITUDE = 0.01  # the time-domain modes begin where the (2, 2) mode first reaches this fraction of its peak


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


def is_frequency_domain(approximant: str) -> bool:
    return approximant in FD_MODELS


def time_bounds(mass_1, mass_2, spin_1z, spin_2z, minimum_frequency):
    """(start frequency, lead before t = 0, tail after it) by lalsimulation's bounds, as in SimInspiralFD."""
    lal, lalsim = _lal()
    m1, m2 = mass_1 * lal.MSUN_SI, mass_2 * lal.MSUN_SI
    chirp = lalsim.SimInspiralChirpTimeBound(minimum_frequency, m1, m2, spin_1z, spin_2z)
    final_spin = lalsim.SimInspiralFinalBlackHoleSpinBound(spin_1z, spin_2z)
    merger = lalsim.SimInspiralMergeTimeBound(m1, m2) + lalsim.SimInspiralRingdownTimeBound(m1 + m2, final_spin)
    extra = EXTRA_CYCLES / minimum_frequency
    start = lalsim.SimInspiralChirpStartFrequencyBound((1 + EXTRA_TIME_FRACTION) * chirp + extra, m1, m2)
    lead = lalsim.SimInspiralChirpTimeBound(start, m1, m2, spin_1z, spin_2z) + extra
    return float(start), float(lead), float(merger)


def mode_spectra(approximant, mass_1, mass_2, luminosity_distance, minimum_frequency, spin_1, spin_2,
                 reference_frequency, inclination, phase, duration, mode_list=None,
                 memory_lead: float | None = MEMORY_LEAD) -> ModeSpectra:
    """The conditioned spectra of one binary (see the module docstring); ``duration`` (s) is the shortest buffer
    (0: just long enough for the signal).

    ``memory_lead`` (s): start the modes that long before the merger when that is after the minimum frequency
    (``MEMORY_LEAD``); None starts them at the minimum frequency."""
    lal, lalsim = _lal()
    spin_1, spin_2 = np.asarray(spin_1, float), np.asarray(spin_2, float)
    if not (mass_1 > 0 and mass_2 > 0 and luminosity_distance > 0):
        raise WaveformError("masses and luminosity distance must be positive")
    precessing = approximant in PRECESSING
    aligned = bool(max(abs(spin_1[0]), abs(spin_1[1]), abs(spin_2[0]), abs(spin_2[1])) <= 1e-8)  # as np.allclose
    if not precessing and not aligned:
        raise WaveformError(f"waveform model '{approximant}' takes aligned spins only; use IMRPhenomXPHM")
    if memory_lead:
        later = lalsim.SimInspiralChirpStartFrequencyBound(float(memory_lead), mass_1 * lal.MSUN_SI,
                                                            mass_2 * lal.MSUN_SI)
        minimum_frequency = max(float(minimum_frequency), float(later))
    start, lead, tail = time_bounds(mass_1, mass_2, spin_1[2], spin_2[2], minimum_frequency)
    length = max(float(duration), 1.25 * (lead + tail))  # the whole signal, a quarter spare against wrap-around
    delta_f = 1.0 / 2 ** np.ceil(np.log2(length))
    mass_s = (mass_1 + mass_2) * SOLAR_MASS_SECONDS
    top = 1.05 * CUTOFF / mass_s  # every mode's spectrum ends at the model's cutoff (checked in the tests)
    f_max = delta_f * 2 ** np.ceil(np.log2(top / delta_f))
    params = waveform_dictionary(mode_list)
    phi_ref = float(phase) if precessing else 0.0
    arguments = (mass_1 * lal.MSUN_SI, mass_2 * lal.MSUN_SI, *spin_1, *spin_2, delta_f, start, f_max,
                 reference_frequency, phi_ref, luminosity_distance * MEGAPARSEC_METRES, float(inclination), params,
                 lalsim.GetApproximantFromString(approximant))
    try:
        with _quiet(None):
            linked = lalsim.SimInspiralChooseFDModes(*arguments)
    except RuntimeError:
        import io

        capture = io.StringIO()
        try:
            with _quiet(capture):
                lalsim.SimInspiralChooseFDModes(*arguments)
        except RuntimeError as error:
            raise WaveformError(_explain(approximant, capture.getvalue(), error, mass_1, mass_2)) from None
        raise WaveformError(f"waveform model '{approximant}' failed once and then succeeded") from None
    modes = {}
    while linked is not None:
        modes[(int(linked.l), int(linked.m))] = np.array(linked.mode.data.data, dtype=complex)
        linked = linked.next
    if mode_list:
        modes = {k: v for k, v in modes.items() if k in {tuple(x) for x in mode_list}}
    size = next(iter(modes.values())).size
    frequencies = np.abs((np.arange(size) - size // 2) * delta_f)
    window = np.clip((frequencies - start) / max(minimum_frequency - start, delta_f), 0.0, 1.0)
    window = 0.5 - 0.5 * np.cos(np.pi * window)  # lalsimulation's half-cosine between start and f_min
    modes = {k: v * window for k, v in modes.items()}
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
                       aligned_spins=aligned and not precessing)


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
    modes = {}
    for key, spectrum in spectra.modes.items():
        buffer = np.zeros(n_time, dtype=complex)
        part = spectrum[band]
        k = np.arange(-keep, -keep + part.size)
        buffer[k % n_time] = part
        series = np.fft.ifft(buffer) * (n_time * spectra.delta_f)  # h(t) = sum_f h(f) e^{2 pi i f t} df
        modes[key] = series[index % n_time]
    times = index * delta_t
    key = (2, 2) if (2, 2) in modes else (2, -2)
    if key in modes:  # the samples before the conditioned start hold only the transform's ringing: dropped
        first = int(np.argmax(np.abs(modes[key]) >= START_AMPLITUDE * np.abs(modes[key]).max()))
        times, modes = times[first:], {k: v[first:] for k, v in modes.items()}
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
                      aligned_spins=spectra.aligned_spins)


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
