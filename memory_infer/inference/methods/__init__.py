"""Evidence methods as strategies. Each registers itself (:func:`~.base.register`) with the description of its
families that the later stages read (:mod:`memory_infer.results.methods`); importing this package registers
them, in the order of the imports below, which is the order an event runs them (later methods use what
earlier ones left: reweighting uses the nested posteriors, the fast estimates their best sample).

A new method is one file in this folder with a registered :class:`~.base.EvidenceMethod` subclass, and one
import line here.
"""
from .base import STRATEGIES, EvidenceMethod, Found, RunState, register, unregister
# the run order (not sorted): each line registers one method
from .nested import NestedSampling
from .reweighting import Reweighting
from .fast import FastApproximation

REGISTRY = STRATEGIES  # name -> strategy, in the order an event runs them

__all__ = ["REGISTRY", "STRATEGIES", "EvidenceMethod", "Found", "RunState", "register", "unregister",
           "NestedSampling", "Reweighting", "FastApproximation"]
