"""Finer samplings of a binary's late inspiral and merger, so the memory's energy flux converges.

The memory integrates ``|dh/dt|^2``. A fourth-order difference errs by about ``(omega dt)^4 / 30`` in
the derivative, so modes sampled at the data's rate lose the flux of a light binary's merger and
ringdown, which ring near or above the data's Nyquist frequency (README, Conventions). Here the late part is
sampled again at steps divided by four level by level: each level is used from the first sample at which the
previous one no longer resolves the dominant (2, +-2) mode (phase step above ``PHASE_STEP_LIMIT``). The needed
step thus follows from the binary itself: its mass sets where the inspiral outruns the grid and its ringdown
frequency ends the ladder. Only the late part is sampled finely; the oscillatory strain stays at the
data's rate.

Aligned spins on a data grid of at most ``INTERPOLATION_STEP`` M (``INSPIRAL_STEP`` M for models that end loud,
inspiral-only ones such as TaylorT4): each level interpolates the data-rate modes (sixth-order Lagrange in
amplitude and phase, the phase continued through the ringdown by the (2, 2) mode's, see
:func:`interpolated_level`) over the merger only; no new model call. The finest level reaches the modes' last
sample (end-biased stencils on the last two intervals), so a model still loud there keeps its last flux. The
convergence table (benchmarks/convergence.py, tests/waveform/models/test_refine.py) checks it against modes 16
times finer.

Frequency-domain models (:mod:`memory_infer.waveform.frequency_source`) cut every level from their mode spectra,
whatever the spins (``cut_from_spectra``): exact at every step, with the band above the data's Nyquist frequency.

Coarser grids (light binaries at low rates) and precessing spins call the model again. Each such level is
the same binary from a later start frequency (``START_FRACTION`` of the (2, 2) frequency where it is first
used, about 0.3 tau earlier). Models that accept a reference frequency below the start frequency keep the
original one (same phase convention); the others (TaylorT4) get the level's start frequency as reference and
are rotated about the orbital axis onto the coarse level (aligned spins only). For precessing spins a later
reference frequency would describe another binary, so the fine level is generated from the original start
and reference frequencies (slower, exact), unless the model gives its own interpolated levels (``interpolate``:
SEOBNRv5PHM's co-precessing modes and rotation from the same call, :mod:`.pyseobnr_modes`).
"""
from __future__ import annotations

import dataclasses
import functools
import logging
from functools import lru_cache

import numpy as np

from ...common.errors import WaveformError
from ..compiled import dominant_steps, first_fast_dominant, first_fast_probe, first_unresolved_step, interpolated_rows
from .series import ModeSeries

logger = logging.getLogger("memory_infer")

PHASE_STEP_LIMIT = 0.3  # rad per sample of the (2, +-2) mode: derivative error (0.3)^4 / 30 = 3e-4
START_FRACTION = 0.9  # a level starts at 0.9 of the frequency where it is first used (about 0.3 tau earlier)
QUIET_AMPLITUDE = 1e-3  # samples where the (2, +-2) mode is below this fraction of its peak carry no flux
MAX_LEVELS = 8  # levels at most
LEVEL_FACTOR = 4  # each level's step is a quarter of the one before: fewer model calls, each call's set-up dominates
PRECESSING_STEP = 0.35  # in M: resolves a (2, 2) ringdown up to M omega = 0.85 within PHASE_STEP_LIMIT
INTERPOLATION_STEP = 9.0  # in M: aligned-spin data grids at most this coarse are refined by interpolation (measured:
# 12 M_sun at 2048 Hz, a step of 8.3 M, within 3e-4 of the converged memory; 16.5 M lost 1%)
LOUD_END = 0.5  # a (2, 2) mode above half its peak at the last sample: the model ends loud (inspiral only)
INSPIRAL_STEP = 40.0  # in M: the same for models that end loud, their last (2, 2) frequency near M f = 0.022 (measured:
# TaylorT4 2 + 2 M_sun at 1024 Hz, a step of 50 M, within 5e-4 of the converged memory; 58 M lost 26%)
_COS_LIMIT, _COS_HALF_LIMIT = float(np.cos(PHASE_STEP_LIMIT)), float(np.cos(PHASE_STEP_LIMIT / 2))
PRECESSING_SAMPLES = 1_000_000  # longer full-length precessing levels are refused: ~1 GB and ~9 s at the limit


