"""Compiled loops of the memory's per-sample path (numba, :mod:`memory_infer.common.compiled`).

Each loop does the arithmetic of the numpy expression it replaces in the same order (the stencil's
``(v[t-2] - v[t+2]) + 8 (v[t+1] - v[t-1])``, the sum over rows row by row, the trapezoid's running sum), so
the numbers agree with those expressions to rounding; what it saves is numpy's temporaries and per-call
overhead on arrays of a few thousand samples, which dominated the memory's cost for heavy binaries.
"""
from __future__ import annotations

import numpy as np

from ..common.compiled import compiled as _compile


@_compile
def differences_into(values, out):
    """``12 step`` x the fourth-order derivative of each row (one-sided stencils at the two ends); n >= 5."""
    rows, n = values.shape
    for r in range(rows):
        v = values[r]
        o = out[r]
        for t in range(2, n - 2):
            o[t] = (v[t - 2] - v[t + 2]) + 8.0 * (v[t + 1] - v[t - 1])
        o[0] = -25.0 * v[0] + 48.0 * v[1] - 36.0 * v[2] + 16.0 * v[3] - 3.0 * v[4]
        o[1] = -3.0 * v[0] - 10.0 * v[1] + 18.0 * v[2] - 6.0 * v[3] + v[4]
        o[n - 2] = -v[n - 5] + 6.0 * v[n - 4] - 18.0 * v[n - 3] + 10.0 * v[n - 2] + 3.0 * v[n - 1]
        o[n - 1] = 3.0 * v[n - 5] - 16.0 * v[n - 4] + 36.0 * v[n - 3] - 48.0 * v[n - 2] + 25.0 * v[n - 1]


@_compile
def real_form_rates(d, product, out):
    """``out[t] = sum_a d[a, t] product[a, t] + i sum_a d[a, t] product[R + a, t]`` (R rows of ``d``; the
    product is ``[Re Q; Im Q] @ d``), summed row by row."""
    rows, n = d.shape
    for t in range(n):
        re = d[0, t] * product[0, t]
        im = d[0, t] * product[rows, t]
        for a in range(1, rows):
            re += d[a, t] * product[a, t]
            im += d[a, t] * product[rows + a, t]
        out[t] = complex(re, im)


@_compile
def complex_form_rates(d, product, out):
    """``out[t] = sum_i d[i, t] product[i, t]`` with ``product = W @ conj(d)``, summed row by row."""
    rows, n = d.shape
    for t in range(n):
        total = d[0, t] * product[0, t]
        for a in range(1, rows):
            total += d[a, t] * product[a, t]
        out[t] = total


@_compile
def running_trapezoid(rate, half_step, first, out, start):
    """``out[start] = first``, then ``out[start + t] = out[start + t - 1] + (rate[t] + rate[t - 1]) half_step``."""
    total = first
    out[start] = total
    for t in range(1, rate.size):
        total += (rate[t] + rate[t - 1]) * half_step
        out[start + t] = total


@_compile
def first_fast_probe(h, stride, cos_limit):
    """First probe ``k`` (a multiple of ``stride``, ``k + 1 < h.size``) whose phase step ``arg(h[k+1] conj h[k])``
    exceeds the limit (``Re z < cos(limit) |z|``); -1 if none."""
    for k in range(0, h.size - 1, stride):
        z = h[k + 1] * np.conj(h[k])
        if z.real < cos_limit * abs(z):
            return k
    return -1


@_compile
def first_loud_fast_step(h, cos_limit, quiet_fraction):
    """(first ``k`` where the phase step from ``h[k]`` to ``h[k+1]`` exceeds the limit while
    ``min(|h[k]|, |h[k+1]|)`` is above ``quiet_fraction`` of its largest value, or -1; that largest value)."""
    n = h.size
    loudest = 0.0
    previous = abs(h[0])
    for k in range(1, n):
        here = abs(h[k])
        low = min(here, previous)
        if low > loudest:
            loudest = low
        previous = here
    threshold = quiet_fraction * loudest
    for k in range(n - 1):
        z = h[k + 1] * np.conj(h[k])
        if z.real < cos_limit * abs(z) and min(abs(h[k]), abs(h[k + 1])) > threshold:
            return k, loudest
    return -1, loudest


