"""From modes to detector-ready polarizations: mode sum, memory, and the frequency domain.

Frame (pinned by tests/waveform/test_source.py against ``SimInspiralChooseTDWaveform``): modes are generated
at phi_ref = 0 and summed at polar angle = inclination and azimuth ``pi/2 - phase``.

Frequency domain (README, "Conventions"): the peak sits at t = 0 of a circular buffer of the segment's
length, the inspiral wraps to the buffer's end, and the memory plateau after the ringdown is
brought back to its pre-inspiral value by a raised-cosine taper of ``taper_duration`` seconds, so
the permanent step has no wrap-around jump and its taper's spectrum lies below the band.
"""
from __future__ import annotations

import dataclasses
import functools
from collections import OrderedDict
from dataclasses import dataclass, field
from functools import lru_cache

import numpy as np
import scipy.fft

from ..common.errors import WaveformError
from .compiled import phase_ramp, split_spectrum, weighted_sum
from .memory import memory_at_direction
from .conditioning import (LIBRARY, Conditioning, conditioned_series, conditioning, frequency_bounds,
                           library_polarizations)
from .models import ModeSeries, generate_modes
from .models import analytic
from .options import Binary, ModesRequest, SourceOptions
from .sphere import HarmonicSet

MINIMUM_TAPER_DURATION = 0.1  # s, below this the taper leaks into the band


def observer_angles(inclination: float, phase: float):
    """(theta, phi) of the observer in the modes' frame: ``(inclination, pi/2 - phase)``."""
    return float(inclination), float(np.pi / 2 - phase)


@lru_cache(maxsize=64)
def _harmonic_set(modes: tuple) -> HarmonicSet:
    return HarmonicSet(modes)


def mode_sum(modes: dict, theta: float, phi: float) -> np.ndarray:
    """``h_plus - i h_cross = sum_lm h_lm -2Y_lm(theta, phi)``."""
    keys = tuple(modes)
    harmonics = _harmonic_set(keys)(theta, phi)
    total = np.zeros(len(next(iter(modes.values()))), dtype=complex)
    weighted_sum(tuple(np.ascontiguousarray(modes[key], dtype=complex) for key in keys), harmonics, total)
    return total


@dataclass
class TimeSignal:
    """Complex strains ``h+ - i hx`` (SI) of the oscillatory signal and of the memory, at ``times`` (s)."""

    times: np.ndarray
    oscillatory: np.ndarray
    memory: np.ndarray
    early_inspiral_memory: float  # |memory| offset added for the inspiral before the first sample


def combined(oscillatory, memory, amplitude):
    """The signal for memory amplitude A, ``oscillatory + amplitude x memory``: arrays (or arrays of A
    broadcast against them), or dicts of polarizations with the same keys."""
    if isinstance(oscillatory, dict):
        return {key: oscillatory[key] + amplitude * memory[key] for key in oscillatory}
    return oscillatory + amplitude * memory


def time_signal(series: ModeSeries, inclination: float, phase: float,
                early_inspiral: bool = True, include_memory: bool = True) -> TimeSignal:
    """Oscillatory and memory strain towards the observer, SI units.

    The memory uses every coupled degree (exact mode sum) and takes its flux from ``series.finer``
    where the data's grid does not resolve the merger; ``early_inspiral`` adds the leading-order
    memory of the inspiral before the model's first sample (for precessing models along the initial
    orbital angular momentum), a constant that moves only the zero-frequency bin, never ln L.
    """
    theta, phi = observer_angles(inclination, phase)
    oscillatory = mode_sum(series.modes, theta, phi)
    if not include_memory:
        return TimeSignal(series.times, oscillatory, np.zeros(series.times.size, complex), 0.0)
    memory = memory_towards(series, theta, phi, early_inspiral)
    offset = float(abs(memory[0]))
    return TimeSignal(series.times, oscillatory, memory, offset)


def memory_towards(series: ModeSeries, theta: float, phi: float, early_inspiral: bool = True) -> np.ndarray:
    """Complex memory ``h+ - i hx`` (SI) at ``series.times`` towards ``(theta, phi)`` of the modes' frame
    (:func:`.memory.memory_at_direction`, its flux from ``series.finer`` where the grid does not resolve it)."""
    geometric_times, strain_modes = series.geometric(scaled=False)  # SI strain, times in M
    return memory_at_direction(strain_modes, geometric_times, theta, phi, early_inspiral=early_inspiral,
                               symmetric_mass_ratio=series.symmetric_mass_ratio,
                               finer=series.geometric_finer(scaled=False), mode_scale=series.strain_scale,
                               start_h22=series.start_h22)


