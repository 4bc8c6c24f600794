"""The memory's flux towards one direction as a small quadratic form per sample, and its pieces.

``h_mem(t, N) = int sum_ij W_ij dh_i conj(dh_j) dt`` (:mod:`memory_infer.waveform.memory`) with
``W_ij = sum_k -2Y_k(N) couplings[k, i, j]``. For modes with ``h_{l,-m} = (-1)^l conj(h_lm)`` (aligned spins) only
the m >= 0 modes are stacked and differenced, as real rows ``y = [Re dh, Im dh]``, and the rate is ``y^T Q y``
with ``Q`` real-blocked: half the arithmetic of the complex form over all modes. Without that symmetry the
complex form ``sum_i dh_i (W conj(dh))_i`` is the smaller one and is used.
"""
from __future__ import annotations

from functools import lru_cache

import numpy as np

from .compiled import (complex_form_rates, contract_real, differences_into, mirror_holds, pair_sums, real_form_rates,
                       sparse_pair_weights)
from .sphere import HarmonicSet, direction_tables


def mirrored_rows(keys, modes) -> bool:
    """Whether the modes obey ``h_{l,-m} = (-1)^l conj(h_lm)`` (aligned spins; checked on nine samples)."""
    if any((l, -m) not in modes for l, m in keys):
        return False
    plus, minus, signs = _mirror_layout(tuple(keys))
    if not plus:
        return True
    return bool(mirror_holds(tuple(np.ascontiguousarray(modes[k], dtype=complex) for k in plus),
                             tuple(np.ascontiguousarray(modes[k], dtype=complex) for k in minus), signs, 9, 1e-9))


@lru_cache(maxsize=64)
def _mirror_layout(keys: tuple):
    """(the m > 0 keys, their mirrors (l, -m), the signs (-1)^l) for :func:`mirrored_rows`."""
    plus = tuple(k for k in keys if k[1] > 0)
    signs = np.array([(-1.0) ** l for l, _ in plus])
    signs.flags.writeable = False
    return plus, tuple((l, -m) for l, m in plus), signs


@lru_cache(maxsize=8)
def harmonic_set(modes: tuple) -> HarmonicSet:
    """The cached :class:`HarmonicSet` of ``modes``."""
    return HarmonicSet(modes)


@lru_cache(maxsize=64)
def flux_tables(keys: tuple, mirrored: bool, real: bool | None = None):
    """(keys stacked, coupling tables in the real layout): the quadratic form of the rate in the real
    vector ``y = [Re dh_own, Im dh_own]`` of the stacked modes' derivatives, with the ``-2Y`` harmonics still to
    be contracted: ``rate = y^T (sum_k Y_k tables[k]) y``, and the same for the m_i = m_j pairs only.

    With the mirror symmetry only m >= 0 are stacked and differenced; the m < 0 modes are
    ``(-1)^l conj`` of their partners, which the tables absorb. The tables also hold the 1/144 of
    :func:`differences` (``12 step dh/dt``). Without the symmetry: complex tables over every mode, or with
    ``real`` the real layout over every mode (``y = [Re dh; Im dh]`` of all of them)."""
    harmonics, table = direction_tables(keys)
    own = tuple(k for k in keys if k[1] >= 0) if mirrored else keys
    count = len(own)
    to_complex = np.zeros((len(keys), 2 * count), dtype=complex)  # dh_keys = to_complex @ y
    for row, (l, m) in enumerate(keys):
        if (l, m) in own:
            i = own.index((l, m))
            to_complex[row, i], to_complex[row, count + i] = 1, 1j
        else:
            i = own.index((l, -m))
            to_complex[row, i], to_complex[row, count + i] = (-1) ** l, -1j * (-1) ** l
    m_values = np.array([m for _, m in keys])
    same_m = m_values[:, None] == m_values[None, :]
    scale = 1 / 144

    def real_form(couplings):  # (k, keys, keys) -> (k, 2 y, y): [Re Q; Im Q] stacked, Q = T^T W conj(T)
        q = np.einsum("ai,kab,bj->kij", to_complex, couplings, np.conj(to_complex)) * scale
        q = (q + np.swapaxes(q, 1, 2)) / 2  # only the symmetric part acts on y^T Q y
        return np.ascontiguousarray(np.concatenate([q.real, q.imag], axis=1))

    if not mirrored and not real:  # the complex form is the smaller one here: y would be twice as long as dh
        return own, harmonics, (table * scale).astype(complex), (table * same_m * scale).astype(complex)
    return own, harmonics, real_form(table), real_form(table * same_m)