@_compile
def dominant_steps(first, second, both, quiet_fraction, out):
    """``out[t]``: the phase step ``|angle(h[t+1] conj(h[t]))|`` of the louder (by ``min(|h[t]|, |h[t+1]|)``, the first
    on a tie) of ``first`` and, with ``both``, ``second``; zero where that modulus is not above ``quiet_fraction`` of
    its largest value (numpy's ``np.where`` expression of :func:`.models.refine.dominant_phase_step`, sample by
    sample; the angles to the last bit or so, numpy's vectorized arctan2 and libm's can differ there)."""
    n = out.size
    amplitudes = np.empty(n)
    loudest = -np.inf
    for t in range(n):
        z = first[t + 1] * np.conj(first[t])
        step = abs(np.arctan2(z.imag, z.real))
        amplitude = min(abs(first[t + 1]), abs(first[t]))
        if both:
            z = second[t + 1] * np.conj(second[t])
            other = min(abs(second[t + 1]), abs(second[t]))
            if other > amplitude:
                step = abs(np.arctan2(z.imag, z.real))
                amplitude = other
        out[t] = step
        amplitudes[t] = amplitude
        loudest = max(loudest, amplitude)
    for t in range(n):
        if not amplitudes[t] > quiet_fraction * loudest:
            out[t] = 0.0


@_compile
def first_fast_dominant(first, second, both, quiet_fraction, limit):
    """(``k``, step) as :func:`.models.refine.first_unresolved` takes them from :func:`dominant_steps`: ``k`` the
    sample before the first whose step exceeds ``limit`` (< pi / 2), and the step there (zero where quiet); (-1, 0)
    when none does. The same decisions without the whole step array: a step is compared with ``limit`` through
    ``|Im z| <> Re z tan(limit)`` where that is clear by a relative 1e-9, through the angle itself otherwise."""
    n = first.size - 1
    amplitudes = np.empty(n)
    use_second = np.zeros(n, dtype=np.bool_)
    previous_first = abs(first[0])
    previous_second = abs(second[0]) if both else 0.0
    loudest = -np.inf
    for t in range(n):
        current = abs(first[t + 1])
        amplitude = min(current, previous_first)
        previous_first = current
        if both:
            current = abs(second[t + 1])
            other = min(current, previous_second)
            previous_second = current
            if other > amplitude:
                amplitude = other
                use_second[t] = True
        amplitudes[t] = amplitude
        loudest = max(loudest, amplitude)
    threshold = quiet_fraction * loudest
    slope = np.tan(limit)
    bad = -1
    for t in range(n):
        if not amplitudes[t] > threshold:
            continue
        h = second if use_second[t] else first
        z = h[t + 1] * np.conj(h[t])
        if z.real > 0.0:
            bound = z.real * slope
            if abs(z.imag) < bound * (1.0 - 1e-9):
                continue
            if not abs(z.imag) > bound * (1.0 + 1e-9) and not abs(np.arctan2(z.imag, z.real)) > limit:
                continue
        elif not abs(np.arctan2(z.imag, z.real)) > limit:  # Re z <= 0: beyond pi / 2 unless nan
            continue
        bad = t
        break
    if bad < 0:
        return -1, 0.0
    index = max(bad - 1, 0)
    if not amplitudes[index] > threshold:
        return index, 0.0
    h = second if use_second[index] else first
    z = h[index + 1] * np.conj(h[index])
    return index, abs(np.arctan2(z.imag, z.real))


@_compile
def first_reaching(h, step, frequency, quiet_fraction):
    """(``t``, clear): the first ``t`` with ``|h[t+1]| > quiet_fraction max |h|`` and a phase step ``|angle(h[t+1]
    conj h[t])| / (2 pi step)`` of at least ``frequency``, both within a relative 1e-12, and whether both hold there
    by more than that (then ``t`` is the first where they hold exactly: numpy's ``nonzero`` of those conditions,
    whose moduli and angles can differ from these in the last bit); (-1, True) when none comes within them."""
    loudest = 0.0
    for t in range(h.size):
        loudest = max(loudest, abs(h[t]))
    threshold = quiet_fraction * loudest
    quiet, loud = threshold * (1.0 - 1e-12), threshold * (1.0 + 1e-12)
    low = frequency * (1.0 - 1e-12)
    high = frequency * (1.0 + 1e-12)
    scale = 2.0 * np.pi * step
    for t in range(h.size - 1):
        modulus = abs(h[t + 1])
        if not modulus > quiet:
            continue
        z = h[t + 1] * np.conj(h[t])
        rate = abs(np.arctan2(z.imag, z.real)) / scale
        if rate >= low:
            return t, rate >= high and modulus > loud
    return -1, True