EARLY_INSPIRAL_EFFECT = ("a constant over the whole segment: it moves only the zero-frequency bin, which the "
                         "likelihood does not use, so ln L and every Bayes factor are the same with or without it; "
                         "it changes only the plotted level of the memory")


def start_taper(n_samples: int, n_taper: int) -> np.ndarray:
    """Half-Hann rise over the first ``n_taper`` samples (removes the model's abrupt start)."""
    window = np.ones(n_samples)
    n_taper = min(n_taper, n_samples)
    if n_taper > 1:
        window[:n_taper] = _half_hann(n_taper, True)
    return window


@lru_cache(maxsize=16)
def _half_hann(n_taper: int, rising: bool) -> np.ndarray:
    """``0.5 (1 -+ cos(pi k / n))`` for k < n: the start taper's rise, or the memory taper's fall (read only)."""
    cosine = np.cos(np.pi * np.arange(n_taper) / max(n_taper, 1))
    window = 0.5 * (1 - cosine) if rising else 0.5 * (1 + cosine)
    window.flags.writeable = False
    return window


def circular_layout(signal: TimeSignal, n_buffer: int, delta_t: float, taper_duration: float,
                    start_taper_duration: float):
    """Lay the signal on a circular buffer, peak at index 0; returns (oscillatory, memory, shift).

    ``shift`` is the time of buffer index 0 relative to the peak (|shift| <= delta_t / 2).
    If the model is longer than the buffer allows, its earliest inspiral is dropped: the memory
    keeps all it accumulated there, since it is integrated before truncation.
    """
    times, oscillatory, memory = signal.times, signal.oscillatory, signal.memory
    n_taper = int(round(taper_duration / delta_t))
    spare = n_buffer - times.size - n_taper  # samples left over
    if spare < 0:
        drop = -spare
        if -times[0] / delta_t - drop < int(round(MINIMUM_TAPER_DURATION / delta_t)):
            raise WaveformError(
                f"the segment of {n_buffer * delta_t:g} s is too short for this signal and a "
                f"{taper_duration:g} s memory taper; use a longer segment or a shorter taper")
        times, oscillatory, memory = times[drop:], oscillatory[drop:], memory[drop:]
    oscillatory = np.array(oscillatory, dtype=complex)  # a copy: the start is tapered in place
    n_start = min(int(round(start_taper_duration / delta_t)), times.size)
    if n_start > 1:
        oscillatory[:n_start] *= _half_hann(n_start, True)  # start_taper's window (times 1 after it)
    peak_index = int(round(-times[0] / delta_t))
    shift = float(times[0] + peak_index * delta_t)
    buffer_oscillatory = np.zeros(n_buffer, dtype=complex)
    buffer_memory = np.full(n_buffer, memory[0], dtype=complex)
    # sample k goes to index (k - peak_index) mod n_buffer: the peak and after from 0, the earlier part at the end
    if 0 <= peak_index <= times.size:
        buffer_oscillatory[:times.size - peak_index] = oscillatory[peak_index:]
        buffer_memory[:times.size - peak_index] = memory[peak_index:]
        if peak_index:
            buffer_oscillatory[n_buffer - peak_index:] = oscillatory[:peak_index]
            buffer_memory[n_buffer - peak_index:] = memory[:peak_index]
    else:
        index = (np.arange(times.size) - peak_index) % n_buffer
        buffer_oscillatory[index], buffer_memory[index] = oscillatory, memory
    fall = memory[0] + (memory[-1] - memory[0]) * _half_hann(n_taper, False)
    begin = (times.size - peak_index) % n_buffer  # the fall fills indices begin, begin + 1, ... (mod n_buffer)
    first_part = min(n_taper, n_buffer - begin)
    buffer_memory[begin:begin + first_part] = fall[:first_part]
    buffer_memory[:n_taper - first_part] = fall[first_part:]
    return buffer_oscillatory, buffer_memory, shift


def truncated_start_frequency(series: ModeSeries, n_buffer: int, taper_duration: float):
    """Frequency (Hz) of the (2, 2) mode where :func:`circular_layout` cuts the model's start.

    None when the whole model fits the segment. When the result lies above the analysis's minimum
    frequency, in-band inspiral is missing from the model (the memory keeps what it accumulated there).
    """
    delta_t = series.delta_t
    n_taper = int(round(taper_duration / delta_t))
    drop = series.times.size + n_taper - n_buffer
    if drop <= 0:
        return None
    h = series.modes[(2, 2)][drop:drop + 2]
    return float(abs(np.angle(h[1] * np.conj(h[0]))) / (2 * np.pi * delta_t))


