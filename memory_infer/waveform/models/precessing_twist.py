"""IMRPhenomXPHM's inertial-frame (J-frame) modes twisted up here from its co-precessing modes, in one pass.

``h_lm(f > 0) = sum_m' e^{-i m' eps} h'_{l,-m'}(f) e^{-i m alpha} d^l_{m,-m'}(beta)`` and
``h_lm(-f) = (-1)^l sum_m' e^{i m' eps} conj(h'_{l,-m'}(f)) e^{-i m alpha} d^l_{m,m'}(beta)``
(Phys. Rev. D 103, 104056 (2021), eqs. E3-E4; Wigner's small d with ``cos(beta/2)``, ``sin(beta/2)``), the Euler
angles of mode ``m'`` taken at the orbital frequency of that mode, ``2 f / m'``. The co-precessing modes
``h'_{l,-m'}`` (m' = 1..l, the model's five) come from lalsimulation's ``SimIMRPhenomXPHMOneMode`` with
``PhenomXPHMPrecModes = 1``; the angles of the default precession version (223: the multiple-scale angles of
Phys. Rev. D 95, 104004 (2017)) from ``SimIMRPhenomXPMSAAngles`` on the union of the four m' arguments
(:func:`msa_angle_union`; ``eps = -gamma``), which returns them for phi_ref = 0: alpha is turned by ``alpha0(phi_ref) - alpha0(0)`` of
``SimIMRPhenomXPCalculateModelParametersFromSourceFrame``.

``SimInspiralChooseFDModes`` builds each of the 21 J-frame modes in its own call, each regenerating the five
co-precessing modes and the angles; this builds them all from one generation (the same numbers to ~1e-13,
tests/waveform/models/test_precessing_twist.py, with ``quiet = 0`` and ``angle_check = 0``). In use, the angles
are called at a few hundred of those arguments and interpolated between them where a bisection check holds them
within ``ANGLE_CHECK`` (:mod:`.checked_interpolation`; measured errors at most 6.7e-7 rad, the memory within 8.6e-9
of its peak), and each co-precessing mode is twisted up
only to its last value above ``QUIET`` of the loudest mode's peak (its high-frequency tail beyond is dropped): the
modes move by at most 1e-7 of the loudest peak, the final memory by at most 2.5e-6, the memory series by 2.6e-6 of
its peak and its network SNR by 1.1e-7 (36+29, 60+10 and 10+8 solar masses at 2048 and 4096 Hz), for 29% fewer angle frequencies (3,518
instead of 4,934 for the first test binary, 36+29). Other precession versions (numerical spin-Taylor angles, or the
next-to-next-to-leading-order ones), a restricted mode list, or a twist that does not match lalsimulation's own
single mode at a few frequencies (the angles' fallback when the multiple-scale system cannot be set up) return None:
the caller then uses ``SimInspiralChooseFDModes``.
"""
from __future__ import annotations

from functools import lru_cache

import numpy as np

from ...common.compiled import compiled
from ..sphere import wigner_d, wigner_terms  # noqa: F401 (wigner_d: for its tests)
from .checked_interpolation import checked_interpolation
from .lal_call import lal_modules, quiet

COPRECESSING = ((2, 1), (2, 2), (3, 2), (3, 3), (4, 4))  # (l, m') of the model's co-precessing modes
M_PRIMES = (1, 2, 3, 4)  # the angles' m' (their rows in :func:`twist_into`)
MSA_VERSIONS = (220, 221, 222, 223, 224)
QUIET = 1e-7  # the twist's end: a co-precessing mode's last value above this fraction of the loudest mode's peak
ANGLE_CHECK = 1e-7  # the angles in use: interpolated where a check at this (rad) holds (errors measured <= 6.7e-7)
ANGLE_STEP = 0.04  # the interpolation's first nodes: this far apart in ln f (about 4% in frequency), then bisected
CHECK_TOLERANCE = 1e-2  # the single-mode check: lalsimulation's own mode on a few frequencies (not multibanded)


class BlockRows(dict):
    """The J-frame modes ``(l, m) -> h_lm``, each a row of ``block`` in the dictionary's order."""

    block: np.ndarray


@lru_cache(maxsize=1)
def default_precession_version() -> int:
    """lalsimulation's default ``PhenomXPrecVersion`` of IMRPhenomXPHM (300 reads as 223 in lalsimulation 6.2)."""
    lal, lalsim = lal_modules()
    version = int(lalsim.SimInspiralWaveformParamsLookupPhenomXPrecVersion(lal.CreateDict()))
    return 223 if version == 300 else version


