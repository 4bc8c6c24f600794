"""Evidence methods as strategies, registered here in the order an event runs them (later methods use
what earlier ones left: reweighting uses the nested posteriors, the fast estimates their best sample).

A new method is one file in this folder with an :class:`~.base.EvidenceMethod` subclass, and one line here.
"""
from .base import EvidenceMethod, RunState
from .fast import FastApproximation
from .nested import NestedSampling
from .reweighting import Reweighting

REGISTRY = {method.name: method for method in (NestedSampling, Reweighting, FastApproximation)}

__all__ = ["REGISTRY", "EvidenceMethod", "RunState", "NestedSampling", "Reweighting", "FastApproximation"]