def to_frequency_domain(buffer: np.ndarray, delta_t: float, shift: float, frequency_array, phase=None) -> dict:
    """One-sided transform ``h(f) = dt * FFT`` of a complex ``h+ - i hx`` buffer, as plus and cross.

    ``phase``: :func:`shift_phase` of the same arguments, when the caller transforms several buffers."""
    if phase is None:
        phase = shift_phase(frequency_array, shift, delta_t)
    # one complex transform of h+ - i hx, split into the transforms of its two real parts (equal to two real
    # transforms to rounding, and faster)
    spectrum = scipy.fft.fft(np.asarray(buffer, dtype=complex))
    plus, cross = np.empty(phase.size, dtype=complex), np.empty(phase.size, dtype=complex)
    split_spectrum(spectrum, np.ascontiguousarray(phase, dtype=complex), plus, cross)
    return {"plus": plus, "cross": cross}


def shift_phase(frequency_array, shift: float, delta_t: float) -> np.ndarray:
    """``dt exp(-2 pi i f shift)``: the transform's scale and the buffer's offset from the peak (a compiled
    phase ramp, equal to numpy's ``exp`` to rounding)."""
    frequency_array = np.ascontiguousarray(frequency_array, dtype=float)
    out = np.empty(frequency_array.size, dtype=complex)
    phase_ramp(frequency_array, -2 * np.pi * float(shift), float(delta_t), out)
    return out


def segment_geometry(frequency_array):
    """(n_buffer, delta_t) of the time segment behind a one-sided frequency array from 0 Hz."""
    frequency_array = np.asarray(frequency_array)
    if frequency_array[0] != 0 or frequency_array.size < 3:
        raise WaveformError("the frequency array must start at 0 Hz with uniform spacing")
    n_buffer = 2 * (frequency_array.size - 1)
    delta_t = 1.0 / (2 * frequency_array[-1])
    return n_buffer, delta_t


def lalsimulation_spins(binary: Binary, reference_frequency: float):
    """(inclination, spin_1, spin_2) in lalsimulation's frame from bilby's spin angles."""
    from bilby.gw.conversion import bilby_to_lalsimulation_spins

    a_1, a_2, tilt_1, tilt_2 = binary.a_1, binary.a_2, binary.tilt_1, binary.tilt_2
    if max(abs(np.sin(tilt_1)), abs(np.sin(tilt_2))) <= 1e-8 or (a_1 == 0 and a_2 == 0):  # as np.allclose
        return (binary.theta_jn, (0.0, 0.0, a_1 * np.cos(tilt_1)), (0.0, 0.0, a_2 * np.cos(tilt_2)))
    from bilby.core.utils import solar_mass

    iota, s1x, s1y, s1z, s2x, s2y, s2z = bilby_to_lalsimulation_spins(
        theta_jn=binary.theta_jn, phi_jl=binary.phi_jl, tilt_1=tilt_1, tilt_2=tilt_2, phi_12=binary.phi_12, a_1=a_1,
        a_2=a_2, mass_1=binary.mass_1 * solar_mass, mass_2=binary.mass_2 * solar_mass,
        reference_frequency=reference_frequency, phase=binary.phase)
    return iota, (s1x, s1y, s1z), (s2x, s2y, s2z)


@dataclass
class SourceCache:
    """Recent results of one waveform generator: modes at 1 Mpc keyed on their :class:`.options.ModesRequest`
    (distance only rescales, angles only re-sum) and frequency-domain parts keyed on the binary and the options
    (varying only the memory amplitude costs nothing). Owned by one generator, never shared."""

    modes_size: int = 8
    parts_size: int = 4
    modes: OrderedDict = field(default_factory=OrderedDict)
    parts: OrderedDict = field(default_factory=OrderedDict)

    @staticmethod
    def _recall(table: OrderedDict, key, make, size: int):
        if key in table:
            table.move_to_end(key)
            return table[key]
        value = make()
        table[key] = value
        if len(table) > size:
            table.popitem(last=False)
        return value

    def recall_modes(self, request: ModesRequest, make):
        return self._recall(self.modes, request, make, self.modes_size)

    def recall_parts(self, key, make):
        return self._recall(self.parts, key, make, self.parts_size)