@_compile
def first_unresolved_step(h, cos_limit, quiet_fraction):
    """(``k``, phase step from ``h[k]`` to ``h[k+1]``) for the last sample ``k`` before :func:`first_loud_fast_step`'s
    (its step zero where either sample is quiet), or (-1, 0) when every loud step is within the limit."""
    bad, loudest = first_loud_fast_step(h, cos_limit, quiet_fraction)
    if bad < 0:
        return -1, 0.0
    index = max(bad - 1, 0)
    z = h[index + 1] * np.conj(h[index])
    step = abs(np.arctan2(z.imag, z.real))
    if not min(abs(h[index]), abs(h[index + 1])) > quiet_fraction * loudest:
        step = 0.0
    return index, step


@_compile
def alternating_columns(series, low, scale, out):
    """``out[:, c] = series[:, j] * (scale (-1)^j)`` with ``j = (low + c) mod n`` (``n`` even): the kept columns of
    a transform whose input was ordered from the most negative frequency (see ``fd_modes.time_modes``)."""
    n = series.shape[1]
    plus, minus = scale, -scale
    for r in range(series.shape[0]):
        for c in range(out.shape[1]):
            j = (low + c) % n
            out[r, c] = series[r, j] * (minus if j & 1 else plus)


@_compile
def first_loud(row, first, count, scale, fraction):
    """The first ``k < count`` with ``|row[(first + k) mod n] scale| >= fraction max_j |row[(first + j) mod n]
    scale|`` (numpy's ``argmax`` of that comparison over the circular stretch: 0 when none holds)."""
    n = row.size
    moduli = np.empty(count)
    peak = -np.inf
    for k in range(count):
        value = abs(row[(first + k) % n] * scale)
        moduli[k] = value
        peak = max(peak, value)
    threshold = fraction * peak
    for k in range(count):
        if moduli[k] >= threshold:
            return k
    return 0


@_compile
def loud_end(stacked, quiet_fraction):
    """One past the last sample where any row's modulus exceeds ``quiet_fraction`` of row 0's peak; 0 if none."""
    # Squared moduli decide wherever they are clear by a relative 1e-12 (far above their rounding); only samples
    # near the peak or the threshold take the modulus itself, so every decision is the modulus's own.
    rows, n = stacked.shape
    largest = 0.0
    for t in range(n):
        z = stacked[0, t]
        largest = max(largest, z.real * z.real + z.imag * z.imag)
    peak = 0.0
    for t in range(n):
        z = stacked[0, t]
        if z.real * z.real + z.imag * z.imag >= largest * (1.0 - 1e-12):
            peak = max(peak, abs(z))
    threshold = quiet_fraction * peak
    exact = threshold < 1e-140  # squares of such moduli may underflow: the modulus always
    above = threshold * threshold * (1.0 + 1e-12)
    below = threshold * threshold * (1.0 - 1e-12)
    for t in range(n - 1, -1, -1):
        for r in range(rows):
            z = stacked[r, t]
            if exact:
                if abs(z) > threshold:
                    return t + 1
                continue
            square = z.real * z.real + z.imag * z.imag
            if square > above or (square >= below and abs(z) > threshold):
                return t + 1
    return 0


