"""The spread population model: each event's amplitude drawn from a normal distribution of unknown mean and width.

``A_i ~ N(mu, sigma^2)`` truncated to the grid's span [a, b] and renormalized there, ``mu`` uniform on [a, b],
``sigma`` uniform on [0, sigma_max]:
``Z = int int prod_i [int_a^b l_i(A) N_trunc(A; mu, sigma) dA] dmu dsigma / ((b - a) sigma_max)``.

Each event's curve is taken as linear in A between grid nodes, so its marginal over A_i is an exact sum of
closed-form pieces (for l = c0 + c1 A on [x_k, x_k+1]: ``int (c0 + c1 A) phi_sigma(A - mu) dA`` =
``c0 dPhi + c1 (mu dPhi - sigma dphi)`` with Phi, phi the standard normal CDF and density at (x - mu)/sigma).
It is a weighted sum of the curve's node values whose weights tend to linear interpolation at mu as sigma -> 0,
so the model tends to the shared model (on the nodes of mu exactly) even when sigma is far below the grid's
spacing. ``mu`` is integrated on the grid's nodes and ``sigma`` on nodes crowded towards 0 (quadratic spacing),
both by the trapezoid rule.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from functools import lru_cache
from typing import ClassVar

import numpy as np
from scipy.special import ndtr

from .population import EventCurves, PopulationSettings, highest_density_holds, interval, ln_trapezoid

FIGURE_POINTS = 161  # at most this many values of mu in the stored 2-D posterior (for the page's figure)
KEPT_WEIGHTS = 6_000_000  # weights kept between calls (replicas) only when they fit in this many numbers (48 MB)


def spread_nodes(largest: float, points: int) -> np.ndarray:
    """Quadrature nodes of sigma on [0, largest], crowded towards 0 where the shared model sits."""
    return largest * (np.arange(points) / (points - 1)) ** 2


def _mass_between(z_low, z_high):
    """Phi(z_high) - Phi(z_low) without cancellation in the upper tail."""
    upper = z_low > 0
    return np.where(upper, ndtr(-z_low) - ndtr(-z_high), ndtr(z_high) - ndtr(z_low))


def truncated_normal_weights(grid, mu, sigma: float) -> np.ndarray:
    """Weights w (one row per mu) with ``int_a^b l(A) N_trunc(A; mu, sigma) dA = w @ l`` for any l linear
    between the nodes of ``grid``; at sigma = 0, linear interpolation at mu."""
    grid, mu = np.asarray(grid, dtype=float), np.atleast_1d(np.asarray(mu, dtype=float))
    spacing = np.diff(grid)
    if sigma <= 0:
        weights = np.zeros((mu.size, grid.size))
        k = np.clip(np.searchsorted(grid, mu, side="right") - 1, 0, grid.size - 2)
        share = (mu - grid[k]) / spacing[k]
        rows = np.arange(mu.size)
        weights[rows, k] = 1 - share
        weights[rows, k + 1] += share
        return weights
    z = (grid[None, :] - mu[:, None]) / sigma
    inside = _mass_between(z[:, :-1], z[:, 1:])  # mass of each interval
    density = np.exp(-0.5 * z ** 2) / np.sqrt(2 * np.pi)
    change = density[:, 1:] - density[:, :-1]
    left = sigma / spacing * (z[:, 1:] * inside + change)  # the interval's left node: int (x_k+1 - A)/h phi
    right = sigma / spacing * (-z[:, :-1] * inside - change)
    weights = np.zeros((mu.size, grid.size))
    weights[:, :-1] += np.maximum(left, 0.0)
    weights[:, 1:] += np.maximum(right, 0.0)
    weights /= inside.sum(axis=1, keepdims=True)
    weights[weights < 1e-250] = 0.0  # no subnormal numbers (they slow every product), no weight that could matter
    return weights


@lru_cache(maxsize=2)
def weight_table(grid: tuple, largest: float, points: int) -> np.ndarray:
    """The truncated-normal weights on every (sigma node, mu node) of a grid: (sigma, mu, A), read only (kept for
    the replicas of one catalog, which share its grid)."""
    nodes = np.asarray(grid, dtype=float)
    table = np.stack([truncated_normal_weights(nodes, nodes, sigma) for sigma in spread_nodes(largest, points)])
    table.setflags(write=False)
    return table


@dataclass
class AmplitudeSpread:
    """A_i ~ N(mu, sigma^2) truncated to the grid's span; mu uniform on the span, sigma uniform on [0, sigma_max]."""

    name: ClassVar[str] = "gaussian"
    title: ClassVar[str] = "Amplitudes spread around a mean"
    question: ClassVar[str] = ("Do the events' amplitudes differ, scattered around a mean mu with a spread sigma "
                               "(A_i ~ N(mu, sigma^2))? sigma = 0 is the shared model; a Bayes factor above 0 "
                               "against it says the events disagree by more than their curves allow.")
    parameters: ClassVar[tuple] = ("mu", "sigma")
    settings: PopulationSettings = field(default_factory=PopulationSettings)

    def prior(self, curves: EventCurves) -> str:
        low, high = curves.span
        return (f"A_i ~ N(mu, sigma^2) truncated to [{low:g}, {high:g}]; mu uniform on [{low:g}, {high:g}], sigma "
                f"uniform on [0, {self.settings.largest_spread:g}]")

    def sigmas(self) -> np.ndarray:
        return spread_nodes(self.settings.largest_spread, self.settings.spread_points)

    def ln_likelihood(self, curves: EventCurves, sigmas=None) -> np.ndarray:
        """``sum_i ln int l_i(A) N_trunc(A; mu, sigma) dA`` (curves scaled to peak 1) on (sigma, mu) nodes."""
        grid, scaled = curves.grid, curves.scaled
        if sigmas is None and grid.size ** 2 * self.settings.spread_points <= KEPT_WEIGHTS:
            table = weight_table(tuple(grid.tolist()), self.settings.largest_spread, self.settings.spread_points)
            with np.errstate(divide="ignore"):
                return np.sum(np.log(table @ scaled.T), axis=2)
        sigmas = self.sigmas() if sigmas is None else np.atleast_1d(sigmas)
        out = np.empty((sigmas.size, grid.size))
        with np.errstate(divide="ignore"):
            for s, sigma in enumerate(sigmas):
                out[s] = np.sum(np.log(scaled @ truncated_normal_weights(grid, grid, sigma).T), axis=0)
        return out

    def ln_evidence_at(self, curves: EventCurves, sigma: float) -> float:
        """ln Z of the model with sigma fixed (mu still uniform on the span): at sigma = 0, the shared model's."""
        low, high = curves.span
        ln_like = self.ln_likelihood(curves, [sigma])[0]
        return float(ln_trapezoid(ln_like, curves.grid) - np.log(high - low) + curves.peaks.sum())

    def analyse(self, curves: EventCurves) -> dict:
        low, high = curves.span
        sigmas, mus = self.sigmas(), curves.grid
        ln_like = self.ln_likelihood(curves)
        ln_sigma = ln_trapezoid(ln_like, mus, axis=1)  # (sigma,) marginal, up to a constant
        ln_mu = ln_trapezoid(ln_like, sigmas, axis=0)
        ln_evidence = float(ln_trapezoid(ln_sigma, sigmas) - np.log((high - low) * self.settings.largest_spread)
                            + curves.peaks.sum())
        mu = interval(mus, ln_mu)
        mu.pop("upper_bound_90")
        sigma = interval(sigmas, ln_sigma)
        sigma["zero_in_highest_density_90"] = highest_density_holds(sigmas, ln_sigma, 0.0)
        stride = max(1, int(np.ceil(mus.size / FIGURE_POINTS)))
        density = np.exp(ln_like - np.max(ln_like))[:, ::stride]
        return {"ln_evidence": ln_evidence, "parameters": {"mu": mu, "sigma": sigma},
                "sigma_max": float(self.settings.largest_spread),
                "figure": {"mu": mus[::stride].tolist(), "sigma": sigmas.tolist(),
                           "density": np.round(density, 6).tolist(),
                           "sigma_density": np.exp(ln_sigma - np.max(ln_sigma)).tolist(),
                           "note": "joint posterior density of (mu, sigma) over its largest value"}}