def dominant_phase_step(series: ModeSeries) -> np.ndarray:
    """Phase advance per sample (rad) of the stronger of the (2, 2) and (2, -2) modes, zero where quiet."""
    keys = [k for k in ((2, 2), (2, -2)) if k in series.modes]
    if series.aligned_spins and (2, 2) in series.modes:  # (2, -2) mirrors (2, 2): the same steps
        keys = [(2, 2)]
    if not keys:
        return np.zeros(series.times.size - 1)
    first = np.ascontiguousarray(series.modes[keys[0]], dtype=complex)
    second = np.ascontiguousarray(series.modes[keys[-1]], dtype=complex)
    out = np.empty(first.size - 1)
    dominant_steps(first, second, len(keys) == 2, QUIET_AMPLITUDE, out)  # one compiled pass
    return out


def _late_part(series: ModeSeries) -> int:
    """First sample of the late part of an aligned-spin series: from there on the (2, 2) mode's phase step
    exceeds half ``PHASE_STEP_LIMIT`` (probed on every 16th sample; the inspiral's frequency only rises)."""
    if not series.aligned_spins or (2, 2) not in series.modes:
        return 0
    h = series.modes[(2, 2)]
    fast = first_fast_probe(h, 16, _COS_HALF_LIMIT)
    return max(fast - 32, 0) if fast >= 0 else max(h.size - 64, 0)


def first_unresolved(series: ModeSeries, whole: bool = False):
    """(time, (2, 2) frequency in Hz) of the last resolved sample before the grid fails, or None. Quiet samples are
    judged against the largest (2, +-2) modulus of the late part, or of the whole series with ``whole`` (levels that
    run on into a quiet tail of fast ringing, as those cut from frequency-domain spectra do)."""
    start = 0 if whole else _late_part(series)
    if series.aligned_spins and (2, 2) in series.modes:  # (2, -2) mirrors (2, 2): the same steps
        index, step = first_unresolved_step(series.modes[(2, 2)][start:], _COS_LIMIT, QUIET_AMPLITUDE)
        if index < 0:
            return None
        return float(series.times[start + index]), float(step / (2 * np.pi * series.delta_t))
    keys = [k for k in ((2, 2), (2, -2)) if k in series.modes]
    if not keys:
        return None
    first, second = (np.ascontiguousarray(series.modes[k][start:], dtype=complex) for k in (keys[0], keys[-1]))
    # the first step of dominant_phase_step above the limit, in one compiled pass
    index, step = first_fast_dominant(first, second, len(keys) == 2, QUIET_AMPLITUDE, PHASE_STEP_LIMIT)
    if index < 0:
        return None
    return float(series.times[start + index]), float(step / (2 * np.pi * series.delta_t))


