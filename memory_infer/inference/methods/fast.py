"""Fast approximations at one parameter point (README, evidence methods): no sampling, no Monte-Carlo error.

- fixed-parameter: ``ln Lambda = <d - h_osc, h_mem> - <h_mem, h_mem> / 2``;
- two-point: also weighs the sign-degenerate partner (phase + pi/2, psi + pi/2) by its oscillatory
  likelihood, which is what a full posterior would do for a (2, +-2)-dominated signal.

The two-point estimator over Gaussian noise (:func:`two_point_terms`, :func:`two_point_noise_average`)
------------------------------------------------------------------------------------------------------
Write ``h``, ``m`` for the oscillatory and memory responses at the point, ``h'``, ``m'`` at its partner,
``delta = h - h'``, and take data ``d = h + A_t m + n`` (injected amplitude ``A_t``). For the hypothesis A the
estimator is ``ln BF(A) = ln[e^(u + D) + e^(D')] - ln[e^u + 1]`` with

- ``D  = A (A_t <m,m> + x1) - A^2 <m,m> / 2``,
- ``D' = A (<delta,m'> + A_t <m,m'> + x2) - A^2 <m',m'> / 2``,
- ``u  = <delta,delta> / 2 + A_t <m,delta> + x3`` (the two points' oscillatory log-likelihood difference),

where ``(x1, x2, x3) = (<n,m>, <n,m'>, <n,delta>)`` is Gaussian with zero mean and covariance the Gram matrix of
``(m, m', delta)`` (the defining property of the noise-weighted inner product). So its distribution over noise
depends on six inner products only: the expectation is a Gauss-Hermite integral over the Gram matrix's
non-null directions (at most three), and single noise realizations are three correlated normal numbers.

Exact low-dimensional form. With ``L = u + D`` and ``v = D' - u - D`` (both linear in the noise, so normal),
``ln BF = L + softplus(v) - softplus(u)``. Its mean is ``E[L]`` plus two one-dimensional normal integrals; its
variance needs ``Cov(L, softplus(v)) = Cov(L, v) E[sigmoid(v)]`` (Stein's lemma, one-dimensional) and
``E[softplus(u) softplus(v)]``, a two-dimensional integral over the correlated pair (u, v). Each
one-dimensional integral is split at the softplus kink and done by Gauss-Legendre on either side
(:func:`two_point_noise_average`); the tensor Gauss-Hermite quadrature (:func:`hermite_noise_average`) is kept as
the independent check.

Limits. With the sign resolved (``delta`` large, so ``u`` -> +inf) the estimator is ``D``, whose expectation
at ``A = A_t = 1`` is ``<m,m>/2 = rho^2/2`` (PRD 46, 5236 (1992)). With a (2, +-2)-only signal
``delta = 0``, ``m' = -m``, hence ``u = 0``, ``x2 = -x1`` and, at ``A = A_t = 1``,
``ln BF = ln cosh(y) - rho^2/2`` with ``y = rho^2 + x1``, ``x1 ~ N(0, rho^2)``. Expanding
``ln cosh y = y^2/2 - y^4/12 + O(y^6)`` with ``E[y^2] = rho^2 + rho^4`` and ``E[y^4] = 3 rho^4 + O(rho^6)`` gives
``E[ln BF] = rho^4/2 - rho^4/4 + O(rho^6) = rho^4/4`` at small rho. (It is the Kullback-Leibler divergence
between ``N(rho, 1)`` and the equal mixture of ``N(+rho, 1)`` and ``N(-rho, 1)`` minus that to ``N(0, 1)``;
``rho^4/4``, not ``rho^4/2``: the tests check the series with sympy and the integral numerically.)
"""
from __future__ import annotations

from functools import lru_cache

import numpy as np
from scipy.special import logsumexp