@lru_cache(maxsize=1)
def twist_terms():
    """(J-frame keys in lalsimulation's order, tables of :func:`twist_into`): one group per l, m >= 0 and
    co-precessing mode m' of that l, with the terms ``coefficient cos(beta/2)^p sin(beta/2)^q`` of ``d^l_{m,-m'}``
    and then of ``d^l_{m,m'}``. The J-frame modes (l, m) and (l, -m) are both written from them: at positive
    frequencies ``d^l_{m,-m'}`` and ``d^l_{-m,-m'} = (-1)^(m-m') d^l_{m,m'}``, at negative ones ``(-1)^l d^l_{m,m'}``
    and ``(-1)^l d^l_{-m,m'} = (-1)^(l+m+m') d^l_{m,-m'}`` (the small d's symmetry ``d^l_{-a,-b} = (-1)^(a-b)
    d^l_{ab}``)."""
    keys = tuple((l, m) for l in (4, 3, 2) for m in range(l, -l - 1, -1))  # l, then m, descending
    plus_rows, minus_rows, sources, orders, starts, signs = [], [], [], [], [0], []
    coefficients, cos_orders, sin_orders = [], [], []
    for l, m in keys:
        if m < 0:
            continue
        for j, (ll, mp) in enumerate(COPRECESSING):
            if ll != l:
                continue
            plus_rows.append(keys.index((l, m))), minus_rows.append(keys.index((l, -m)))
            sources.append(j), orders.append(m)
            signs.append(((-1) ** l, (-1) ** (m - mp), (-1) ** (l + m + mp)))
            for b in (-mp, mp):
                for coefficient, p, q in wigner_terms(l, m, b):
                    coefficients.append(coefficient), cos_orders.append(p), sin_orders.append(q)
                starts.append(len(coefficients))
    as_int = [np.array(x, dtype=np.int64) for x in (plus_rows, minus_rows, sources, orders, starts, cos_orders,
                                                    sin_orders)]
    angle_rows = np.array([M_PRIMES.index(mp) for _, mp in COPRECESSING], dtype=np.int64)
    terms = (angle_rows, *as_int[:5], np.array(signs, dtype=float), np.array(coefficients), *as_int[5:])
    for array in terms:
        array.flags.writeable = False
    return keys, terms


@compiled
def _small_d(cos_powers, sin_powers, a, lo, hi, coefficients, cos_orders, sin_orders, end, out):
    """``out[:end] = sum_e coefficients[e] cos_powers[a, p_e] sin_powers[a, q_e]`` over the terms ``lo .. hi - 1``."""
    out[:end] = 0.0
    for e in range(lo, hi):
        coefficient = coefficients[e]
        cp = cos_powers[a, cos_orders[e]]
        sp = sin_powers[a, sin_orders[e]]
        for t in range(end):
            out[t] += coefficient * cp[t] * sp[t]


