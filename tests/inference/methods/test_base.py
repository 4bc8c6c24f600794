import bilby
import pandas as pd

from memory_infer.inference.hypotheses import NONE
from memory_infer.inference.methods.base import RunState, fixed_values
from memory_infer.results.event import EventResult


class Setup:
    injection = None
    marginalized = False
    priors = bilby.core.prior.PriorDict({"psi": bilby.core.prior.DeltaFunction(0.4, "psi"),
                                         "mass_1": bilby.core.prior.Constraint(1, 100, "mass_1"),
                                         "phase": bilby.core.prior.Uniform(0, 6, "phase")})


class Run:
    def __init__(self, frame):
        self.posterior = frame


def test_fixed_values_skip_constraints():
    assert fixed_values(Setup.priors) == {"psi": 0.4}


def test_reference_point_order_injection_then_nested_then_reweighted():
    state = RunState(setup=Setup(), outdir=".", progress=False, result=EventResult(event="e"))
    assert state.reference_point() == (None, None)
    state.best_sample = ({"phase": 2.0, "extra": 1.0}, "best reweighted")
    assert state.reference_point() == ({"psi": 0.4, "phase": 2.0}, "best reweighted")
    state.nested[NONE] = Run(pd.DataFrame({"phase": [1.0, 3.0], "log_likelihood": [0.0, 5.0]}))
    point, where = state.reference_point()
    assert point == {"phase": 3.0, "psi": 0.4} and "'none' run" in where
    Setup.marginalized = True
    assert state.reference_point() == (None, None)
    Setup.marginalized = False
    state.propose_sign(2, "two-point")
    state.propose_sign(0, "curve")
    assert state.signs[min(state.signs)] == "curve"