@lru_cache(maxsize=16)
def _lagrange_weights(factor: int, points: int = 6, end: bool = False) -> np.ndarray:
    """Weights ``(factor, points)`` of the Lagrange polynomial through ``points`` equally spaced nodes
    (offsets ``-points/2 + 1 .. points/2``) evaluated at the fractions ``j / factor`` between nodes 0 and 1; with
    ``end``, ``(2 factor + 1, points)`` at ``1 + j / factor`` up to the last node (the end-biased stencils of the
    last two intervals and the last sample)."""
    nodes = np.arange(points) - (points // 2 - 1)
    fractions = 1 + np.arange(2 * factor + 1) / factor if end else np.arange(factor) / factor
    weights = np.ones((fractions.size, points))
    for k in range(points):
        for q in range(points):
            if q != k:
                weights[:, k] *= (fractions - nodes[q]) / (nodes[k] - nodes[q])
    weights.flags.writeable = False
    return weights


def interpolated_level(series: ModeSeries, join_time: float, factor: int, mirrored: bool = True) -> ModeSeries:
    """The late part of an aligned-spin series at a ``factor`` times finer step, by interpolating each
    mode's amplitude and continued phase (sixth-order Lagrange through the data's samples; no new model
    call), from a few samples before ``join_time`` until every mode is below ``QUIET_AMPLITUDE`` of the
    (2, 2) peak, or to the last sample when the modes end loud (end-biased stencils on the last two intervals).
    ``mirrored=False``: the m < 0 modes are interpolated too, not mirrored (co-precessing modes with an antisymmetric
    part)."""
    times, delta_t = series.times, series.delta_t
    keys, orders, signs, placement = _interpolation_layout(tuple(series.modes), mirrored)
    first = max(min(int(np.searchsorted(times, join_time)) - 8, times.size - 16), 0)  # at least 16 samples
    # each mode's amplitude and continued phase, interpolated (sixth-order Lagrange), back to complex values
    values = interpolated_rows(tuple(np.ascontiguousarray(series.modes[k], dtype=complex) for k in keys), first,
                               orders, _lagrange_weights(factor), _lagrange_weights(factor, end=True),
                               QUIET_AMPLITUDE)
    fine_times = times[first + 2] + np.arange(values.shape[1]) * (delta_t / factor)
    mirrored = np.conj(values)
    mirrored *= signs  # h_{l,-m} = (-1)^l conj(h_lm)
    modes = {key: (mirrored if flip else values)[row] for key, (row, flip) in zip(series.modes, placement)}
    return ModeSeries(times=fine_times, modes=modes, total_mass=series.total_mass,
                      luminosity_distance=series.luminosity_distance,
                      symmetric_mass_ratio=series.symmetric_mass_ratio, approximant=series.approximant,
                      aligned_spins=series.aligned_spins, use_from=join_time, finer=[])


@lru_cache(maxsize=32)
def _interpolation_layout(series_keys: tuple, mirrored: bool = True):
    """(interpolated keys: the (2, 2) mode first, then the other m >= 0 modes (every other mode unless
    ``mirrored``); their orders m; the signs (-1)^l as a column; for each of ``series_keys``, its row and whether it
    is the row's mirror h_{l,-m})."""
    keys = ((2, 2),) + tuple(sorted(k for k in series_keys if (k[1] >= 0 or not mirrored) and k != (2, 2)))
    orders = np.array([float(m) for _, m in keys])
    signs = np.array([(-1.0) ** l for l, _ in keys])[:, None]
    placement = tuple((keys.index(k), False) if k in keys else (keys.index((k[0], -k[1])), True)
                      for k in series_keys)
    for array in (orders, signs):
        array.flags.writeable = False
    return keys, orders, signs, placement


def _phase_at(series: ModeSeries, key, time: float) -> float:
    """Unwrapped phase of one mode at ``time`` (linear in the smooth unwrapped phase)."""
    return float(np.interp(time, series.times, np.unwrap(np.angle(series.modes[key]))))


def rotate_onto(fine: ModeSeries, coarse: ModeSeries, time: float) -> ModeSeries:
    """Rotate ``fine`` about the orbital axis so its modes match ``coarse`` at ``time``.

    ``h_lm -> h_lm e^{-i m alpha}``; the (2, 2) mode fixes alpha modulo pi, the strongest odd-m mode
    picks between the two (aligned spins only).
    """
    difference = _phase_at(coarse, (2, 2), time) - _phase_at(fine, (2, 2), time)
    candidates = (-difference / 2, -difference / 2 + np.pi)
    odd = [k for k in fine.modes if k[1] % 2 and k[1] > 0 and k in coarse.modes]
    alpha = candidates[0]
    if odd:
        index = int(np.argmin(np.abs(coarse.times - time)))
        key = max(odd, key=lambda k: abs(coarse.modes[k][index]))
        target, start = _phase_at(coarse, key, time), _phase_at(fine, key, time)
        errors = [abs(np.angle(np.exp(1j * (start - key[1] * a - target)))) for a in candidates]
        alpha = candidates[int(np.argmin(errors))]
    modes = {(l, m): h * np.exp(-1j * m * alpha) for (l, m), h in fine.modes.items()}
    return dataclasses.replace(fine, modes=modes)


def ends_loud(series: ModeSeries) -> bool:
    """Whether the (2, 2) mode is still above ``LOUD_END`` of its peak at the last sample (an inspiral-only model
    that stops before merger: no ringdown to resolve)."""
    h = series.modes.get((2, 2))
    if h is None or h.size == 0 or abs(h[-1]) < LOUD_END * float(np.max(np.abs(h[-64:]))):  # cheap test first
        return False
    return abs(h[-1]) >= LOUD_END * float(np.max(np.abs(h)))


def _interpolable(series: ModeSeries) -> bool:
    """Whether the finer levels interpolate the data-rate modes: aligned spins, on a grid of at most
    ``INTERPOLATION_STEP`` M, or of at most ``INSPIRAL_STEP`` M for a model that ends loud."""
    if not series.aligned_spins or (2, 2) not in series.modes:
        return False
    limit = INSPIRAL_STEP if ends_loud(series) else INTERPOLATION_STEP
    return series.delta_t <= limit * series.mass_seconds


def finer_levels(series: ModeSeries, generate, minimum_frequency: float, reference_frequency: float,
                 cut_from_spectra: bool = False, interpolate=None) -> list:
    """The finer samplings ``series`` needs for its memory, coarse to fine (empty when it needs none).

    ``generate(delta_t, minimum_frequency, reference_frequency)`` returns the same binary's modes.
    Each returned series has ``use_from`` set: the time (s) from which it replaces the level before.
    ``cut_from_spectra``: ``generate`` cuts the levels from the same mode spectra (frequency-domain models), so a
    level from a later start is the same binary for any spins and exact at every step: every level is generated
    that way, none interpolated from ``series`` (whose band ends at the data's Nyquist frequency).
    ``interpolate(join_time, factor)``: a precessing model's own interpolated level (SEOBNRv5PHM's co-precessing
    modes and rotation, :class:`.pyseobnr_modes.CoprecessingFrame`), used as the aligned-spin interpolation is, on
    data grids of at most ``INTERPOLATION_STEP`` M.
    """
    levels, current = [], series
    if interpolate is None and _interpolable(series):
        interpolate = functools.partial(interpolated_level, series)
    elif interpolate is not None and series.delta_t > INTERPOLATION_STEP * series.mass_seconds:
        interpolate = None
    if not cut_from_spectra and interpolate is not None:
        factor = 1
        for _ in range(MAX_LEVELS):
            failure = first_unresolved(current)
            if failure is None:
                return levels
            factor *= LEVEL_FACTOR
            current = interpolate(failure[0], factor)
            levels.append(current)
        raise WaveformError(f"the merger of this binary is not resolved after {MAX_LEVELS} finer samplings; "
                            "its memory cannot be computed reliably")
    for _ in range(MAX_LEVELS):
        failure = first_unresolved(current, whole=cut_from_spectra)
        if failure is None:
            return levels
        join_time, join_frequency = failure
        delta_t = current.delta_t / LEVEL_FACTOR
        if not series.aligned_spins and not cut_from_spectra:  # full length: jump straight to a ~0.35 M step
            while delta_t > PRECESSING_STEP * series.mass_seconds:
                delta_t /= 2
            samples = series.times.size * series.delta_t / delta_t
            if samples > PRECESSING_SAMPLES:
                raise WaveformError(f"this precessing binary needs {samples:.2g} samples at the merger's step over "
                                    f"its whole length (limit {PRECESSING_SAMPLES:.0e}); raise [model] "
                                    "minimum_frequency to shorten it")
            fine = generate(delta_t, minimum_frequency, reference_frequency)
        else:
            fine = _later_start(series, generate, delta_t, max(minimum_frequency, START_FRACTION * join_frequency),
                                minimum_frequency, reference_frequency, join_time)
            if cut_from_spectra and fine.times[0] > join_time - 8 * fine.delta_t:  # cut too late (a noisy early
                fine = generate(delta_t, minimum_frequency, reference_frequency)  # frequency): the whole series
        fine.use_from = join_time
        levels.append(fine)
        current = fine
    raise WaveformError(f"the merger of this binary is not resolved after {MAX_LEVELS} finer samplings; "
                        "its memory cannot be computed reliably")


def _later_start(series, generate, delta_t, start, minimum_frequency, reference_frequency, join_time):
    """The same aligned-spin binary from a later start frequency, in the coarse level's phase convention."""
    while True:
        try:
            try:
                return generate(delta_t, start, reference_frequency)
            except WaveformError as error:
                if "reference" not in str(error).lower() and "fref" not in str(error).lower():
                    raise
                fine = generate(delta_t, start, max(start, reference_frequency))
                return rotate_onto(fine, series, join_time)
        except WaveformError:
            # some models refuse late starts (SEOBNRv4PHM's initial-frequency limit): start earlier
            if start <= minimum_frequency * 1.0001:
                raise
            start = max(minimum_frequency, start / 2)
            logger.debug("finer level restarted from %.1f Hz", start)
