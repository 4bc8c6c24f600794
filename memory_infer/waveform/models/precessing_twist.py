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
from math import factorial, sqrt

import numpy as np

from .lal_modes import _lal

COPRECESSING = ((2, 1), (2, 2), (3, 2), (3, 3), (4, 4))  # (l, m') of the model's co-precessing modes
MSA_VERSIONS = (220, 221, 222, 223, 224)
CHECK_TOLERANCE = 1e-2  # the single-mode check: lalsimulation's own mode on a few frequencies (not multibanded)


@lru_cache(maxsize=1)
def default_precession_version() -> int:
    """lalsimulation's default ``PhenomXPrecVersion`` of IMRPhenomXPHM (300 reads as 223 in lalsimulation 6.2)."""
    lal, lalsim = _lal()
    version = int(lalsim.SimInspiralWaveformParamsLookupPhenomXPrecVersion(lal.CreateDict()))
    return 223 if version == 300 else version


@lru_cache(maxsize=64)
def wigner_terms(l: int, a: int, b: int):
    """``d^l_{ab}(beta) = sum coefficient cos(beta/2)^p sin(beta/2)^q`` as ((coefficient, p, q), ...)."""
    terms = []
    for k in range(2 * l + 1):
        if l + b - k < 0 or a - b + k < 0 or l - a - k < 0:
            continue
        norm = sqrt(factorial(l + a) * factorial(l - a) * factorial(l + b) * factorial(l - b))
        coefficient = (-1) ** (a - b + k) * norm / (factorial(l + b - k) * factorial(k) * factorial(a - b + k)
                                                    * factorial(l - a - k))
        terms.append((coefficient, 2 * l + b - a - 2 * k, a - b + 2 * k))
    return tuple(terms)


def wigner_d(l: int, a: int, b: int, cos_powers, sin_powers) -> np.ndarray:
    """``d^l_{ab}(beta)`` from the powers ``cos(beta/2)^p``, ``sin(beta/2)^q`` (rows p, q = 0..2l)."""
    total = 0.0
    for coefficient, p, q in wigner_terms(l, a, b):
        total = total + coefficient * cos_powers[p] * sin_powers[q]
    return total


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
    angles = {}
    for mp in sorted({mp for _, mp in COPRECESSING}):
        alpha, gamma, cos_beta = lalsim.SimIMRPhenomXPMSAAngles(frequencies, m1, m2, *spins, inclination,
                                                                reference_frequency, mp, None)
        cos_beta = np.clip(cos_beta.data, -1.0, 1.0)
        half_cos, half_sin = np.sqrt(0.5 * (1 + cos_beta)), np.sqrt(0.5 * (1 - cos_beta))
        cos_powers, sin_powers = np.ones((9, hi - lo)), np.ones((9, hi - lo))
        for p in range(1, 9):
            cos_powers[p], sin_powers[p] = cos_powers[p - 1] * half_cos, sin_powers[p - 1] * half_sin
        spin = np.exp(-1j * (alpha.data + turn))  # e^{-i alpha}
        spin_powers = {0: np.ones(hi - lo, dtype=complex)}
        for m in range(1, 5):
            spin_powers[m] = spin_powers[m - 1] * spin
            spin_powers[-m] = np.conj(spin_powers[m])
        angles[mp] = (gamma.data, cos_powers, sin_powers, spin_powers)
    modes = {}
    for l in (4, 3, 2):  # lalsimulation's order: l, then m, descending
        sign = (-1) ** l
        parts = []
        for (ll, mp) in COPRECESSING:
            if ll != l:
                continue
            gamma, cos_powers, sin_powers, spin_powers = angles[mp]
            turned = np.exp(1j * mp * gamma) * coprecessing[(l, mp)][lo:hi]  # e^{-i m' eps} h', eps = -gamma
            parts.append((mp, turned, cos_powers, sin_powers, spin_powers))
        for m in range(l, -l - 1, -1):
            positive, negative = 0.0, 0.0
            for mp, turned, cos_powers, sin_powers, spin_powers in parts:
                positive = positive + turned * (wigner_d(l, m, -mp, cos_powers, sin_powers) * spin_powers[m])
                negative = negative + np.conj(turned) * (wigner_d(l, m, mp, cos_powers, sin_powers) * spin_powers[m])
            mode = np.zeros(size, dtype=complex)
            mode[half + lo:half + hi] = positive
            mode[half - hi + 1:half - lo + 1] = (sign * negative)[::-1]
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