from ...common.errors import MemoryInferError
from ...results.estimates import EvidenceEstimate, SignSummary, sign_weight
from ...results.methods import FIXED_POINT, TWO_POINT
from ..hypotheses import FLIPPED, MEMORY, NONE
from .base import EvidenceMethod, Found, RunState

NOTE = "deterministic approximation at one point: no Monte-Carlo error; its bias is measured by campaigns"


def sign_partner(point: dict) -> dict:
    """The point whose (2, +-2) strain is the same and whose memory flips: phase + pi/2, psi + pi/2."""
    partner = dict(point)
    partner["phase"] = (point.get("phase", 0.0) + np.pi / 2) % (2 * np.pi)
    partner["psi"] = (point.get("psi", 0.0) + np.pi / 2) % np.pi
    return partner


def fast_estimates(likelihood, point: dict):
    """Fixed-parameter and two-point ln BF (A = +1 and -1 against 0) at ``point``, and the memory SNR."""
    from ..likelihood import fixed_point_log_ratio, memory_snr  # bilby: loaded when a method runs

    products = likelihood.inner_products(point)
    if products is None:
        raise MemoryInferError("the waveform failed at the chosen parameter point")
    fixed = fixed_point_log_ratio(products)
    fixed_minus = float(-np.real(products.d_mem) + products.osc_mem - products.mem_mem / 2)
    partner_products = likelihood.inner_products(sign_partner(point))
    curve_here = likelihood.curve_from_products(products, point, [0.0, 1.0, -1.0])
    curve_partner = likelihood.curve_from_products(partner_products, sign_partner(point), [0.0, 1.0, -1.0])
    osc = np.array([curve_here[0], curve_partner[0]])
    two_plus = float(logsumexp(osc + np.array([curve_here[1] - curve_here[0], curve_partner[1] - curve_partner[0]]))
                     - logsumexp(osc))
    two_minus = float(logsumexp(osc + np.array([curve_here[2] - curve_here[0], curve_partner[2] - curve_partner[0]]))
                      - logsumexp(osc))
    fixed_name, two_name = FIXED_POINT.label, f"{TWO_POINT.label} (with the sign-degenerate partner)"
    estimates = [
        EvidenceEstimate(method=fixed_name, ln_bf=fixed, ln_bf_err=None, note=NOTE, family=FIXED_POINT.family),
        EvidenceEstimate(method=fixed_name, ln_bf=fixed_minus, ln_bf_err=None, numerator="flipped", note=NOTE,
                         family=FIXED_POINT.family),
        EvidenceEstimate(method=two_name, ln_bf=two_plus, ln_bf_err=None, note=NOTE, family=TWO_POINT.family),
        EvidenceEstimate(method=two_name, ln_bf=two_minus, ln_bf_err=None, numerator="flipped", note=NOTE,
                         family=TWO_POINT.family),
    ]
    return estimates, memory_snr(products)


TERM_NAMES = ("memory", "partner_memory", "memory_cross", "split", "memory_split", "partner_split")


def two_point_terms(likelihood, point: dict) -> dict:
    """The six inner products the two-point estimator's noise distribution depends on (module docstring):
    ``<m,m>, <m',m'>, <m,m'>, <delta,delta>, <m,delta>, <m',delta>``."""
    here, there = likelihood.projected_parts(point), likelihood.projected_parts(sign_partner(point))
    if here is None or there is None:
        raise MemoryInferError("the waveform failed at the chosen parameter point or its sign partner")
    memory, partner = [p[1] for p in here], [p[1] for p in there]
    split = [a[0] - b[0] for a, b in zip(here, there)]
    product = likelihood.network_product
    values = (product(memory, memory), product(partner, partner), product(memory, partner), product(split, split),
              product(memory, split), product(partner, split))
    return dict(zip(TERM_NAMES, values))


def _gram(terms: dict) -> np.ndarray:
    t = terms
    return np.array([[t["memory"], t["memory_cross"], t["memory_split"]],
                     [t["memory_cross"], t["partner_memory"], t["partner_split"]],
                     [t["memory_split"], t["partner_split"], t["split"]]])