@_compile
def continued_phases(modes, orders):
    """Unwrapped phases of the rows of ``modes`` through a coarsely sampled merger: row 0's (the (2, 2) mode's)
    step may change by less than pi per sample; every other row's step is the one closest to
    ``orders[row] / 2`` times row 0's (numbers as the numpy steps they replace)."""
    rows, n = modes.shape
    wrapped = np.empty((rows, n - 1))
    for r in range(rows):
        for t in range(n - 1):
            z = modes[r, t + 1] * np.conj(modes[r, t])
            wrapped[r, t] = np.arctan2(z.imag, z.real)
    dominant = np.empty(n - 1)
    dominant[0] = wrapped[0, 0]
    total = 0.0
    two_pi = 2 * np.pi
    for t in range(1, n - 1):
        change = wrapped[0, t] - wrapped[0, t - 1]
        change -= two_pi * np.round(change / two_pi)
        total += change
        dominant[t] = wrapped[0, 0] + total
    phases = np.empty((rows, n))
    for r in range(rows):
        start = np.arctan2(modes[r, 0].imag, modes[r, 0].real)
        phases[r, 0] = start
        total = 0.0
        half_order = orders[r] / 2
        for t in range(n - 1):
            guide = half_order * dominant[t]
            total += wrapped[r, t] + two_pi * np.round((guide - wrapped[r, t]) / two_pi)
            phases[r, t + 1] = start + total
    return phases


@_compile
def lagrange_modes(amplitudes, phases, weights, end_weights):
    """Rows ``amplitude e^{i phase}`` at ``factor`` points per interval: each interval's sixth-order Lagrange
    polynomial through samples ``w .. w + 5`` evaluated between samples ``w + 2`` and ``w + 3`` (``weights`` is
    ``(factor, 6)``); then the rows of ``end_weights`` (``(2 factor + 1, 6)`` or none) on the last six samples,
    which carry the level through the last two intervals to the last sample (end-biased stencils)."""
    rows, n = amplitudes.shape
    factor, points = weights.shape
    tail = end_weights.shape[0]
    body = (n - points + 1) * factor
    out = np.empty((rows, body + tail), dtype=np.complex128)
    for r in range(rows):
        for w in range(n - points + 1):
            for j in range(factor):
                a = 0.0
                p = 0.0
                for q in range(points):
                    a += amplitudes[r, w + q] * weights[j, q]
                    p += phases[r, w + q] * weights[j, q]
                out[r, w * factor + j] = complex(a * np.cos(p), a * np.sin(p))
        w = n - points
        for j in range(tail):
            a = 0.0
            p = 0.0
            for q in range(points):
                a += amplitudes[r, w + q] * end_weights[j, q]
                p += phases[r, w + q] * end_weights[j, q]
            out[r, body + j] = complex(a * np.cos(p), a * np.sin(p))
    return out


@_compile
def window_differences(modes, lo, hi, out):
    """:func:`differences_into` of the real rows ``[Re h; Im h]`` of the modes (a tuple of complex arrays) over
    the samples ``lo .. hi - 1`` (one-sided stencils at the window's ends; ``hi - lo >= 5``): ``out`` is
    ``(2 K, hi - lo)``."""
    count = len(modes)
    n = hi - lo
    for i in range(count):
        v = modes[i][lo:hi]
        for t in range(2, n - 2):
            c = (v[t - 2] - v[t + 2]) + 8.0 * (v[t + 1] - v[t - 1])
            out[i, t] = c.real
            out[count + i, t] = c.imag
        for t, c in ((0, -25.0 * v[0] + 48.0 * v[1] - 36.0 * v[2] + 16.0 * v[3] - 3.0 * v[4]),
                     (1, -3.0 * v[0] - 10.0 * v[1] + 18.0 * v[2] - 6.0 * v[3] + v[4]),
                     (n - 2, -v[n - 5] + 6.0 * v[n - 4] - 18.0 * v[n - 3] + 10.0 * v[n - 2] + 3.0 * v[n - 1]),
                     (n - 1, 3.0 * v[n - 5] - 16.0 * v[n - 4] + 36.0 * v[n - 3] - 48.0 * v[n - 2] + 25.0 * v[n - 1])):
            out[i, t] = c.real
            out[count + i, t] = c.imag