@compiled
def twist_into(coprecessing, ends, angles, where, offsets, angle_ends, turn, first, centre, angle_rows, plus_rows,
               minus_rows, sources, orders, starts, signs, coefficients, cos_orders, sin_orders, out):
    """For each group of :func:`twist_terms` (l, m >= 0, m'), with ``d_a = d^l_{m,-m'}``, ``d_b = d^l_{m,m'}`` of
    ``beta``, ``e = e^{-i m (alpha + turn)}`` and ``x = e^{i m' gamma} h'_{l,-m'}`` (``coprecessing[j, t]``, the
    angles of ``m'`` on row ``angle_rows[j] = m' - 1``): ``out[(l, m), centre + first + t] += d_a e x``,
    ``out[(l, m), centre - first - t] += (-1)^l d_b e conj(x)``, and for m > 0 ``out[(l, -m), centre + first + t]
    += (-1)^(m-m') d_b conj(e) x``, ``out[(l, -m), centre - first - t] += (-1)^(l+m+m') d_a conj(e) conj(x)``.
    The angles are ``angles[:, where[offsets[row] + t]]`` (:func:`msa_angle_union`; the sines and cosines are taken
    once per union point, the powers ``e^{-i m alpha}``, ``e^{i m' gamma}`` by multiplication). Source ``j`` is taken
    for ``t < ends[j]`` only (zero beyond). Each stage runs along the frequencies (contiguous rows; the output's rows
    are far apart in memory)."""
    n_angles = angle_ends.size
    n = angle_ends.max()
    n_sources = coprecessing.shape[0]
    count = angles.shape[1]
    half_cos = np.empty(count)
    half_sin = np.empty(count)
    spins = np.empty(count, dtype=np.complex128)  # e^{-i (alpha + turn)}
    twists = np.empty(count, dtype=np.complex128)  # e^{i gamma}
    for u in range(count):
        cosine = min(max(angles[2, u], -1.0), 1.0)
        half_cos[u] = np.sqrt(0.5 * (1.0 + cosine))
        half_sin[u] = np.sqrt(0.5 * (1.0 - cosine))
        angle = angles[0, u] + turn
        spins[u] = complex(np.cos(angle), -np.sin(angle))
        twists[u] = complex(np.cos(angles[1, u]), np.sin(angles[1, u]))
    cos_powers = np.empty((n_angles, 9, n))
    sin_powers = np.empty((n_angles, 9, n))
    turns = np.empty((n_angles, 5, n), dtype=np.complex128)  # m = 0..4; negative m by conjugation
    turned = np.empty((n_sources, n), dtype=np.complex128)
    for a in range(n_angles):
        for t in range(angle_ends[a]):
            u = where[offsets[a] + t]
            c = half_cos[u]
            s = half_sin[u]
            cos_powers[a, 0, t] = 1.0
            sin_powers[a, 0, t] = 1.0
            for p in range(1, 9):
                cos_powers[a, p, t] = cos_powers[a, p - 1, t] * c
                sin_powers[a, p, t] = sin_powers[a, p - 1, t] * s
            spin = spins[u]
            turns[a, 0, t] = 1.0
            for m in range(1, 5):
                turns[a, m, t] = turns[a, m - 1, t] * spin
    for j in range(n_sources):
        a = angle_rows[j]
        for t in range(ends[j]):
            z = twists[where[offsets[a] + t]]
            power = z
            for _ in range(a):  # e^{i m' gamma}, m' = a + 1
                power = power * z
            turned[j, t] = power * coprecessing[j, t]
    d_a = np.empty(n)
    d_b = np.empty(n)
    base0 = centre + first
    base1 = centre - first
    for g in range(sources.size):
        j = sources[g]
        a = angle_rows[j]
        end = ends[j]
        _small_d(cos_powers, sin_powers, a, starts[2 * g], starts[2 * g + 1], coefficients, cos_orders, sin_orders,
                 end, d_a)
        _small_d(cos_powers, sin_powers, a, starts[2 * g + 1], starts[2 * g + 2], coefficients, cos_orders,
                 sin_orders, end, d_b)
        m = orders[g]
        tw = turns[a, m]
        x = turned[j]
        plus, minus = plus_rows[g], minus_rows[g]
        s1, s2, s3 = signs[g, 0], signs[g, 1], signs[g, 2]
        if m == 0:
            for t in range(end):
                ex = tw[t] * x[t]
                exc = tw[t] * np.conj(x[t])
                out[plus, base0 + t] += d_a[t] * ex
                out[plus, base1 - t] += (s1 * d_b[t]) * exc
        else:
            for t in range(end):
                ex = tw[t] * x[t]
                exc = tw[t] * np.conj(x[t])
                out[plus, base0 + t] += d_a[t] * ex
                out[plus, base1 - t] += (s1 * d_b[t]) * exc
                out[minus, base0 + t] += (s2 * d_b[t]) * np.conj(exc)  # conj(e) x
                out[minus, base1 - t] += (s3 * d_a[t]) * np.conj(ex)  # conj(e) conj(x)


