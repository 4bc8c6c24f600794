"""Spin-weighted spherical harmonics, Wigner 3j symbols and small-d functions, and the memory coupling tables.

Conventions (stated once here, tested in tests/test_sphere.py):
- ``sY_lm`` follows J. Math. Phys. 8, 2155 (1967) with the Condon-Shortley
  phase, as used by lalsimulation; e.g. ``-2Y_22 = sqrt(5/(64 pi)) (1 + cos th)^2 e^{2 i ph}``.
- The complex strain is ``h = h_plus - i h_cross = sum_lm h_lm -2Y_lm(theta, phi)``.
"""
from __future__ import annotations

from fractions import Fraction
from functools import lru_cache
from math import comb, factorial, pi, sqrt

import numpy as np

from .compiled import goldberg_sums


def spin_weighted_harmonic(s: int, l: int, m: int, theta, phi):
    """Spin-weighted spherical harmonic ``sY_lm(theta, phi)``, vectorized over the angles.

    J. Math. Phys. 8, 2155 (1967), eq. (3.1):
    ``sY_lm = (-1)^m sqrt[(l+m)!(l-m)!(2l+1) / (4 pi (l+s)!(l-s)!)] sin^{2l}(th/2)
    sum_r C(l-s, r) C(l+s, r+s-m) (-1)^{l-r-s} e^{i m ph} cot^{2r+s-m}(th/2)``.
    """
    if l < abs(s) or abs(m) > l:
        return np.zeros(np.broadcast(np.asarray(theta), np.asarray(phi)).shape, dtype=complex)
    theta = np.asarray(theta, dtype=float)
    phi = np.asarray(phi, dtype=float)
    half_sin = np.sin(theta / 2)
    half_cos = np.cos(theta / 2)
    prefactor = (-1) ** m * sqrt(
        factorial(l + m) * factorial(l - m) * (2 * l + 1)
        / (4 * pi * factorial(l + s) * factorial(l - s))
    )
    total = np.zeros(np.broadcast(theta, phi).shape, dtype=float)
    for r in range(0, l - s + 1):
        k = r + s - m
        if k < 0 or k > l + s:
            continue
        power_cot = 2 * r + s - m
        coefficient = comb(l - s, r) * comb(l + s, k) * (-1) ** (l - r - s)
        # sin^{2l}(x) cot^{p}(x) = cos^{p}(x) sin^{2l-p}(x), written so the poles are finite
        total = total + coefficient * half_cos ** power_cot * half_sin ** (2 * l - power_cot)
    return prefactor * total * np.exp(1j * m * phi)


@lru_cache(maxsize=None)
def wigner_3j(j1: int, j2: int, j3: int, m1: int, m2: int, m3: int) -> float:
    """Wigner 3j symbol for integer arguments, by the Racah formula in exact rational arithmetic."""
    if m1 + m2 + m3 != 0 or abs(m1) > j1 or abs(m2) > j2 or abs(m3) > j3:
        return 0.0
    if j3 < abs(j1 - j2) or j3 > j1 + j2:
        return 0.0
    triangle = Fraction(
        factorial(j1 + j2 - j3) * factorial(j1 - j2 + j3) * factorial(-j1 + j2 + j3),
        factorial(j1 + j2 + j3 + 1),
    )
    square = triangle * (
        factorial(j1 + m1) * factorial(j1 - m1) * factorial(j2 + m2) * factorial(j2 - m2)
        * factorial(j3 + m3) * factorial(j3 - m3)
    )
    k_min = max(0, j2 - j3 - m1, j1 - j3 + m2)
    k_max = min(j1 + j2 - j3, j1 - m1, j2 + m2)
    series = Fraction(0)
    for k in range(k_min, k_max + 1):
        series += Fraction(
            (-1) ** k,
            factorial(k) * factorial(j1 + j2 - j3 - k) * factorial(j1 - m1 - k)
            * factorial(j2 + m2 - k) * factorial(j3 - j2 + m1 + k) * factorial(j3 - j1 - m2 + k),
        )
    if series == 0:
        return 0.0
    sign = (-1) ** (j1 - j2 - m3)
    # sqrt(square) * series, keeping precision: square * series^2 is exact
    value = sqrt(float(square * series * series))
    return float(sign * value * (1 if series > 0 else -1))


def triple_integral(l1: int, m1: int, l2: int, m2: int, l: int, m: int) -> float:
    """``oint -2Y_{l1 m1} conj(-2Y_{l2 m2}) conj(0Y_{l m}) dOmega`` as a product of two 3j symbols.

    ``(-1)^{m + m2} sqrt((2l1+1)(2l2+1)(2l+1)/(4 pi)) (l1 l2 l; m1 -m2 -m)(l1 l2 l; 2 -2 0)``.
    """
    if m != m1 - m2:
        return 0.0
    return ((-1) ** (m + m2)) * sqrt((2 * l1 + 1) * (2 * l2 + 1) * (2 * l + 1) / (4 * pi)) * (
        wigner_3j(l1, l2, l, m1, -m2, -m) * wigner_3j(l1, l2, l, 2, -2, 0)
    )