@_compile
def strided_differences(modes, stride, last, out):
    """The real rows' differences at sample 0 (one-sided) and at ``stride, 2 stride, ...`` up to ``last``
    (central), columns of ``out`` ``(2 K, 1 + last // stride)``."""
    count = len(modes)
    for i in range(count):
        v = modes[i]
        c = -25.0 * v[0] + 48.0 * v[1] - 36.0 * v[2] + 16.0 * v[3] - 3.0 * v[4]
        out[i, 0] = c.real
        out[count + i, 0] = c.imag
        column = 1
        for s in range(stride, last + 1, stride):
            c = (v[s - 2] - v[s + 2]) + 8.0 * (v[s + 1] - v[s - 1])
            out[i, column] = c.real
            out[count + i, column] = c.imag
            column += 1


@_compile
def pair_sums(d, skip, first_rows, second_rows, real_weights, imaginary_weights):
    """The rate ``y^T Q y`` at the columns ``skip ..`` of the real rows ``d`` as a sum over the symmetric
    form's pairs ``a <= b`` (``weights[p]`` holds ``Q_ab + Q_ba``, or ``Q_aa``): (real, imaginary) parts. Loops over
    pairs outside and samples inside, so the inner loop runs along memory; four pairs at a time, so that each
    sample's sums are loaded and stored once per four pairs (added to in the same order, pair by pair: the same
    numbers as one pair at a time). When most pairs weigh in only one of the two parts (an observer at azimuth 0
    of the modes' frame, as for the precessing models' J-frame modes: every pair's other weight is exactly zero),
    each part is summed over its own pairs: the same terms in the same order, without the zero ones."""
    count = d.shape[1] - skip
    pairs = first_rows.size
    real_pairs = np.flatnonzero(real_weights[:pairs] != 0.0)
    imaginary_pairs = np.flatnonzero(imaginary_weights[:pairs] != 0.0)
    if real_pairs.size + imaginary_pairs.size <= pairs + pairs // 4:
        real = np.zeros(count)
        imaginary = np.zeros(count)
        _weighted_sum(d, skip, first_rows, second_rows, real_weights, real_pairs, real)
        _weighted_sum(d, skip, first_rows, second_rows, imaginary_weights, imaginary_pairs, imaginary)
        return real, imaginary
    real = np.zeros(count)
    imaginary = np.zeros(count)
    grouped = pairs - pairs % 4
    for p in range(0, grouped, 4):
        x0, y0 = d[first_rows[p], skip:], d[second_rows[p], skip:]
        x1, y1 = d[first_rows[p + 1], skip:], d[second_rows[p + 1], skip:]
        x2, y2 = d[first_rows[p + 2], skip:], d[second_rows[p + 2], skip:]
        x3, y3 = d[first_rows[p + 3], skip:], d[second_rows[p + 3], skip:]
        a0, a1, a2, a3 = real_weights[p], real_weights[p + 1], real_weights[p + 2], real_weights[p + 3]
        b0, b1, b2, b3 = (imaginary_weights[p], imaginary_weights[p + 1], imaginary_weights[p + 2],
                          imaginary_weights[p + 3])
        for t in range(count):
            z0, z1, z2, z3 = x0[t] * y0[t], x1[t] * y1[t], x2[t] * y2[t], x3[t] * y3[t]
            real[t] = (((real[t] + a0 * z0) + a1 * z1) + a2 * z2) + a3 * z3
            imaginary[t] = (((imaginary[t] + b0 * z0) + b1 * z1) + b2 * z2) + b3 * z3
    for p in range(grouped, pairs):
        x = d[first_rows[p], skip:]
        y = d[second_rows[p], skip:]
        a = real_weights[p]
        b = imaginary_weights[p]
        for t in range(count):
            z = x[t] * y[t]
            real[t] += a * z
            imaginary[t] += b * z
    return real, imaginary