@lru_cache(maxsize=64)
def pair_tables(keys: tuple, mirrored: bool = True):
    """The mirrored real form of :func:`flux_tables` on the pairs ``a <= b`` of its real rows, which is all a
    symmetric form needs: ``y^T Q y = sum_{a <= b} c_ab y_a y_b`` with ``c_ab = Q_ab + Q_ba`` (``Q_aa`` on the
    diagonal). Pairs whose coefficient vanishes for every harmonic are dropped. Returns ``(own, harmonics,
    every pair, the m_i = m_j pairs)``, each pair set ``(first rows, second rows, tables (k, 2, pairs))`` followed by
    the tables' nonzero entries (harmonic, pair, real part, imaginary part; k-major) for :func:`weights_on_pairs`.
    Not ``mirrored``: the same on the real rows of every mode (no symmetry; compiled, where the complex form's
    matrix product went through BLAS on a few thousand samples)."""
    own, harmonics, tables, same_m_tables = flux_tables(keys, mirrored, True)
    rows = tables.shape[2]
    first, second = np.triu_indices(rows)

    def on_pairs(table):
        real, imaginary = table[:, :rows], table[:, rows:]
        out = np.stack([real[:, first, second] + real[:, second, first],
                        imaginary[:, first, second] + imaginary[:, second, first]], axis=1)
        out[:, :, first == second] /= 2
        used = np.any(out != 0, axis=(0, 1))
        kept = np.ascontiguousarray(out[:, :, used])
        harmonic_index, pair_index = np.nonzero(np.any(kept != 0, axis=1))  # k-major: each pair's terms in k order
        pairs = (first[used].astype(np.int64), second[used].astype(np.int64), kept, harmonic_index.astype(np.int64),
                 pair_index.astype(np.int64), kept[harmonic_index, 0, pair_index], kept[harmonic_index, 1, pair_index])
        for array in pairs:
            array.flags.writeable = False
        return pairs

    return own, harmonics, on_pairs(tables), on_pairs(same_m_tables)


def weights_on_pairs(pairs, harmonics: np.ndarray):
    """(first rows, second rows, real coefficients, imaginary coefficients) of ``Q = sum_k harmonics[k] Q_k``."""
    first, second, _, harmonic_index, pair_index, real_entries, imaginary_entries = pairs
    real, imaginary = np.empty(first.size), np.empty(first.size)
    sparse_pair_weights(np.ascontiguousarray(harmonics, dtype=complex), harmonic_index, pair_index, real_entries,
                        imaginary_entries, real, imaginary)  # the same numbers as the sum over the whole tables
    return first, second, real, imaginary


def pair_rates(weights, differences: np.ndarray) -> np.ndarray:
    """``y^T Q y`` at every column of the real rows ``differences`` from :func:`weights_on_pairs`' ``weights``."""
    real, imaginary = pair_sums(np.ascontiguousarray(differences), 0, *weights)
    return real + 1j * imaginary


def contract(tables: np.ndarray, harmonics: np.ndarray) -> np.ndarray:
    """``[Re Q; Im Q]`` of ``Q = sum_k Y_k Q_k`` from ``tables[k] = [Re Q_k; Im Q_k]`` (einsum or a compiled loop:
    the numbers do not depend on BLAS threads)."""
    if np.iscomplexobj(tables):  # the complex form (no mirror symmetry)
        return np.einsum("k,kij->ij", harmonics, tables)
    out = np.empty(tables.shape[1:])
    contract_real(np.ascontiguousarray(harmonics, dtype=complex), tables, out)
    return out


def stack_rows(modes: dict, keys, real: bool = True, part: slice = slice(None)) -> np.ndarray:
    """``[Re h; Im h]`` of the samples ``part`` of the modes ``keys``, stacked (2 len(keys), n); complex rows
    ``h`` if not ``real``."""
    if not real:
        return np.array([np.asarray(modes[k])[part] for k in keys], dtype=complex)
    first = np.asarray(modes[keys[0]])[part]
    out = np.empty((2 * len(keys), first.size))
    for i, key in enumerate(keys):
        h = np.asarray(modes[key])[part]
        out[i], out[len(keys) + i] = h.real, h.imag
    return out


def differences(values: np.ndarray) -> np.ndarray:
    """``12 step`` times :func:`time_derivative` (the factor is folded into the coupling tables)."""
    if values.shape[-1] < 5:
        return np.gradient(values, axis=-1) * 12
    values = np.ascontiguousarray(values)
    out = np.empty_like(values)
    differences_into(values.reshape(-1, values.shape[-1]), out.reshape(-1, values.shape[-1]))
    return out


def rates(weights, differences) -> np.ndarray:
    """``sum_ij W_ij dh_i conj(dh_j)`` at every sample as ``y^T Q y`` (real ``y``, ``weights`` = [Re Q; Im Q]).

    One small matrix product: BLAS splits it over samples, never over the sum, so the numbers do not
    depend on the thread count; the sum over the rows runs row by row.
    """
    out = np.empty(differences.shape[1], dtype=complex)
    if np.iscomplexobj(differences):  # the complex form: sum_i dh_i (W conj(dh))_i
        complex_form_rates(differences, weights @ np.conj(differences), out)
    else:
        real_form_rates(differences, weights @ differences, out)
    return out
