"""Evidence methods as strategies, one per file; ``STRATEGIES`` lists them in the order an event runs them (not
sorted: later methods use what earlier ones left: reweighting uses the nested posteriors, the fast estimates
their best sample). Each strategy names the descriptions of the families it makes, static data in
:mod:`memory_infer.results.methods` that the later stages read without importing this stage.

A new method is one file in this folder with an :class:`~.base.EvidenceMethod` subclass, its entry in
``STRATEGIES`` below, and its families' descriptions in ``memory_infer.results.methods.DESCRIPTIONS``.
"""
from .base import EvidenceMethod, Found, RunState
from .fast import FastApproximation
from .nested import NestedSampling
from .reweighting import Reweighting

STRATEGIES = (NestedSampling, Reweighting, FastApproximation)  # the order an event runs them

__all__ = ["STRATEGIES", "EvidenceMethod", "Found", "RunState", "NestedSampling", "Reweighting", "FastApproximation"]
