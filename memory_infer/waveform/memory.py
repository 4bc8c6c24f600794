"""The nonlinear (displacement) memory of a set of waveform modes.

Units: geometric (G = c = 1). Inputs are ``r h_lm / M`` sampled uniformly in ``t / M``.

Flux form (PRD 44, R2945 (1991)), r = 1:
``h_mem(t, N) = (1/4pi) int_{-inf}^t dt' oint dOmega' |dh/dt'|^2 (mbar(N).n')^2 / (1 - n'.N)``.
Mode form: ``h_mem_lm = sqrt((l-2)!/(l+2)!) int dt' sum dh_{l'm'} conj(dh_{l''m''})
oint -2Y_{l'm'} conj(-2Y_{l''m''}) conj(Y_lm) dOmega`` (couplings in :mod:`memory_infer.waveform.sphere`).

Sign convention (the one place it is decided). Inputs and outputs are modes in lalsimulation's
convention: its polarization basis is rotated by 90 degrees from (e_theta, e_phi) (CQG 25, 165003 (2008)),
so every oscillatory mode has the opposite sign there (leading order
``h_22 = +8 sqrt(pi/5) eta x e^{-2i Phi}``) while ``|dh/dt|^2`` is the same. The flux form gives the
memory in the (e_theta, e_phi) basis; it is multiplied by ``LALSIMULATION_SIGN`` = -1 before it meets
lalsimulation's modes. Checked against lalsimulation's own TaylorT4 memory modes (tests/waveform/test_memory.py),
whose leading order is ``h_mem_20 = -(4/7) sqrt(5 pi / 6) eta x``.

Sampling: the flux is taken from ``finer`` samplings of the late inspiral and merger where the data's
grid does not resolve them (:mod:`memory_infer.waveform.models.refine`); the cumulative memory of each level is
joined continuously to the one before at the level's ``use_from`` time and read off at the data's times.

The memory accumulated before the first sample (the early inspiral) is not in the modes;
``early_inspiral=True`` adds its leading-order value (PRD 80, 024002 (2009)):
``h+_mem = -2 eta x sin^2(i) (17 + cos^2 i) / 96`` (lalsimulation's sign) at the first sample's ``x``.
It is constant over a segment, so it only moves the zero-frequency bin and never changes ln L.
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from .compiled import (first_fast_ordinal, interpolate_complex, join_level, linear_fill, pair_cumulative,
                       real_form_level, running_trapezoid, spacing_spread, strided_differences)
from .flux import (contract, differences, flux_tables, harmonic_set, mirrored_rows, pair_tables, rates, stack_rows,
                   weights_on_pairs)
from .sphere import coupling_table, spin_weighted_harmonic


LALSIMULATION_SIGN = -1.0  # flux-form memory (e_theta, e_phi basis) -> lalsimulation's polarization basis


@dataclass
class Sampling:
    """Modes ``(l, m) -> r h_lm / M`` on one uniform grid ``times`` (t / M), used from ``use_from`` on."""

    times: np.ndarray
    modes: dict
    use_from: float = float("-inf")


def time_derivative(values: np.ndarray, step: float) -> np.ndarray:
    """Derivative along the last axis by fourth-order finite differences (one-sided at the ends)."""
    values = np.asarray(values)
    if values.shape[-1] < 5:
        return np.gradient(values, step, axis=-1)
    out = np.empty_like(values)
    v = values
    out[..., 2:-2] = (v[..., :-4] - v[..., 4:] + 8 * (v[..., 3:-1] - v[..., 1:-3])) * (1 / (12 * step))
    out[..., 0] = (-25 * v[..., 0] + 48 * v[..., 1] - 36 * v[..., 2] + 16 * v[..., 3] - 3 * v[..., 4]) / (12 * step)
    out[..., 1] = (-3 * v[..., 0] - 10 * v[..., 1] + 18 * v[..., 2] - 6 * v[..., 3] + v[..., 4]) / (12 * step)
    out[..., -1] = (25 * v[..., -1] - 48 * v[..., -2] + 36 * v[..., -3] - 16 * v[..., -4] + 3 * v[..., -5]) / (12 * step)
    out[..., -2] = (3 * v[..., -1] + 10 * v[..., -2] - 18 * v[..., -3] + 6 * v[..., -4] - v[..., -5]) / (12 * step)
    return out


def cumulative_integral(rate: np.ndarray, step: float) -> np.ndarray:
    """Cumulative trapezoid along the last axis, starting at zero."""
    if rate.ndim == 1 and rate.dtype == complex and rate.size:
        out = np.empty_like(rate)
        running_trapezoid(rate, 0.5 * step, 0j, out, 0)
        return out
    out = np.zeros_like(rate)
    np.cumsum((rate[..., 1:] + rate[..., :-1]) * (0.5 * step), axis=-1, out=out[..., 1:])
    return out


def _uniform_step(times) -> float:
    times = np.asarray(times, dtype=float)
    if times.ndim != 1 or times.size < 3:
        raise ValueError("times must be a one-dimensional array of at least three samples")
    step = (times[-1] - times[0]) / (times.size - 1)
    if spacing_spread(times) > 2e-6 * abs(step):
        raise ValueError("times must be uniformly sampled")
    return step


def _stack(modes: dict):
    keys = tuple(sorted(modes))
    return keys, np.array([np.asarray(modes[k], dtype=complex) for k in keys])


def default_ell_max(modes) -> int:
    """Every coupled degree: twice the largest input degree (the memory is then exact in l)."""
    return max(2, 2 * max(l for l, _ in modes))


def memory_modes(modes: dict, times, ell_max: int | None = None, early_inspiral: bool = False,
                 symmetric_mass_ratio: float | None = None, finer=()) -> dict:
    """Memory modes ``(l, m) -> r h_mem_lm / M`` from oscillatory modes ``(l, m) -> r h_lm / M``.

    Both in lalsimulation's convention (module docstring): for a quasi-circular inspiral the (2, 0)
    memory mode decreases. ``times`` are the uniform sample times in M. ``ell_max`` defaults to twice
    the largest input degree, which keeps every coupling (exact mode sum); every m the inputs allow
    (m = m' - m'') is returned. ``finer``: :class:`Sampling` levels of the late part at finer steps,
    whose flux replaces the coarse one from each level's ``use_from`` on. ``early_inspiral=True`` adds
    the leading-order memory of the inspiral before the first sample to the (2, 0) and (4, 0) modes,
    from the (2, 2) frequency at the first sample and ``symmetric_mass_ratio`` (required then).
    """
    step = _uniform_step(times)
    keys, stacked = _stack(modes)
    ell_max = default_ell_max(keys) if ell_max is None else int(ell_max)
    output, table = coupling_table(keys, ell_max)

    def cumulative(level_times, level_stack, coarse=False):
        level_step = _uniform_step(level_times)
        return LALSIMULATION_SIGN * cumulative_integral(
            _table_rates(table, time_derivative(level_stack, level_step)), level_step)

    memory = _levels_memory(np.asarray(times, float), stacked, keys, finer, cumulative)
    result = {mode: memory[k] for k, mode in enumerate(output)}
    if early_inspiral:
        for mode, value in early_inspiral_offset(modes, times, symmetric_mass_ratio).items():
            if mode[0] <= ell_max:
                result[mode] = result.get(mode, np.zeros(len(times), complex)) + value
    return result


def _table_rates(table: np.ndarray, derivatives: np.ndarray) -> np.ndarray:
    """``rate_k = sum_ij table[k, i, j] dh_i conj(dh_j)`` over the nonzero pairs only."""
    pairs = np.nonzero(np.any(table != 0, axis=0))
    products = derivatives[pairs[0]] * np.conj(derivatives[pairs[1]])
    return np.einsum("kp,pt->kt", table[:, pairs[0], pairs[1]], products)


INSPIRAL_STRIDE = 16  # early-inspiral flux on every 16th sample: it changes over many orbits, not within one
INSPIRAL_FREQUENCY = 0.004  # M f_22 below which the inspiral counts as early (45 Hz at 18 M_sun)


def _slow_inspiral_end(h22, step) -> int:
    """Last sample, a multiple of ``INSPIRAL_STRIDE``, before which the (2, 2) frequency is below
    ``INSPIRAL_FREQUENCY`` / M (from the (2, 2) mode's complex samples)."""
    if h22.size < 4 * INSPIRAL_STRIDE:
        return 0
    last = first_fast_ordinal(h22, INSPIRAL_STRIDE, h22.size, 2 * np.pi * step, INSPIRAL_FREQUENCY) - 2
    return max(0, last) * INSPIRAL_STRIDE


def memory_at_direction(modes: dict, times, theta: float, phi: float, early_inspiral: bool = False,
                        symmetric_mass_ratio: float | None = None, finer=(), smooth_inspiral: bool | None = True,
                        mode_scale: float = 1.0, start_h22=None) -> np.ndarray:
    """Complex memory strain ``h+_mem - i hx_mem`` (r h / M) towards (theta, phi), every degree kept.

    lalsimulation's convention (module docstring). The hot path: the couplings are contracted with
    ``-2Y_lm(theta, phi)`` first, so the cost is one small quadratic form per sample,
    ``h_mem = int sum_ij W_ij dh_i conj(dh_j) dt``. ``finer`` as in :func:`memory_modes`.
    ``mode_scale``: the modes (also those of ``finer``) are given as ``mode_scale`` x r h / M (for example
    SI strain, ``mode_scale = M / r``); the memory is then returned in the same units. ``start_h22``: see
    :func:`orbital_velocity_parameter` (the early-inspiral offset only).

    ``smooth_inspiral`` (used only when ``h_{l,-m} = (-1)^l conj(h_lm)``, aligned spins): below
    ``M f_22 = INSPIRAL_FREQUENCY`` only the pairs with m_i = m_j are kept, whose product has no orbital
    carrier, on every ``INSPIRAL_STRIDE``-th sample; the pairs with m_i != m_j oscillate at multiples of the
    orbital frequency and there add only a small oscillation (their integral over one orbit vanishes): measured
    for 12-40 M_sun, at most 2e-4 of the memory's peak for inclinations of 0.3 or more, 8e-4 at 0.05 (nearly
    face-on, where the memory itself nearly vanishes). ``smooth_inspiral=False`` keeps every pair on every sample
    (exact); without the symmetry every pair is always kept, and ``smooth_inspiral=None`` there selects the complex
    form ``sum_i dh_i (W conj(dh))_i`` instead of the real one (the same numbers to rounding).
    """
    keys = tuple(sorted(modes))
    times = np.asarray(times, float)
    step = _uniform_step(times)
    if mirrored_rows(keys, modes):
        own, harmonics, pairs, same_m_pairs = pair_tables(keys)
        values = harmonics(theta, phi) * (LALSIMULATION_SIGN / mode_scale)  # the memory is quadratic in the modes
        slow_weights = weights_on_pairs(same_m_pairs, values) if smooth_inspiral else None
        memory = _real_form_memory(modes, times, step, own, weights_on_pairs(pairs, values), slow_weights, finer)
    elif smooth_inspiral is not None:  # no symmetry: the real form over every mode, every pair on every sample
        own, harmonics, pairs, _ = pair_tables(keys, False)
        values = harmonics(theta, phi) * (LALSIMULATION_SIGN / mode_scale)
        memory = _real_form_memory(modes, times, step, own, weights_on_pairs(pairs, values), None, finer)
    else:  # the complex form (kept as the reference of the real one, tests/waveform/test_memory.py)
        own, harmonics, tables, _ = flux_tables(keys, False)
        values = harmonics(theta, phi) * (LALSIMULATION_SIGN / mode_scale)
        weights = contract(tables, values)

        def cumulative(level_times, level_stack, coarse=False):
            level_step = (level_times[-1] - level_times[0]) / (level_times.size - 1)  # uniform: checked above
            # differences are 12 step dh/dt (the 1/144 is in the tables), hence the trapezoid's 1 / step
            return cumulative_integral(rates(weights, differences(level_stack)), 1.0 / level_step)

        memory = _levels_memory(times, stack_rows(modes, own, False), own, finer, cumulative)
    if early_inspiral:
        offsets = early_inspiral_offset(modes, times, symmetric_mass_ratio, start_h22)
        towards = harmonic_set(tuple(offsets))(theta, phi)  # -2Y_l0 of the offsets' modes
        memory = memory + mode_scale * sum(value * y for value, y in zip(offsets.values(), towards))
    return memory


def _real_form_memory(modes, times, step, own, weights, slow_weights, finer):
    """The cumulative memory at ``times`` for modes with ``h_{l,-m} = (-1)^l conj(h_lm)``: the real quadratic form
    of :mod:`memory_infer.waveform.flux` on the m >= 0 modes ``own``, read off their arrays by compiled loops
    (:mod:`memory_infer.waveform.compiled`). ``slow_weights`` (the m_i = m_j pairs) switches on the strided early
    inspiral of :func:`memory_at_direction`; the ``finer`` levels take over as in :func:`_levels_memory`."""
    rows = tuple(np.ascontiguousarray(modes[k], dtype=complex) for k in own)
    n = times.size
    end = min(n, int(np.searchsorted(times, finer[0].use_from)) + 3) if finer else n
    early = 0  # the slow early inspiral ends here (a multiple of INSPIRAL_STRIDE)
    if slow_weights is not None and (2, 2) in own:
        h22 = rows[own.index((2, 2))][:end]
        early = _slow_inspiral_end(h22, step)
    coarse = np.empty(n, dtype=complex)
    reached = 0j
    if early:  # the m_i = m_j pairs on every INSPIRAL_STRIDE-th sample, linear in between
        stride = INSPIRAL_STRIDE
        d = np.empty((2 * len(rows), 1 + early // stride))
        strided_differences(rows, stride, early, d)
        slow = np.empty(d.shape[1], dtype=complex)
        pair_cumulative(d, 0, *slow_weights, 0.5 * stride / step, 0j, slow, 0)
        linear_fill(slow, stride, coarse)
        reached = slow[-1]
    first = max(early - 2, 0)  # the dense part overlaps the slow one by two samples for its derivative stencil
    _real_level(rows, first, end, weights, step, reached, coarse, early, skip=early - first)
    coarse[end:] = coarse[end - 1]  # until the first finer level takes over
    levels = []
    for k, level in enumerate(finer):
        level_times, start, stop = _level_window(finer, k, own)
        level_rows = tuple(np.ascontiguousarray(level.modes[key], dtype=complex) for key in own)
        memory = np.empty(stop - start, dtype=complex)
        level_step = (level_times[stop - 1] - level_times[start]) / (stop - start - 1)
        _real_level(level_rows, start, stop, weights, level_step, 0j, memory, 0)
        levels.append((level.use_from, level_times[start:stop], memory))
    return _joined(times, coarse, levels, own_array=True)


def _real_level(rows, lo, hi, weights, step, first, out, at, skip=0):
    """Cumulative memory of the samples ``lo + skip .. hi - 1`` of one level into ``out[at:]``, from ``first``
    (derivatives over the window ``lo .. hi - 1``, one-sided at its ends; ``weights`` from
    :func:`memory_infer.waveform.flux.weights_on_pairs`)."""
    if hi - lo < 5:  # too short for the stencil: numpy's gradient, as :func:`differences`
        d = differences(stack_rows(dict(enumerate(rows)), tuple(range(len(rows))), True, slice(lo, hi)))
        pair_cumulative(d, skip, *weights, 0.5 / step, first, out, at)
    else:
        real_form_level(rows, lo, hi, skip, *weights, 0.5 / step, first, out, at)


def _levels_memory(times, stacked, keys, finer, cumulative, first: int = 0):
    """Cumulative memory at ``times`` from the coarse modes and the ``finer`` levels.

    ``cumulative(level_times, level_stack)`` integrates one level's flux (last axis is time). The coarse
    flux is integrated only until the first finer level takes over; each level only where it is used.
    ``stacked`` holds the coarse modes from sample ``first`` on (``cumulative`` supplies the rest).
    """
    windows = _windows(keys, finer, not np.iscomplexobj(stacked))
    if windows:
        end = min(times.size, int(np.searchsorted(times, finer[0].use_from)) + 3)
        coarse = cumulative(times[:end], stacked[..., :end - first], coarse=True)
        coarse = np.concatenate([coarse, np.repeat(coarse[..., -1:], times.size - end, axis=-1)], axis=-1)
    else:
        coarse = cumulative(times, stacked, coarse=True)
    return _joined(times, coarse, [(level.use_from, window_times, cumulative(window_times, window_stack))
                                   for level, window_times, window_stack in windows])


def _windows(keys, finer, real=False):
    """``(level, times, stacked modes)`` of each finer level, cut to where it is used (plus a few samples)."""
    out = []
    for k, level in enumerate(finer):
        level_times, start, end = _level_window(finer, k, keys)
        stacked = stack_rows(level.modes, keys, real)
        out.append((level, level_times[start:end], stacked[:, start:end]))
    return out


def _level_window(finer, k, keys):
    """(times, first, end) of finer level ``k``: from a few samples before its ``use_from`` to a few past the next
    level's (at least five samples, for the derivative stencil)."""
    level = finer[k]
    if any(key not in level.modes for key in keys):
        raise ValueError("every sampling must hold the same modes")
    level_times = np.asarray(level.times, float)
    start = max(int(np.searchsorted(level_times, level.use_from)) - 4, 0)
    end = level_times.size
    if k + 1 < len(finer):  # the next level takes over there
        end = min(end, int(np.searchsorted(level_times, finer[k + 1].use_from)) + 3)
    if end - start < 5:
        end = min(level_times.size, start + 5)
    return level_times, start, end


def _interpolate(new_times, times, values):
    """Linear interpolation along the last axis of complex values (the cumulative memory is smooth)."""
    values = np.asarray(values)
    if values.ndim == 1:  # numpy.interp of both parts, compiled
        new_times = np.atleast_1d(np.asarray(new_times, dtype=float))
        out = np.empty(new_times.size, dtype=complex)
        interpolate_complex(new_times, np.asarray(times, dtype=float), values.astype(complex, copy=False), out)
        return out
    flat = values.reshape(-1, values.shape[-1])
    out = np.empty((flat.shape[0], np.size(new_times)), dtype=complex)
    for k, row in enumerate(flat):
        out[k] = np.interp(new_times, times, row.real) + 1j * np.interp(new_times, times, row.imag)
    return out.reshape(values.shape[:-1] + (np.size(new_times),))


def _joined(times, coarse, levels, own_array: bool = False):
    """The cumulative memory at ``times`` from the coarse level and finer levels ``(use_from, times, memory)``.

    Each level's memory is shifted to continue the previous one at its ``use_from`` time and replaces it
    from there on; beyond a level's last sample its final value holds (the plateau).
    """
    result = coarse if own_array else np.array(coarse, dtype=complex, copy=True)
    previous_times, previous = times, result
    if result.ndim == 1 and result.dtype == complex:  # one direction's memory: each join in one compiled call
        times = np.asarray(times, dtype=float)
        for use_from, level_times, level_memory in levels:
            level_times = np.asarray(level_times, dtype=float)
            previous = join_level(times, result, previous_times, previous, level_times,
                                  np.asarray(level_memory, dtype=complex), float(use_from))
            previous_times = level_times
        return result
    for use_from, level_times, level_memory in levels:
        join = np.array([use_from])
        shifted = level_memory + (_interpolate(join, previous_times, previous)
                                  - _interpolate(join, level_times, level_memory))
        after = int(np.searchsorted(times, use_from))  # times are increasing: from here on times >= use_from
        result[..., after:] = _interpolate(times[after:], level_times, shifted)
        previous_times, previous = level_times, shifted
    return result


@lru_cache(maxsize=1)
def _leading_order_projection():
    """Coefficients c_l with ``h_mem_l0 = c_l eta x`` for the leading-order (2, +-2) memory.

    Projects the leading-order ``2 sin^2 i (17 + cos^2 i) / 96`` on ``-2Y_l0`` (a polynomial: the
    Gauss-Legendre rule is exact), times ``LALSIMULATION_SIGN``; only l = 2 and l = 4 are nonzero.
    """
    nodes, weights = np.polynomial.legendre.leggauss(16)
    inclination = np.arccos(nodes)
    angular = LALSIMULATION_SIGN * 2 * (1 - nodes ** 2) * (17 + nodes ** 2) / 96
    return {(l, 0): float(2 * np.pi * np.sum(weights * angular * spin_weighted_harmonic(-2, l, 0, inclination, 0.0).real))
            for l in (2, 4)}


def orbital_velocity_parameter(modes: dict, times, start_h22=None) -> float:
    """``x = (M omega_orb)^(2/3)`` at the first sample, from the (2, 2) mode's phase rate. ``start_h22``: the (2, 2)
    mode at the first 17 sample times taken from its whole band, when the sampled mode is cut below its band (a
    frequency-domain model at a data rate whose Nyquist frequency lies within its ringdown: the cut rings through
    the whole series and spoils the phase rate of its first samples)."""
    step = _uniform_step(times)
    source = modes[(2, 2)] if start_h22 is None else start_h22
    h22 = np.asarray(source[:3])
    # phase advance over the first two steps, centred on sample 1, extrapolated back to sample 0
    advance_01 = abs(np.angle(h22[1] * np.conj(h22[0])))
    advance_12 = abs(np.angle(h22[2] * np.conj(h22[1])))
    omega_22 = (1.5 * advance_01 - 0.5 * advance_12) / step
    if not omega_22 > 0:  # a precessing model's inertial (2, 2) mode can wobble at its start: the mean rate instead
        h22 = np.asarray(source[:17])
        omega_22 = float(np.mean(np.abs(np.angle(h22[1:] * np.conj(h22[:-1]))))) / step
    return float((omega_22 / 2) ** (2 / 3))


def early_inspiral_offset(modes: dict, times, symmetric_mass_ratio: float | None, start_h22=None) -> dict:
    """Leading-order memory accumulated before the first sample, ``(l, 0) -> c_l eta x_0`` (``start_h22`` as in
    :func:`orbital_velocity_parameter`)."""
    if symmetric_mass_ratio is None:
        raise ValueError("the early-inspiral memory needs the symmetric mass ratio")
    if (2, 2) not in modes:
        raise ValueError("the early-inspiral memory needs the (2, 2) mode")
    eta_x = symmetric_mass_ratio * orbital_velocity_parameter(modes, times, start_h22)
    return {mode: c * eta_x for mode, c in _leading_order_projection().items()}


def energy_flux(modes: dict, times) -> np.ndarray:
    """Radiated power ``dE/dt = (1/16 pi) sum_lm |d(r h_lm)/dt|^2`` (GRG 40, 1705 (2008))."""
    step = _uniform_step(times)
    _, stacked = _stack(modes)
    return np.sum(np.abs(time_derivative(stacked, step)) ** 2, axis=0) / (16 * np.pi)
