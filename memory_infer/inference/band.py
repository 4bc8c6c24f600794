"""Compiled loops over one detector's analysis band: projecting polarizations onto the detector, and the
noise-weighted inner products of the memory likelihood (the arithmetic of bilby's ``get_detector_response`` and
``noise_weighted_inner_product``, step by step, in one pass each).

The time shift ``exp(-2 pi i f dt)`` is stepped from one frequency to the next by a complex product and
recomputed exactly every ``ANCHOR_EVERY`` frequencies: its phase then differs from numpy's
``exp(-1j * 2 * pi * dt * f)`` by at most a few 1e-14 rad, below the ~1e-12 rad to which ``2 pi dt f`` itself
is rounded for ``dt`` of seconds and ``f`` of a kilohertz.
"""
from __future__ import annotations

import numpy as np

from ..common.compiled import compiled

ANCHOR_EVERY = 64  # frequencies between exact evaluations of the time shift


@compiled
def project_two(oscillatory_plus, oscillatory_cross, memory_plus, memory_cross, plus_factor, cross_factor, first,
                frequencies, phase_rate, calibration, oscillatory_out, memory_out):
    """For the band's frequencies (``first + k``): ``out = (plus F+ + cross Fx) exp(i phase_rate f_k) calibration[k]``
    for the oscillatory and the memory polarizations (``calibration`` empty: 1); outside the band ``out`` is left
    as given."""
    count = frequencies.size
    for start in range(0, count, ANCHOR_EVERY):
        stop = min(count, start + ANCHOR_EVERY)
        angle = phase_rate * frequencies[start]
        shift = complex(np.cos(angle), np.sin(angle))
        step = 0.0
        if stop - start > 1:
            step = phase_rate * (frequencies[start + 1] - frequencies[start])
        rotation = complex(np.cos(step), np.sin(step))
        for k in range(start, stop):
            factor = shift
            if calibration.size:
                factor = factor * calibration[k]
            j = first + k
            oscillatory_out[j] = (oscillatory_plus[j] * plus_factor + oscillatory_cross[j] * cross_factor) * factor
            memory_out[j] = (memory_plus[j] * plus_factor + memory_cross[j] * cross_factor) * factor
            shift = shift * rotation


@compiled
def band_products(oscillatory, memory, data, psd, first):
    """``sum conj(a) b / psd`` over the band (``first`` onwards, ``psd.size`` frequencies) for the pairs of the
    memory likelihood: (<osc, d>, <mem, d>, <osc, osc>, Re <osc, mem>, <mem, mem>), without the ``4 / T``."""
    d_osc = 0j
    d_mem = 0j
    osc_osc = 0.0
    osc_mem = 0.0
    mem_mem = 0.0
    for k in range(psd.size):
        o = oscillatory[first + k]
        m = memory[first + k]
        weighted = data[first + k] / psd[k]
        d_osc += np.conj(o) * weighted
        d_mem += np.conj(m) * weighted
        osc_osc += (o.real * o.real + o.imag * o.imag) / psd[k]
        osc_mem += (o.real * m.real + o.imag * m.imag) / psd[k]
        mem_mem += (m.real * m.real + m.imag * m.imag) / psd[k]
    return d_osc, d_mem, osc_osc, osc_mem, mem_mem


def band_edges(mask: np.ndarray):
    """(first, end) of the frequency mask when it is one unbroken run of True, else None."""
    selected = np.flatnonzero(mask)
    if selected.size == 0 or selected[-1] - selected[0] + 1 != selected.size:
        return None
    return int(selected[0]), int(selected[-1]) + 1