def two_point_value(terms: dict, injected: float, amplitude: float, noise) -> np.ndarray:
    """The two-point ln BF(``amplitude``) for noise projections ``noise`` (shape (..., 3): x1, x2, x3)."""
    t = terms
    x1, x2, x3 = np.moveaxis(np.asarray(noise, dtype=float), -1, 0)
    here = amplitude * (injected * t["memory"] + x1) - amplitude ** 2 * t["memory"] / 2
    there = amplitude * (t["partner_split"] + injected * t["memory_cross"] + x2) - amplitude ** 2 * t["partner_memory"] / 2
    u = t["split"] / 2 + injected * t["memory_split"] + x3
    return np.logaddexp(u + here, there) - np.logaddexp(u, 0.0)


def _noise_basis(terms: dict) -> np.ndarray:
    """Columns spanning the noise projections' covariance: x = basis @ z with z standard normal. Each column's
    sign is fixed (its largest entry positive), so that inputs equal to rounding give draws equal to rounding
    (``eigh`` may return either sign)."""
    values, vectors = np.linalg.eigh(_gram(terms))
    keep = values > 1e-12 * max(float(values.max()), 1e-300)
    basis = vectors[:, keep] * np.sqrt(values[keep])
    largest = np.argmax(np.abs(basis), axis=0)
    return basis * np.where(basis[largest, np.arange(basis.shape[1])] < 0, -1.0, 1.0)


def _hermite_average(terms, injected, amplitude, nodes):
    basis = _noise_basis(terms)
    if basis.shape[1] == 0:
        value = float(two_point_value(terms, injected, amplitude, np.zeros(3)))
        return value, 0.0
    z, w = np.polynomial.hermite_e.hermegauss(nodes)
    w = w / w.sum()
    grids = np.meshgrid(*([z] * basis.shape[1]), indexing="ij")
    weights = np.prod(np.meshgrid(*([w] * basis.shape[1]), indexing="ij"), axis=0).ravel()
    points = np.stack([g.ravel() for g in grids], axis=-1) @ basis.T
    values = two_point_value(terms, injected, amplitude, points)
    mean = float(np.sum(weights * values))
    return mean, float(np.sqrt(max(np.sum(weights * values ** 2) - mean ** 2, 0.0)))


def hermite_noise_average(terms: dict, injected: float, amplitude: float = 1.0, nodes: int = 40) -> dict:
    """Mean and spread over noise by tensor Gauss-Hermite quadrature over the Gram matrix's non-null directions
    (``nodes`` per direction): the independent check of :func:`two_point_noise_average`."""
    mean, spread = _hermite_average(terms, injected, amplitude, nodes)
    return {"mean": mean, "spread": spread}


STANDARD_RANGE = 12.0  # standard deviations each side: the normal weight beyond is below 1e-32


@lru_cache(maxsize=8)
def _legendre(nodes: int):
    x, w = np.polynomial.legendre.leggauss(nodes)
    x.flags.writeable = w.flags.writeable = False
    return x, w


def _softplus(x):
    return np.logaddexp(x, 0.0)


def _sigmoid(x):
    return 0.5 * (1 + np.tanh(x / 2))