def memory_normalisation(l: int) -> float:
    """``sqrt((l-2)!/(l+2)!)``, the factor of the memory mode of degree l (PRD 44, R2945 (1991), in mode form)."""
    return sqrt(factorial(l - 2) / factorial(l + 2))


@lru_cache(maxsize=64)
def coupling_table(input_modes: tuple, ell_max: int):
    """Coupling coefficients of the memory modes for one set of input modes.

    Returns ``(output_modes, coefficients)`` where ``coefficients[k, i, j]`` multiplies
    ``dh_i conj(dh_j)`` in the rate of output mode ``output_modes[k]``:
    ``d h_mem_lm / dt = sum_ij coefficients[k, i, j] dh_i conj(dh_j)``.
    """
    modes = list(input_modes)
    wanted = sorted({(l, mi - mj) for (li, mi) in modes for (lj, mj) in modes
                     for l in range(2, ell_max + 1) if abs(mi - mj) <= l})
    table = np.zeros((len(wanted), len(modes), len(modes)))
    for k, (l, m) in enumerate(wanted):
        normal = memory_normalisation(l)
        for i, (li, mi) in enumerate(modes):
            for j, (lj, mj) in enumerate(modes):
                if mi - mj == m and abs(li - lj) <= l <= li + lj:
                    table[k, i, j] = normal * triple_integral(li, mi, lj, mj, l, m)
    keep = np.any(table != 0, axis=(1, 2))
    output = tuple(mode for mode, used in zip(wanted, keep) if used)
    return output, table[keep]


class HarmonicSet:
    """``-2Y_lm`` of many (l, m) at one direction at once: the Goldberg sums laid out as flat arrays."""

    def __init__(self, modes, s: int = -2):
        self.modes = tuple(modes)
        coefficients, cos_powers, sin_powers, owners = [], [], [], []
        for k, (l, m) in enumerate(self.modes):
            prefactor = (-1) ** m * sqrt(factorial(l + m) * factorial(l - m) * (2 * l + 1)
                                         / (4 * pi * factorial(l + s) * factorial(l - s)))
            for r in range(0, l - s + 1):
                j = r + s - m
                if 0 <= j <= l + s:
                    coefficients.append(prefactor * comb(l - s, r) * comb(l + s, j) * (-1) ** (l - r - s))
                    cos_powers.append(2 * r + s - m)
                    sin_powers.append(2 * l - (2 * r + s - m))
                    owners.append(k)
        self._coefficients = np.array(coefficients, dtype=float)
        self._cos_powers = np.array(cos_powers, dtype=np.int64)
        self._sin_powers = np.array(sin_powers, dtype=np.int64)
        self._owners = np.array(owners, dtype=np.int64)
        self._m = np.array([m for _, m in self.modes], dtype=float)
        # the compiled sums need non-negative powers (always so for s = -2); decided once here
        self._compiled = bool(self._cos_powers.size and min(self._cos_powers.min(), self._sin_powers.min()) >= 0)

    def __call__(self, theta: float, phi: float) -> np.ndarray:
        if self._compiled:
            out = np.empty(len(self.modes), dtype=complex)
            goldberg_sums(self._coefficients, self._cos_powers, self._sin_powers, self._owners, self._m,
                          float(theta), float(phi), out)
            return out
        terms = (self._coefficients * np.cos(theta / 2) ** self._cos_powers
                 * np.sin(theta / 2) ** self._sin_powers)
        return np.bincount(self._owners, weights=terms, minlength=len(self.modes)) * np.exp(1j * self._m * phi)


@lru_cache(maxsize=64)
def direction_tables(input_modes: tuple):
    """The output harmonics and coupling table of ``input_modes`` (``coupling_table`` up to twice their largest l)."""
    ell_max = max(2, 2 * max(l for l, _ in input_modes))
    output, table = coupling_table(input_modes, ell_max)
    return HarmonicSet(output), table


def direction_matrix(input_modes: tuple, theta: float, phi: float) -> np.ndarray:
    """Couplings contracted with the harmonics at one observer direction, all degrees kept.

    ``h_mem(t, N) = int dt sum_ij W_ij dh_i conj(dh_j)`` with
    ``W_ij = sum_l coefficients[(l, m_i - m_j), i, j] -2Y_{l, m_i - m_j}(N)``, l up to l_i + l_j.
    """
    harmonics, table = direction_tables(tuple(input_modes))
    return np.einsum("k,kij->ij", harmonics(theta, phi), table)  # einsum: independent of BLAS threads


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