@compiled
def loud_stretch(stacked, quiet):
    """(lo, hi, ends): the co-precessing modes' nonzero stretch ``lo .. hi - 1`` over every row (lo at least 1, f = 0
    left out), and each row's end in it: one past its last value above ``quiet`` times the largest modulus in the
    stretch (0 when none is). (0, 0, ends) when nothing is nonzero or a value in the stretch is not finite."""
    rows, n = stacked.shape
    ends = np.zeros(rows, dtype=np.int64)
    lo, hi = n, 0
    for r in range(rows):
        for t in range(n):
            if stacked[r, t] != 0:
                lo = min(lo, t)
                hi = max(hi, t + 1)
    lo = max(lo, 1)
    if hi <= lo:
        return 0, 0, ends
    # squared moduli decide wherever they are clear by a relative 1e-12 (the modulus itself otherwise: the same
    # decisions as comparing moduli, tested against that plain loop)
    largest = 0.0
    for r in range(rows):
        for t in range(lo, hi):
            value = stacked[r, t]
            if not (np.isfinite(value.real) and np.isfinite(value.imag)):
                return 0, 0, ends
            largest = max(largest, value.real * value.real + value.imag * value.imag)
    exact = not (1e-290 < largest < 1e290)  # squares out of range: moduli throughout
    peak = 0.0
    for r in range(rows):
        for t in range(lo, hi):
            value = stacked[r, t]
            if exact or value.real * value.real + value.imag * value.imag >= largest * (1.0 - 1e-12):
                peak = max(peak, abs(value))
    threshold = quiet * peak
    above = threshold * threshold * (1.0 + 1e-12)
    below = threshold * threshold * (1.0 - 1e-12)
    for r in range(rows):
        for t in range(hi - 1, lo - 1, -1):
            value = stacked[r, t]
            square = value.real * value.real + value.imag * value.imag
            if exact or below <= square <= above or not (1e-290 < above < 1e290):
                loud = abs(value) > threshold
            else:
                loud = square > above
            if loud:
                ends[r] = t + 1 - lo
                break
    return lo, hi, ends


@compiled
def union_of_arguments(lo, ends, factors):
    """(the union of ``factors[r] k`` over rows ``r`` and ``lo <= k < lo + ends[r]``, ascending, each once; the
    position in it of every row's entry, rows one after the other): the angles' arguments ``2 f / m'`` in units of
    ``delta_f / 6`` (``factors = 12 / m'``)."""
    top = 0
    for r in range(ends.size):
        top = max(top, factors[r] * (lo + ends[r]))
    used = np.zeros(top + 1, dtype=np.int64)
    for r in range(ends.size):
        for k in range(lo, lo + ends[r]):
            used[factors[r] * k] = 1
    count = 0
    for value in range(top + 1):  # used[value] becomes the value's position in the union, plus one
        if used[value]:
            count += 1
            used[value] = count
    union = np.empty(count, dtype=np.int64)
    for value in range(top + 1):
        if used[value]:
            union[used[value] - 1] = value
    where = np.empty(ends.sum(), dtype=np.int64)
    at = 0
    for r in range(ends.size):
        for k in range(lo, lo + ends[r]):
            where[at] = used[factors[r] * k] - 1
            at += 1
    return union, where