@_compile
def _weighted_sum(d, skip, first_rows, second_rows, weights, chosen, out):
    """``out[t] += weights[p] d[first_rows[p], skip + t] d[second_rows[p], skip + t]`` over the pairs ``chosen``, in
    their order, eight at a time (each sample's sum loaded and stored once per eight pairs)."""
    count = out.size
    grouped = chosen.size - chosen.size % 8
    for i in range(0, grouped, 8):
        p0, p1, p2, p3 = chosen[i], chosen[i + 1], chosen[i + 2], chosen[i + 3]
        p4, p5, p6, p7 = chosen[i + 4], chosen[i + 5], chosen[i + 6], chosen[i + 7]
        x0, y0 = d[first_rows[p0], skip:], d[second_rows[p0], skip:]
        x1, y1 = d[first_rows[p1], skip:], d[second_rows[p1], skip:]
        x2, y2 = d[first_rows[p2], skip:], d[second_rows[p2], skip:]
        x3, y3 = d[first_rows[p3], skip:], d[second_rows[p3], skip:]
        x4, y4 = d[first_rows[p4], skip:], d[second_rows[p4], skip:]
        x5, y5 = d[first_rows[p5], skip:], d[second_rows[p5], skip:]
        x6, y6 = d[first_rows[p6], skip:], d[second_rows[p6], skip:]
        x7, y7 = d[first_rows[p7], skip:], d[second_rows[p7], skip:]
        a0, a1, a2, a3 = weights[p0], weights[p1], weights[p2], weights[p3]
        a4, a5, a6, a7 = weights[p4], weights[p5], weights[p6], weights[p7]
        for t in range(count):
            out[t] = (((((((out[t] + a0 * (x0[t] * y0[t])) + a1 * (x1[t] * y1[t])) + a2 * (x2[t] * y2[t]))
                         + a3 * (x3[t] * y3[t])) + a4 * (x4[t] * y4[t])) + a5 * (x5[t] * y5[t]))
                      + a6 * (x6[t] * y6[t])) + a7 * (x7[t] * y7[t])
    for i in range(grouped, chosen.size):
        p = chosen[i]
        x = d[first_rows[p], skip:]
        y = d[second_rows[p], skip:]
        a = weights[p]
        for t in range(count):
            out[t] += a * (x[t] * y[t])


@_compile
def pair_cumulative(d, skip, first_rows, second_rows, real_weights, imaginary_weights, half_step, first, out, at):
    """The running trapezoid of :func:`pair_sums`' rate from ``first``, into ``out[at:]``."""
    real, imaginary = pair_sums(d, skip, first_rows, second_rows, real_weights, imaginary_weights)
    total = first
    out[at] = total
    for t in range(1, real.size):
        total += complex(real[t] + real[t - 1], imaginary[t] + imaginary[t - 1]) * half_step
        out[at + t] = total


@_compile
def real_form_level(modes, lo, hi, skip, first_rows, second_rows, real_weights, imaginary_weights, half_step, first,
                    out, at):
    """One level's cumulative memory: :func:`window_differences` over ``lo .. hi - 1`` then :func:`pair_cumulative`
    from column ``skip``."""
    d = np.empty((2 * len(modes), hi - lo))
    window_differences(modes, lo, hi, d)
    pair_cumulative(d, skip, first_rows, second_rows, real_weights, imaginary_weights, half_step, first, out, at)


@_compile
def sparse_pair_weights(harmonics, harmonic_index, pair_index, real_entries, imaginary_entries, real_weights,
                        imaginary_weights):
    """``Q = sum_k harmonics[k] Q_k`` on the pairs, from the tables' nonzero entries only (``harmonic_index[e]``,
    ``pair_index[e]``, ``[Re Q_k; Im Q_k]`` at that pair), in the order of k: each pair's sum has the terms of the
    whole tables' sum in the same order without its zero ones, so the same numbers (about 5% of the 21 modes'
    tables are nonzero)."""
    real_weights[:] = 0.0
    imaginary_weights[:] = 0.0
    for e in range(harmonic_index.size):
        y = harmonics[harmonic_index[e]]
        c, s = y.real, y.imag
        p = pair_index[e]
        real_weights[p] += c * real_entries[e] - s * imaginary_entries[e]
        imaginary_weights[p] += c * imaginary_entries[e] + s * real_entries[e]


@_compile
def linear_fill(values, stride, out):
    """``out[k stride + j] = values[k] + (values[k + 1] - values[k]) j / stride`` for j < stride."""
    for k in range(values.size - 1):
        change = values[k + 1] - values[k]
        for j in range(stride):
            out[k * stride + j] = values[k] + change * (j / stride)


