"""Values of a smooth but costly function at many ascending abscissae, from a few exact calls: interpolated where a
check says the interpolation holds, exact elsewhere.

Nodes are the abscissae at least ``step`` apart (greedy from the first, the last always one). Between two nodes the
value is the cubic through the four nearest nodes (Lagrange; the end intervals use the first or last four). Each
interval with abscissae inside is checked at its middle one: if the cubic misses the exact value there by more than
a quarter of ``tolerance`` (any component), every abscissa of that interval is taken exact. The cubic's error varies
smoothly across an interval (its fourth derivative's scale), and a kink or jump of the function spoils the cubic over
the whole interval holding it, so the middle is where a failure shows; the quarter is the margin for the rest of the
interval (on lalsimulation's precession angles, 12 random binaries: the largest error over every abscissa was 2.1
times the check's threshold, i.e. 0.54 of ``tolerance``; tests/waveform/models/test_checked_interpolation.py).
Node and check values are exact. Two calls of ``evaluate`` in all (nodes and checks, then the failed intervals).
"""
from __future__ import annotations

import numpy as np

from ...common.compiled import compiled


@compiled
def nodes_and_checks(x, step):
    """(node flags, check flags, interval of each abscissa): nodes at least ``step`` apart (first and last
    included), one check at the middle abscissa of every interval with abscissae inside."""
    n = x.size
    node = np.zeros(n, dtype=np.bool_)
    check = np.zeros(n, dtype=np.bool_)
    interval = np.zeros(n, dtype=np.int64)
    last = x[0]
    node[0] = True
    for i in range(1, n):
        if x[i] - last >= step or i == n - 1:
            node[i] = True
            last = x[i]
    k = -1
    start = 0
    for i in range(n):
        if node[i]:
            if k >= 0 and i - start > 1:
                check[(start + i) // 2] = True
            k += 1
            start = i
        interval[i] = k
    return node, check, interval


@compiled
def cubic_fill(x, values, node, interval, check, threshold, out_bad):
    """Fill ``values[:, i]`` (not nodes, not checks) by the four-node cubic of its interval, unless the interval's
    check misses by more than ``threshold``; ``out_bad[i]`` marks the abscissae left to evaluate exactly."""
    n = x.size
    where = np.flatnonzero(node)
    bad_interval = np.zeros(max(where.size - 1, 1), dtype=np.bool_)
    components = values.shape[0]
    estimate = np.empty(components)
    scaled = np.empty((components, 4))  # the interval's node values over their Lagrange denominators
    stencil = np.empty(4)
    for rest in range(2):  # the checks first, then the rest
        current = -1
        for i in range(n):
            if node[i] or check[i] != (rest == 0):
                continue
            k = interval[i]
            if rest == 1 and bad_interval[k]:
                out_bad[i] = True
                continue
            if k != current:
                current = k
                _stencil(x, values, where, k, stencil, scaled)
            _cubic(x[i], stencil, scaled, estimate)
            if rest == 0:
                for c in range(components):
                    if not abs(estimate[c] - values[c, i]) <= threshold:  # nan fails too
                        bad_interval[k] = True
            else:
                for c in range(components):
                    values[c, i] = estimate[c]


@compiled
def _stencil(x, values, where, k, stencil, scaled):
    """The four nodes around interval ``k`` (clipped at the ends) into ``stencil``, their values over the Lagrange
    denominators ``prod_{b != a} (x_a - x_b)`` into ``scaled``."""
    first = min(max(k - 1, 0), where.size - 4)
    for a in range(4):
        stencil[a] = x[where[first + a]]
    for a in range(4):
        denominator = 1.0
        for b in range(4):
            if b != a:
                denominator *= stencil[a] - stencil[b]
        for c in range(values.shape[0]):
            scaled[c, a] = values[c, where[first + a]] / denominator


@compiled
def _cubic(at, stencil, scaled, result):
    """``result`` = the cubic through the stencil's nodes at ``at`` (Lagrange's form)."""
    d0, d1, d2, d3 = at - stencil[0], at - stencil[1], at - stencil[2], at - stencil[3]
    w0, w1, w2, w3 = d1 * d2 * d3, d0 * d2 * d3, d0 * d1 * d3, d0 * d1 * d2
    for c in range(result.size):
        result[c] = scaled[c, 0] * w0 + scaled[c, 1] * w1 + scaled[c, 2] * w2 + scaled[c, 3] * w3


def checked_interpolation(x: np.ndarray, evaluate, components: int, step: float, tolerance: float) -> np.ndarray:
    """``evaluate(indices) -> (components, len(indices))`` exact values at ``x[indices]`` (ascending ``x``); the
    values at every ``x`` (see the module docstring). ``tolerance = 0``, fewer than 8 abscissae or fewer than four
    nodes evaluate everything exactly."""
    n = x.size
    values = np.empty((components, n))
    if tolerance <= 0 or n < 8:
        values[:] = evaluate(np.arange(n))
        return values
    node, check, interval = nodes_and_checks(x, step)
    if np.count_nonzero(node) < 4:  # too few nodes for a cubic
        values[:] = evaluate(np.arange(n))
        return values
    first = np.flatnonzero(node | check)
    values[:, first] = evaluate(first)
    bad = np.zeros(n, dtype=bool)
    cubic_fill(x, values, node, interval, check, 0.25 * float(tolerance), bad)
    if bad.any():
        again = np.flatnonzero(bad)
        values[:, again] = evaluate(again)
    return values