def msa_angle_union(lo, ends, delta_f, m1, m2, spins, inclination, reference_frequency, check=0.0):
    """(values, where): the angles (alpha, gamma, cos beta) ``values[:, u]`` on the union of the arguments ``2 f /
    m'`` of every m' (rows in ``M_PRIMES`` order) and ``f = k delta_f``, ``lo <= k < lo + ends[row]``, and the position
    ``where[offset(row) + k - lo]`` in that union of each row's entry (rows one after the other), from one call of
    ``SimIMRPhenomXPMSAAngles``: mode ``m'``'s angles at ``f`` are the m' = 2 angles at ``2 f / m'`` (the function
    uses m' only to take the orbital frequency ``2 f / m'`` of its argument), so one call on the union, multiples of
    ``delta_f / 6``, serves all four (the same arguments to the last bit for m' = 1, 2, 4; for m' = 3 ``2 f / 3`` is
    rounded once instead of ``2 / 3``). ``check`` > 0 (rad, and for cos beta): the call is made at nodes from
    ``ANGLE_STEP`` apart in ln f, bisected until a cubic between them reproduces a middle value within ``check``, and
    the angles between the nodes are interpolated (:mod:`.checked_interpolation`)."""
    lal, lalsim = lal_modules()
    union, where = union_of_arguments(lo, np.asarray(ends, dtype=np.int64), np.array([12 // mp for mp in M_PRIMES]))
    frequencies = union * delta_f / 6

    def evaluate(indices):
        arguments = lal.CreateREAL8Vector(indices.size)
        arguments.data[:] = frequencies[indices]
        with quiet():  # a single frequency draws a message (f_max <= f_min) but the same angles
            values = lalsim.SimIMRPhenomXPMSAAngles(arguments, m1, m2, *spins, inclination, reference_frequency, 2,
                                                    None)
        return np.array([value.data for value in values])

    return checked_interpolation(np.log(frequencies), evaluate, 3, ANGLE_STEP, check), where


def msa_angles(lo, ends, delta_f, m1, m2, spins, inclination, reference_frequency, check=0.0):
    """(alpha, gamma, cos beta) of every m' (rows in ``M_PRIMES`` order) on ``f = k delta_f``, ``lo <= k < lo +
    ends[row]`` (zero beyond): :func:`msa_angle_union` row by row."""
    values, where = msa_angle_union(lo, ends, delta_f, m1, m2, spins, inclination, reference_frequency, check)
    angles = np.zeros((3, len(M_PRIMES), max(ends)))
    offsets = np.cumsum([0, *ends])
    for row, end in enumerate(ends):
        angles[:, row, :end] = values[:, where[offsets[row]:offsets[row + 1]]]
    return angles


def twisted_modes(mass_1, mass_2, spin_1, spin_2, delta_f, start, f_max, reference_frequency, phase, inclination,
                  distance_m, size, quiet: float = QUIET, angle_check: float = ANGLE_CHECK) -> dict | None:
    """J-frame modes ``(l, m) -> h_lm`` on ``f = (k - N) delta_f`` (``2 N + 1 = size`` samples, as
    ``SimInspiralChooseFDModes``), masses in solar masses, distance in metres; None if not applicable
    (module docstring). Each co-precessing mode is twisted up to its last value above ``quiet`` times the loudest
    mode's peak (0: to its last nonzero value, lalsimulation's modes to rounding), with the angles interpolated where
    a check at ``angle_check`` holds (0: every angle from lalsimulation, :func:`msa_angle_union`)."""
    if default_precession_version() not in MSA_VERSIONS:
        return None
    lal, lalsim = lal_modules()
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
    stacked = np.array([coprecessing[key][:n_positive] for key in COPRECESSING])
    lo, hi, ends = loud_stretch(stacked, float(quiet))  # one compiled pass
    if hi <= lo:  # nothing nonzero, or a value that is not finite
        return None
    sources = stacked[:, lo:hi]
    angle_ends = [max([end for end, (_, mp) in zip(ends, COPRECESSING) if mp == m_prime], default=1)
                  for m_prime in M_PRIMES]
    turn = (lalsim.SimIMRPhenomXPCalculateModelParametersFromSourceFrame(
        m1, m2, reference_frequency, phase, inclination, *spins, lal.CreateDict())[4]
        - lalsim.SimIMRPhenomXPCalculateModelParametersFromSourceFrame(
        m1, m2, reference_frequency, 0.0, inclination, *spins, lal.CreateDict())[4])
    angles, where = msa_angle_union(lo, angle_ends, delta_f, m1, m2, spins, inclination, reference_frequency,
                                    angle_check)
    if not np.isfinite(angles).all():
        return None  # finite inputs give finite modes (bounded factors)
    keys, terms = twist_terms()
    block = np.zeros((len(keys), size), dtype=complex)
    offsets = np.cumsum(np.array([0, *angle_ends[:-1]], dtype=np.int64))
    twist_into(sources, ends, angles, where, offsets, np.asarray(angle_ends, dtype=np.int64), float(turn), lo, half,
               *terms, block)
    modes = BlockRows({key: block[row] for row, key in enumerate(keys)})
    modes.block = block
    if not _agrees(modes, m1, m2, spins, delta_f, lo, hi, half, reference_frequency, phase, inclination, distance_m):
        return None
    return modes


def _agrees(modes, m1, m2, spins, delta_f, lo, hi, half, reference_frequency, phase, inclination, distance_m) -> bool:
    """Whether the twisted (2, 1) mode matches lalsimulation's own J-frame (2, 1) mode at a few frequencies
    (``SimIMRPhenomXPHMFrequencySequenceOneMode``, its angles whatever version it settled on)."""
    lal, lalsim = lal_modules()
    picks = lo + ((hi - 1 - lo) * np.arange(6)) // 5  # six spread over the stretch, ends included
    frequencies = lal.CreateREAL8Vector(6)
    frequencies.data[:] = picks * delta_f
    positive, negative = lalsim.SimIMRPhenomXPHMFrequencySequenceOneMode(
        frequencies, 2, 1, m1, m2, *spins, distance_m, inclination, phase, reference_frequency, None)
    mode = modes[(2, 1)]
    theirs_positive, theirs_negative = positive.data.data, negative.data.data
    scale = max(np.abs(theirs_positive).max(), np.abs(theirs_negative).max(), 1e-300)
    worst = max(np.abs(mode[half + picks] - theirs_positive).max(), np.abs(mode[half - picks] - theirs_negative).max())
    return bool(worst <= CHECK_TOLERANCE * scale)