@_compile
def mirror_holds(plus, mirror, signs, probes, tolerance):
    """Whether ``plus[i][p] = signs[i] conj(mirror[i][p])`` at ``probes`` samples spread evenly from the first to
    the last (``p = j (n - 1) // (probes - 1)``) for every i, to ``tolerance`` x the largest ``|plus[i][p]|``."""
    largest = 0.0
    worst = 0.0
    n = plus[0].size
    for i in range(len(plus)):
        for j in range(probes):
            p = j * (n - 1) // (probes - 1)
            value = plus[i][p]
            largest = max(largest, abs(value))
            worst = max(worst, abs(value - signs[i] * np.conj(mirror[i][p])))
    return worst <= tolerance * largest


@_compile
def contract_real(harmonics, tables, out):
    """``[Re Q; Im Q]`` of ``Q = sum_k harmonics[k] Q_k`` from ``tables[k] = [Re Q_k; Im Q_k]`` (``(2n, n)``)."""
    count, rows, n = tables.shape
    for i in range(n):
        for j in range(n):
            real = 0.0
            imaginary = 0.0
            for k in range(count):
                y = harmonics[k]
                real += y.real * tables[k, i, j] - y.imag * tables[k, n + i, j]
                imaginary += y.real * tables[k, n + i, j] + y.imag * tables[k, i, j]
            out[i, j] = real
            out[n + i, j] = imaginary


@_compile
def first_fast_ordinal(h, stride, end, two_pi_step, frequency):
    """Ordinal of the first probe ``k = 0, stride, 2 stride, ... < end - 1`` whose phase step gives a frequency
    ``|arg(h[k+1] conj h[k])| / (2 pi step)`` of at least ``frequency``; the number of probes if none."""
    ordinal = 0
    for k in range(0, end - 1, stride):
        z = h[k + 1] * np.conj(h[k])
        if abs(np.arctan2(z.imag, z.real)) / two_pi_step >= frequency:
            return ordinal
        ordinal += 1
    return ordinal


@_compile
def spacing_spread(times):
    """(largest - smallest) step between consecutive ``times``."""
    low = np.inf
    high = -np.inf
    for k in range(1, times.size):
        step = times[k] - times[k - 1]
        low = min(low, step)
        high = max(high, step)
    return high - low


@_compile
def _linear(x, x0, x1, f0, f1):
    """numpy.interp's value at ``x`` between ``(x0, f0)`` and ``(x1, f1)`` (one real part)."""
    slope = (f1 - f0) / (x1 - x0)
    value = slope * (x - x0) + f0
    if np.isnan(value):
        value = slope * (x - x1) + f1
        if np.isnan(value) and f0 == f1:
            value = f0
    return value


@_compile
def interpolate_complex(x, xp, fp, out):
    """``numpy.interp`` of the real and the imaginary parts of ``fp`` at ``x`` (``xp`` increasing; the end values
    hold outside it), into ``out``."""
    n = xp.size
    for k in range(x.size):
        value = x[k]
        if value >= xp[n - 1]:
            out[k] = fp[n - 1]
        elif value < xp[0]:
            out[k] = fp[0]
        else:
            j = np.searchsorted(xp, value, side="right") - 1
            if xp[j] == value:
                out[k] = fp[j]
            else:
                out[k] = complex(_linear(value, xp[j], xp[j + 1], fp[j].real, fp[j + 1].real),
                                 _linear(value, xp[j], xp[j + 1], fp[j].imag, fp[j + 1].imag))


@_compile
def join_level(times, result, previous_times, previous, level_times, level_memory, use_from):
    """One finer level's cumulative memory continued from the previous level at ``use_from`` and read off at the
    ``times`` from there on into ``result`` (:func:`interpolate_complex` for every reading); returns the shifted
    level memory, which the next level continues."""
    at = np.empty(1)
    at[0] = use_from
    before = np.empty(1, dtype=np.complex128)
    interpolate_complex(at, previous_times, previous, before)
    own = np.empty(1, dtype=np.complex128)
    interpolate_complex(at, level_times, level_memory, own)
    shifted = level_memory + (before[0] - own[0])
    after = np.searchsorted(times, use_from)
    interpolate_complex(times[after:], level_times, shifted, result[after:])
    return shifted


