"""IMRPhenomXPHM's inertial-frame (J-frame) modes twisted up here from its co-precessing modes, in one pass.

``h_lm(f > 0) = sum_m' e^{-i m' eps} h'_{l,-m'}(f) e^{-i m alpha} d^l_{m,-m'}(beta)`` and
``h_lm(-f) = (-1)^l sum_m' e^{i m' eps} conj(h'_{l,-m'}(f)) e^{-i m alpha} d^l_{m,m'}(beta)``
(Phys. Rev. D 103, 104056 (2021), eqs. E3-E4; Wigner's small d with ``cos(beta/2)``, ``sin(beta/2)``), the Euler
angles of mode ``m'`` taken at the orbital frequency of that mode, ``2 f / m'``. The co-precessing modes
``h'_{l,-m'}`` (m' = 1..l, the model's five) come from lalsimulation's ``SimIMRPhenomXPHMOneMode`` with
``PhenomXPHMPrecModes = 1``; the angles of the default precession version (223: the multiple-scale angles of
Phys. Rev. D 95, 104004 (2017)) from ``SimIMRPhenomXPMSAAngles`` (``eps = -gamma``), which returns them for
phi_ref = 0: alpha is turned by ``alpha0(phi_ref) - alpha0(0)`` of
``SimIMRPhenomXPCalculateModelParametersFromSourceFrame``.

``SimInspiralChooseFDModes`` builds each of the 21 J-frame modes in its own call, each regenerating the five
co-precessing modes and the angles; this builds them all from one generation (the same numbers to ~1e-13,
tests/waveform/models/test_precessing_twist.py). Other precession versions (numerical spin-Taylor angles,
or the next-to-next-to-leading-order ones), a restricted mode list, or a twist that does not match
lalsimulation's own single mode at a few frequencies (the angles' fallback when the multiple-scale system cannot
be set up) return None: the caller then uses ``SimInspiralChooseFDModes``.
"""
from __future__ import annotations

from functools import lru_cache

import numpy as np

from ...common.compiled import compiled
from ..sphere import wigner_d, wigner_terms  # noqa: F401 (wigner_d: this module's twist, and its tests)
from .lal_call import lal_modules as _lal

COPRECESSING = ((2, 1), (2, 2), (3, 2), (3, 3), (4, 4))  # (l, m') of the model's co-precessing modes
MSA_VERSIONS = (220, 221, 222, 223, 224)
CHECK_TOLERANCE = 1e-2  # the single-mode check: lalsimulation's own mode on a few frequencies (not multibanded)


@lru_cache(maxsize=1)
def default_precession_version() -> int:
    """lalsimulation's default ``PhenomXPrecVersion`` of IMRPhenomXPHM (300 reads as 223 in lalsimulation 6.2)."""
    lal, lalsim = _lal()
    version = int(lalsim.SimInspiralWaveformParamsLookupPhenomXPrecVersion(lal.CreateDict()))
    return 223 if version == 300 else version


@lru_cache(maxsize=1)
def twist_terms():
    """(J-frame keys in lalsimulation's order, term arrays of :func:`twist_sums`): one entry per term of
    ``d^l_{m,-m'}`` (positive frequencies) and ``d^l_{m,m'}`` (negative ones) of every co-precessing mode."""
    keys = tuple((l, m) for l in (4, 3, 2) for m in range(l, -l - 1, -1))  # l, then m, descending
    rows, sources, sides, orders, coefficients, cos_orders, sin_orders = [], [], [], [], [], [], []
    for row, (l, m) in enumerate(keys):
        for j, (ll, mp) in enumerate(COPRECESSING):
            if ll != l:
                continue
            for side, b in ((0, -mp), (1, mp)):
                for coefficient, p, q in wigner_terms(l, m, b):
                    rows.append(row), sources.append(j), sides.append(side), orders.append(m + 4)
                    coefficients.append(coefficient), cos_orders.append(p), sin_orders.append(q)
    as_int = [np.array(x, dtype=np.int64) for x in (rows, sources, sides, orders, cos_orders, sin_orders)]
    terms = (*as_int[:4], np.array(coefficients), *as_int[4:])
    for array in terms:
        array.flags.writeable = False
    return keys, terms


@compiled
def twist_sums(turned, cos_beta, spin, rows, sources, sides, orders, coefficients, cos_orders, sin_orders, out):
    """``out[row, side, t] += coefficient cos(beta/2)^p sin(beta/2)^q e^{-i m alpha} x`` over the terms, with
    ``x = turned[j, t]`` (side 0, positive frequencies) or its conjugate (side 1)."""
    sources_n, n = turned.shape
    cos_powers = np.empty((sources_n, 9))
    sin_powers = np.empty((sources_n, 9))
    turns = np.empty((sources_n, 9), dtype=np.complex128)
    for t in range(n):
        for j in range(sources_n):
            c = np.sqrt(0.5 * (1.0 + cos_beta[j, t]))
            s = np.sqrt(0.5 * (1.0 - cos_beta[j, t]))
            cos_powers[j, 0], sin_powers[j, 0], turns[j, 4] = 1.0, 1.0, 1.0
            for p in range(1, 9):
                cos_powers[j, p] = cos_powers[j, p - 1] * c
                sin_powers[j, p] = sin_powers[j, p - 1] * s
            for m in range(1, 5):
                turns[j, 4 + m] = turns[j, 3 + m] * spin[j, t]
                turns[j, 4 - m] = np.conj(turns[j, 4 + m])
        for e in range(rows.size):
            j = sources[e]
            value = coefficients[e] * cos_powers[j, cos_orders[e]] * sin_powers[j, sin_orders[e]] * turns[j, orders[e]]
            if sides[e] == 0:
                out[rows[e], 0, t] += value * turned[j, t]
            else:
                out[rows[e], 1, t] += value * np.conj(turned[j, t])