def _normal_means(functions, mean, sigma, nodes: int) -> list:
    """``[E[f(mean + sigma t)] for f in functions]`` over t ~ N(0, 1) for arrays ``mean`` (any shape, broadcast with
    ``sigma``): Gauss-Legendre on [-12, 12] split where ``mean + sigma t = 0`` (the softplus kink), ``nodes`` per
    side. ``functions(x)`` returns the integrands at ``x`` as a tuple, so several integrals share their nodes."""
    mean, sigma = np.broadcast_arrays(np.asarray(mean, float), np.asarray(sigma, float))
    x, w = _legendre(nodes)
    with np.errstate(divide="ignore", invalid="ignore"):
        kink = np.where(sigma > 0, -mean / np.where(sigma > 0, sigma, 1.0), STANDARD_RANGE)
    kink = np.clip(kink, -STANDARD_RANGE, STANDARD_RANGE)[..., None]
    totals = None
    for low, high in ((-STANDARD_RANGE, kink), (kink, STANDARD_RANGE)):
        half = (high - low) / 2
        t = low + half * (x + 1)
        density = np.exp(-t ** 2 / 2) / np.sqrt(2 * np.pi)
        weight = half * w * density
        parts = [np.sum(weight * value, axis=-1) for value in functions(mean[..., None] + sigma[..., None] * t)]
        totals = parts if totals is None else [total + part for total, part in zip(totals, parts)]
    at_mean = functions(mean)
    return [np.where(sigma > 0, total, value) for total, value in zip(totals, at_mean)]


def _normal_mean(function, mean, sigma, nodes: int):
    """``E[function(mean + sigma t)]`` over t ~ N(0, 1) (:func:`_normal_means` with one integrand)."""
    return _normal_means(lambda x: (function(x),), mean, sigma, nodes)[0]


def _softplus_moments(x):
    """softplus, its square and its slope (the sigmoid) at ``x``."""
    value = _softplus(x)
    return value, value ** 2, _sigmoid(x)


def _exact_average(terms, injected, amplitude, nodes, spread: bool = True):
    """(mean, spread) of ``L + softplus(v) - softplus(u)`` (module docstring) over Gaussian noise; the spread
    is None unless ``spread``."""
    t, a, a_t = terms, amplitude, injected
    gram = _gram(terms)
    # each linear form as (constant, coefficients on the noise projections x1, x2, x3)
    d_here = (a * a_t * t["memory"] - a ** 2 * t["memory"] / 2, np.array([a, 0.0, 0.0]))
    d_there = (a * (t["partner_split"] + a_t * t["memory_cross"]) - a ** 2 * t["partner_memory"] / 2,
               np.array([0.0, a, 0.0]))
    u = (t["split"] / 2 + a_t * t["memory_split"], np.array([0.0, 0.0, 1.0]))
    big_l = (u[0] + d_here[0], u[1] + d_here[1])
    v = (d_there[0] - big_l[0], d_there[1] - big_l[1])
    cov = lambda p, q: float(p[1] @ gram @ q[1])
    var_u, var_v, cov_uv = max(cov(u, u), 0.0), max(cov(v, v), 0.0), cov(u, v)
    sd_u, sd_v = np.sqrt(var_u), np.sqrt(var_v)
    # u's and v's integrals side by side (each element is its own integral, so the numbers are those of
    # separate calls)
    if not spread:
        sp_u, sp_v = map(float, _normal_mean(_softplus, [u[0], v[0]], [sd_u, sd_v], nodes))
        return float(big_l[0] + sp_v - sp_u), None
    # second moments: Stein's lemma for the linear part, a nested integral for softplus(u) softplus(v)
    (sp_u, sp_v), (sq_u, sq_v), (slope_u, slope_v) = (
        map(float, values) for values in _normal_means(_softplus_moments, [u[0], v[0]], [sd_u, sd_v], nodes))
    mean = big_l[0] + sp_v - sp_u
    if sd_u > 0:  # v = v0 + (cov_uv / var_u)(u - u0) + independent normal of variance var_v - cov_uv^2 / var_u
        rest = np.sqrt(max(var_v - cov_uv ** 2 / var_u, 0.0))
        x, w = _legendre(nodes)
        kink = float(np.clip(-u[0] / sd_u, -STANDARD_RANGE, STANDARD_RANGE))
        halves = [((high - low) / 2, low + (high - low) / 2 * (x + 1))
                  for low, high in ((-STANDARD_RANGE, kink), (kink, STANDARD_RANGE))]
        s = np.concatenate([nodes_s for _, nodes_s in halves])  # both halves' outer nodes in one inner call
        inner = np.split(_normal_mean(_softplus, v[0] + cov_uv / sd_u * s, rest, nodes), 2)
        joint = 0.0
        for (half, s), inside in zip(halves, inner):
            density = np.exp(-s ** 2 / 2) / np.sqrt(2 * np.pi)
            joint += float(np.sum(half * w * density * _softplus(u[0] + sd_u * s) * inside))
    else:
        joint = float(_softplus(u[0])) * sp_v
    variance = (cov(big_l, big_l) + (sq_v - sp_v ** 2) + (sq_u - sp_u ** 2)
                + 2 * cov(big_l, v) * slope_v - 2 * cov(big_l, u) * slope_u - 2 * (joint - sp_u * sp_v))
    return float(mean), float(np.sqrt(max(variance, 0.0)))