@_compile
def interpolated_rows(modes, first, orders, weights, end_weights, quiet_fraction):
    """The modes (row 0 the (2, 2) mode) from sample ``first`` on, ``factor`` times finer: each mode's amplitude and
    continued phase (:func:`continued_phases`) through sixth-order Lagrange (:func:`lagrange_modes`), up to 8
    samples past the last where any mode exceeds ``quiet_fraction`` of the (2, 2) mode's peak; when that reaches
    the modes' last sample (a model that ends loud), ``end_weights`` carry the level to that sample."""
    count = len(modes)
    n = modes[0].size - first
    stacked = np.empty((count, n), dtype=np.complex128)
    for r in range(count):
        stacked[r] = modes[r][first:]
    loud = loud_end(stacked, quiet_fraction)
    end = min(n, loud - 1 + 8) if loud else n
    stacked = stacked[:, :end]
    tail = end_weights if end == n else end_weights[:0]
    return lagrange_modes(np.abs(stacked), continued_phases(stacked, orders), weights, tail)


@_compile
def goldberg_sums(coefficients, cos_powers, sin_powers, owners, orders, theta, phi, out):
    """``out[k] = sum_{terms of k} c cos(theta/2)^p sin(theta/2)^q e^{i m_k phi}`` (spin-weighted harmonics as
    Goldberg sums laid out flat; each power computed once)."""
    c = np.cos(theta / 2)
    s = np.sin(theta / 2)
    largest = 0
    for k in range(cos_powers.size):
        largest = max(largest, cos_powers[k], sin_powers[k])
    cos_table = np.empty(largest + 1)
    sin_table = np.empty(largest + 1)
    for p in range(largest + 1):  # libm's pow, as numpy's float ** int
        cos_table[p] = c ** float(p)
        sin_table[p] = s ** float(p)
    out[:] = 0.0
    for k in range(coefficients.size):
        out[owners[k]] += coefficients[k] * cos_table[cos_powers[k]] * sin_table[sin_powers[k]]
    for j in range(out.size):
        out[j] *= np.exp(1j * orders[j] * phi)


RAMP_ANCHOR_EVERY = 64  # frequencies between exact evaluations of a phase ramp


@_compile
def phase_ramp(frequencies, rate, scale, out):
    """``out[k] = scale exp(i rate frequencies[k])``, stepped by a complex product from one frequency to the next
    (evenly spaced) and evaluated exactly every ``RAMP_ANCHOR_EVERY``: within a few 1e-15 rad of numpy's
    ``exp`` for phases up to tens of radians."""
    count = frequencies.size
    for start in range(0, count, RAMP_ANCHOR_EVERY):
        stop = min(count, start + RAMP_ANCHOR_EVERY)
        angle = rate * frequencies[start]
        value = complex(np.cos(angle), np.sin(angle))
        step = rate * (frequencies[start + 1] - frequencies[start]) if stop - start > 1 else 0.0
        rotation = complex(np.cos(step), np.sin(step))
        for k in range(start, stop):
            out[k] = value * scale
            value = value * rotation


@_compile
def weighted_sum(arrays, weights, out):
    """``out = sum_k weights[k] arrays[k]`` added in order onto ``out`` (zeros for the plain sum)."""
    for k in range(len(arrays)):
        array = arrays[k]
        weight = weights[k]
        for t in range(out.size):
            out[t] += weight * array[t]


@_compile
def split_spectrum(spectrum, phase, plus, cross):
    """The one-sided transforms of the real and imaginary parts of a complex series from its full transform
    ``Z``: ``X_k = (Z_k + conj Z_{N-k}) / 2`` and ``Y_k = (Z_k - conj Z_{N-k}) / 2i``, times ``phase`` and
    ``-phase`` (for ``h+ - i hx``: ``plus = X phase`` and ``cross = -Y phase``)."""
    n = spectrum.size
    for k in range(phase.size):
        a = spectrum[k]
        b = np.conj(spectrum[(n - k) % n])
        plus[k] = ((a + b) * 0.5) * phase[k]
        cross[k] = ((a - b) * complex(0.0, -0.5)) * (-phase[k])
