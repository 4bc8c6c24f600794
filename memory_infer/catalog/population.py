"""The seam for population models of the memory amplitude: what a model is, the event curves it reads, and the
helpers every model shares.

A population model states how the events' amplitudes A_i are drawn and returns, from the event curves
l_i(A) = <L(A)/L(0)>_i alone, its evidence against no memory in any event,
``Z = int prod_i [int l_i(A_i) p(A_i | theta) dA_i] p(theta) dtheta`` (independent events multiply), and the
posterior of its parameters theta. The ratio of two models' evidences is their Bayes factor. A new model is one
file with a class that follows :class:`PopulationModel` and one line in ``population_models.MODELS``.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import ClassVar, Protocol

import numpy as np

from ..common.errors import MemoryInferError
from ..results.estimates import cumulative_distribution

LARGEST_SPREAD = 2.0  # default upper end of the uniform prior on the spread of the amplitudes


@dataclass(frozen=True)
class PopulationSettings:
    """What the population models may be asked to vary: ``largest_spread`` is sigma_max of the spread model,
    ``replicas`` the number of draws of the curves' Monte-Carlo errors behind every error, ``seed`` their seed,
    ``spread_points`` the nodes of the spread's quadrature."""

    largest_spread: float = LARGEST_SPREAD
    replicas: int = 100
    seed: int = 0
    spread_points: int = 64

    def __post_init__(self):
        if not np.isfinite(self.largest_spread) or self.largest_spread <= 0:
            raise MemoryInferError(f"the largest spread of the amplitudes must be a positive number, not "
                                   f"{self.largest_spread:g}")
        if self.replicas < 0 or self.spread_points < 4:
            raise MemoryInferError("the population models need at least 0 replicas and 4 spread points")


@dataclass(frozen=True)
class EventCurves:
    """Each included event's ``ln l_i(A)`` on the common grid (rows), with its Monte-Carlo error.

    ``scaled`` holds ``l_i / max l_i`` (so that products neither overflow nor underflow) and ``peaks`` the
    ``ln max l_i`` taken out, added back to every evidence.
    """

    grid: np.ndarray
    ln_curves: np.ndarray
    errors: np.ndarray
    labels: tuple = ()

    def __post_init__(self):
        grid, ln_curves = np.asarray(self.grid, float), np.atleast_2d(np.asarray(self.ln_curves, float))
        if grid.ndim != 1 or grid.size < 3 or np.any(np.diff(grid) <= 0):
            raise MemoryInferError("the amplitude grid of the event curves must rise through at least 3 points")
        if ln_curves.shape[1] != grid.size:
            raise MemoryInferError("every event curve must have one value per amplitude grid point")
        object.__setattr__(self, "grid", grid)
        object.__setattr__(self, "ln_curves", ln_curves)
        object.__setattr__(self, "errors", np.nan_to_num(np.broadcast_to(np.asarray(self.errors, float),
                                                                         ln_curves.shape).copy()))

    @property
    def span(self) -> tuple:
        return float(self.grid[0]), float(self.grid[-1])

    @property
    def peaks(self) -> np.ndarray:
        return np.max(self.ln_curves, axis=1)

    @property
    def scaled(self) -> np.ndarray:
        return np.exp(self.ln_curves - self.peaks[:, None])

    def coarsened(self, points: int) -> "EventCurves":
        """These curves on ``points`` evenly spaced nodes over the same span (ln l and its error interpolated
        linearly) when the grid holds more nodes than that; otherwise these curves unchanged."""
        if self.grid.size <= points:
            return self
        grid = np.linspace(self.grid[0], self.grid[-1], points)
        move = lambda rows: np.array([np.interp(grid, self.grid, row) for row in rows])
        return EventCurves(grid, move(self.ln_curves), move(self.errors), self.labels)

    def replica(self, rng) -> "EventCurves":
        """The curves with each point moved by a normal draw of its Monte-Carlo error (one replica)."""
        noise = rng.normal(0.0, 1.0, self.ln_curves.shape) * self.errors
        return EventCurves(self.grid, self.ln_curves + noise, self.errors, self.labels)


class PopulationModel(Protocol):
    """A population model of the memory amplitude.

    ``name`` is its key under ``population`` in catalog.json; ``title`` and ``question`` (what it asks, in plain
    English) head its part of the page; ``parameters`` name what :meth:`analyse` summarizes. :meth:`prior`
    describes the prior on the given curves' span. :meth:`analyse` returns ``ln_evidence`` (ln Z against no
    memory in any event), ``parameters`` (name -> ``median``, ``lower_90``, ``upper_90`` and any other numbers)
    and anything else the model's page figure needs (under ``figure``).
    """

    name: ClassVar[str]
    title: ClassVar[str]
    question: ClassVar[str]
    parameters: ClassVar[tuple]

    def prior(self, curves: EventCurves) -> str: ...

    def analyse(self, curves: EventCurves) -> dict: ...


def ln_trapezoid(ln_values, x, axis: int = -1) -> np.ndarray:
    """``ln int exp(ln_values) dx`` by the trapezoid rule on nodes ``x``, along ``axis`` (no overflow)."""
    ln_values = np.moveaxis(np.asarray(ln_values, dtype=float), axis, -1)
    x = np.asarray(x, dtype=float)
    weights = np.zeros(x.size)
    weights[1:] += 0.5 * np.diff(x)
    weights[:-1] += 0.5 * np.diff(x)
    top = np.max(ln_values, axis=-1, keepdims=True)
    finite_top = np.where(np.isfinite(top), top, 0.0)
    with np.errstate(divide="ignore"):
        return np.log(np.sum(np.exp(ln_values - finite_top) * weights, axis=-1)) + finite_top[..., 0]


def interval(x, ln_density) -> dict:
    """Median, equal-tailed 90% interval and 90% upper bound of a density known on nodes ``x`` (trapezoids)."""
    x = np.asarray(x, dtype=float)
    ln_density = np.asarray(ln_density, dtype=float)
    density = np.exp(ln_density - np.max(ln_density))
    cdf = cumulative_distribution(x, density)
    keep = np.concatenate([[True], np.diff(cdf) > 0])  # np.interp needs a rising CDF
    quantile = lambda q: float(np.interp(q, cdf[keep], x[keep]))
    return {"median": quantile(0.5), "lower_90": quantile(0.05), "upper_90": quantile(0.95),
            "upper_bound_90": quantile(0.9)}


def highest_density_holds(x, ln_density, value: float, level: float = 0.9) -> bool:
    """Whether ``value`` lies in the highest-posterior-density region of probability ``level`` (nodes ranked by
    density, trapezoid masses; the region that a one-sided or two-sided interval would miss at a boundary)."""
    x = np.asarray(x, dtype=float)
    density = np.exp(np.asarray(ln_density, float) - np.max(ln_density))
    mass = np.zeros(x.size)
    mass[1:] += 0.5 * np.diff(x) * density[1:]
    mass[:-1] += 0.5 * np.diff(x) * density[:-1]
    mass /= mass.sum()
    at_value = float(np.interp(value, x, density))
    above = mass[density > at_value].sum()  # mass strictly denser than the value: it enters after all of them
    return bool(above < level)