def twisted_modes(mass_1, mass_2, spin_1, spin_2, delta_f, start, f_max, reference_frequency, phase, inclination,
                  distance_m, size) -> dict | None:
    """J-frame modes ``(l, m) -> h_lm`` on ``f = (k - N) delta_f`` (``2 N + 1 = size`` samples, as
    ``SimInspiralChooseFDModes``), masses in solar masses, distance in metres; None if not applicable
    (module docstring)."""
    if default_precession_version() not in MSA_VERSIONS:
        return None
    lal, lalsim = _lal()
    m1, m2 = mass_1 * lal.MSUN_SI, mass_2 * lal.MSUN_SI
    spins = (*[float(x) for x in spin_1], *[float(x) for x in spin_2])
    flags = lal.CreateDict()
    lalsim.SimInspiralWaveformParamsInsertPhenomXPHMPrecModes(flags, 1)
    coprecessing = {}
    for l, mp in COPRECESSING:
        positive, _ = lalsim.SimIMRPhenomXPHMOneMode(l, -mp, m1, m2, *spins, distance_m, inclination, phase,
                                                     delta_f, start, f_max, reference_frequency, flags)
        coprecessing[(l, mp)] = positive.data.data
    half = size // 2
    n_positive = min(half + 1, min(h.size for h in coprecessing.values()))
    loud = np.zeros(n_positive, dtype=bool)
    for h in coprecessing.values():
        loud |= h[:n_positive] != 0
    where = np.nonzero(loud)[0]
    if not where.size:
        return None
    lo, hi = int(where[0]), int(where[-1]) + 1
    lo = max(lo, 1)
    frequencies = lal.CreateREAL8Vector(hi - lo)
    frequencies.data[:] = np.arange(lo, hi) * delta_f
    turn = (lalsim.SimIMRPhenomXPCalculateModelParametersFromSourceFrame(
        m1, m2, reference_frequency, phase, inclination, *spins, lal.CreateDict())[4]
        - lalsim.SimIMRPhenomXPCalculateModelParametersFromSourceFrame(
        m1, m2, reference_frequency, 0.0, inclination, *spins, lal.CreateDict())[4])
    n = hi - lo
    turned, cos_beta, spin = np.empty((5, n), complex), np.empty((5, n)), np.empty((5, n), complex)
    for mp in sorted({mp for _, mp in COPRECESSING}):
        alpha, gamma, cosine = lalsim.SimIMRPhenomXPMSAAngles(frequencies, m1, m2, *spins, inclination,
                                                              reference_frequency, mp, None)
        for j, (l, m_prime) in enumerate(COPRECESSING):
            if m_prime == mp:  # e^{-i m' eps} h' with eps = -gamma; e^{-i alpha}
                turned[j] = np.exp(1j * mp * gamma.data) * coprecessing[(l, mp)][lo:hi]
                cos_beta[j] = np.clip(cosine.data, -1.0, 1.0)
                spin[j] = np.exp(-1j * (alpha.data + turn))
    keys, terms = twist_terms()
    out = np.zeros((len(keys), 2, n), dtype=complex)
    twist_sums(turned, cos_beta, spin, *terms, out)
    modes = {}
    for row, (l, m) in enumerate(keys):
        mode = np.zeros(size, dtype=complex)
        mode[half + lo:half + hi] = out[row, 0]
        mode[half - hi + 1:half - lo + 1] = ((-1) ** l * out[row, 1])[::-1]
        modes[(l, m)] = mode
    if not all(np.all(np.isfinite(v)) for v in modes.values()):
        return None
    if not _agrees(modes, m1, m2, spins, delta_f, lo, hi, half, reference_frequency, phase, inclination, distance_m):
        return None
    return modes


def _agrees(modes, m1, m2, spins, delta_f, lo, hi, half, reference_frequency, phase, inclination, distance_m) -> bool:
    """Whether the twisted (2, 1) mode matches lalsimulation's own J-frame (2, 1) mode at a few frequencies
    (``SimIMRPhenomXPHMFrequencySequenceOneMode``, its angles whatever version it settled on)."""
    lal, lalsim = _lal()
    picks = np.unique(np.linspace(lo, hi - 1, 6).astype(int))
    frequencies = lal.CreateREAL8Vector(picks.size)
    frequencies.data[:] = picks * delta_f
    positive, negative = lalsim.SimIMRPhenomXPHMFrequencySequenceOneMode(
        frequencies, 2, 1, m1, m2, *spins, distance_m, inclination, phase, reference_frequency, None)
    theirs = np.concatenate([positive.data.data, negative.data.data])
    ours = np.concatenate([modes[(2, 1)][half + picks], modes[(2, 1)][half - picks]])
    scale = max(np.abs(theirs).max(), 1e-300)
    return bool(np.abs(ours - theirs).max() <= CHECK_TOLERANCE * scale)
