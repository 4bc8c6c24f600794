"""The shared-amplitude population model: one A for every event.

``A_i = A`` for all i, A uniform on the grid's span [a, b]:
``Z_shared = int prod_i l_i(A) dA / (b - a)`` by the trapezoid rule on the grid's nodes (the same product whose
normalized form is the catalog's shared-A posterior).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import ClassVar

import numpy as np

from .population import EventCurves, PopulationSettings, interval, ln_trapezoid


@dataclass
class SharedAmplitude:
    """A_i = A for all events, A uniform on the grid's span."""

    name: ClassVar[str] = "shared"
    title: ClassVar[str] = "One amplitude shared by every event"
    question: ClassVar[str] = ("Is the memory's amplitude A the same number in every event (A_i = A for all i)? "
                               "Its evidence against no memory is what the catalog's shared-A posterior "
                               "normalizes.")
    parameters: ClassVar[tuple] = ("A",)
    settings: PopulationSettings = field(default_factory=PopulationSettings)

    def prior(self, curves: EventCurves) -> str:
        low, high = curves.span
        return f"A uniform on [{low:g}, {high:g}]"

    def analyse(self, curves: EventCurves) -> dict:
        low, high = curves.span
        ln_product = np.sum(curves.ln_curves - curves.peaks[:, None], axis=0)
        ln_evidence = float(ln_trapezoid(ln_product, curves.grid) - np.log(high - low) + curves.peaks.sum())
        return {"ln_evidence": ln_evidence, "parameters": {"A": interval(curves.grid, ln_product)}}