def two_point_noise_average(terms: dict, injected: float, amplitude: float = 1.0, nodes: int = 64) -> dict:
    """Expectation and spread over Gaussian noise of the two-point ln BF(``amplitude``) for data with
    ``injected`` memory: the exact one-dimensional (mean) and two-dimensional (spread) integrals of the module
    docstring, ``nodes`` Gauss-Legendre nodes each side of the kink; the quadrature error of the mean is
    estimated as its change from ``nodes`` to ``3 nodes / 2``."""
    mean, spread = _exact_average(terms, injected, amplitude, nodes)
    finer, _ = _exact_average(terms, injected, amplitude, 3 * nodes // 2, spread=False)
    return {"mean": mean, "spread": spread, "quadrature_error": abs(mean - finer),
            "zero_noise": float(two_point_value(terms, injected, amplitude, np.zeros(3))),
            "known_sign": float(amplitude * injected * terms["memory"] - amplitude ** 2 * terms["memory"] / 2)}


def two_point_draws(terms: dict, injected: float, amplitude: float, size: int, rng) -> np.ndarray:
    """``size`` realizations of the two-point ln BF over independent Gaussian-noise draws. Three normal numbers
    are drawn per realization whatever the covariance's rank, so that the generator's stream, and every later
    record's draws, do not depend on where an eigenvalue falls against the rank cut."""
    basis = _noise_basis(terms)
    normals = rng.standard_normal((size, basis.shape[0]))[:, :basis.shape[1]]
    return two_point_value(terms, injected, amplitude, normals @ basis.T)


class FastApproximation(EvidenceMethod):
    """Fixed-parameter and two-point estimates at the run's reference point (the injection, else the
    best sample of the methods before), without marginalization. Leaves the memory SNR in ``state``."""

    name = "fast"
    describes = (FIXED_POINT, TWO_POINT)

    @staticmethod
    def estimates(likelihood, point: dict):
        """(estimates, memory SNR) at ``point``; used by campaigns at the true parameters too."""
        return fast_estimates(likelihood, point)

    def run(self, state: RunState) -> Found:
        point, _ = state.reference_point()
        if point is None:
            return Found()
        plain, _ = state.setup.likelihood(NONE, marginalize=False)
        estimates, state.memory_snr = self.estimates(plain, point)
        plus, minus = (next(e for e in estimates if e.family == TWO_POINT.family and e.numerator == numerator)
                       for numerator in (MEMORY.name, FLIPPED.name))
        return Found(estimates=estimates, signs={TWO_POINT.family: SignSummary(
            ln_bf_plus=plus.ln_bf, ln_bf_plus_err=None, ln_bf_minus=minus.ln_bf, ln_bf_minus_err=None,
            ln_bf_sign=plus.ln_bf - minus.ln_bf, ln_bf_sign_err=None,
            weight_plus=sign_weight(plus.ln_bf, minus.ln_bf), method=plus.method,
            note="from the fast two-point approximation only")})