def _plan(frequency_array, binary: Binary, options: SourceOptions, spin_1, spin_2) -> Conditioning | None:
    """How the model's oscillatory signal is conditioned as bilby does (None for the analytic test model).

    The modes are generated where the conditioning starts them, on its step; when that step is not the data's
    (a maximum frequency below the data's Nyquist frequency that rounds to a smaller power of two) the
    oscillatory signal is bilby's own call and the memory's modes are generated on the data's step."""
    if options.approximant == analytic.NAME:
        return None
    _, delta_t = segment_geometry(frequency_array)
    maximum = float(frequency_array[-1]) if options.maximum_frequency is None else options.maximum_frequency
    minimum = options.minimum_frequency
    plan = conditioning(options.approximant, binary.mass_1, binary.mass_2, float(spin_1[2]), float(spin_2[2]),
                        minimum, maximum, frequency_array)
    if plan.route != LIBRARY and abs(plan.delta_t - delta_t) > 1e-12 * delta_t:
        plan = dataclasses.replace(plan, route=LIBRARY, start_frequency=minimum, delta_t=delta_t)
    return plan


def unit_distance_modes(request: ModesRequest) -> ModeSeries:
    """The modes of ``request`` at 1 Mpc: distance, inclination and phase reuse them."""
    return generate_modes(request.approximant, request.mass_1, request.mass_2, 1.0, request.delta_t,
                          request.minimum_frequency, request.spin_1, request.spin_2, request.reference_frequency,
                          request.mode_list, finer_for_memory=request.finer_for_memory)


def time_domain_modes(frequency_array, binary: Binary, options: SourceOptions, cache: SourceCache | None = None):
    """(inclination, modes at 1 Mpc, conditioning) of a time-domain model; the modes come from ``cache``."""
    _, delta_t = segment_geometry(frequency_array)
    inclination, spin_1, spin_2 = lalsimulation_spins(binary, options.reference_frequency)
    plan = _plan(frequency_array, binary, options, spin_1, spin_2)
    request = ModesRequest(options.approximant, binary.mass_1, binary.mass_2, delta_t,
                           options.minimum_frequency if plan is None else plan.start_frequency,
                           tuple(float(x) for x in spin_1), tuple(float(x) for x in spin_2),
                           options.reference_frequency, options.mode_list, options.include_memory)
    make = functools.partial(unit_distance_modes, request)
    return inclination, (make() if cache is None else cache.recall_modes(request, make)), plan


def time_domain_parts(frequency_array, binary: Binary, options: SourceOptions, cache: SourceCache | None) -> dict:
    """Frequency-domain oscillatory (``plus``, ``cross``) and memory (``memory_plus``, ``memory_cross``) parts of a
    time-domain model, SI at the distance."""
    n_buffer, delta_t = segment_geometry(frequency_array)
    inclination, series, plan = time_domain_modes(frequency_array, binary, options, cache)
    include_memory = options.include_memory
    signal = time_signal(series, inclination, binary.phase, options.early_inspiral, include_memory)
    scale = 1.0 / binary.luminosity_distance
    taper = options.taper_duration
    if plan is None:  # the analytic test model: its own layout, a half-Hann rise over two cycles at the start
        start_duration = 2.0 / max(options.minimum_frequency, 1.0)
        oscillatory, memory, shift = circular_layout(signal, n_buffer, delta_t, taper, start_duration)
        phase = shift_phase(frequency_array, shift, delta_t)
        osc = to_frequency_domain(oscillatory * scale, delta_t, shift, frequency_array, phase)
        mem = to_frequency_domain(memory * scale, delta_t, shift, frequency_array, phase)
    else:
        osc = _oscillatory(frequency_array, signal, plan, binary, options, scale)
        if include_memory:
            memory_only = TimeSignal(signal.times, np.zeros(signal.times.size, complex), signal.memory,
                                     signal.early_inspiral_memory)
            _, memory, shift = circular_layout(memory_only, n_buffer, delta_t, taper, 0.0)
            mem = to_frequency_domain(memory * scale, delta_t, shift, frequency_array)
    if not include_memory:
        mem = {"plus": np.zeros_like(osc["plus"]), "cross": np.zeros_like(osc["cross"])}
    return {"plus": osc["plus"], "cross": osc["cross"], "memory_plus": mem["plus"], "memory_cross": mem["cross"]}


def _oscillatory(frequency_array, signal: TimeSignal, plan: Conditioning, binary, options, scale) -> dict:
    """The oscillatory polarizations as bilby's ``lal_binary_black_hole`` gives them (:mod:`.conditioning`)."""
    if plan.route == LIBRARY:
        return library_polarizations(frequency_array, binary, options)
    plus, cross, start = conditioned_series(float(signal.times[0]), signal.oscillatory, plan)
    spectra = to_frequency_domain(plus - 1j * cross, plan.delta_t, start, frequency_array)
    keep = frequency_bounds(frequency_array, plan) * scale
    return {"plus": spectra["plus"] * keep, "cross": spectra["cross"] * keep}
