from dataclasses import dataclass, field
from typing import ClassVar

import numpy as np
import pytest

from memory_infer.catalog.population import EventCurves, PopulationSettings
from memory_infer.catalog.population_models import MODELS, compare_models, event_curves
from memory_infer.catalog.shared_amplitude import SharedAmplitude


@dataclass
class FixedAtOne:
    """A model with no parameter: A_i = 1 in every event (general relativity), Z = prod_i l_i(1)."""

    name: ClassVar[str] = "fixed"
    title: ClassVar[str] = "General relativity's amplitude"
    question: ClassVar[str] = "Is A = 1 in every event?"
    parameters: ClassVar[tuple] = ()
    settings: PopulationSettings = field(default_factory=PopulationSettings)

    def prior(self, curves):
        return "A_i = 1"

    def analyse(self, curves):
        return {"ln_evidence": float(sum(np.interp(1.0, curves.grid, row) for row in curves.ln_curves)),
                "parameters": {}}


def curves_with_errors(error=0.05):
    grid = np.linspace(-3, 3, 61)
    rng = np.random.default_rng(8)
    centres = rng.normal(1.0, 0.3, 6)
    ln = {f"e{i}": (-0.5 * ((grid - c) / 0.6) ** 2 + 0.5 * (c / 0.6) ** 2).tolist() for i, c in enumerate(centres)}
    return event_curves(grid, ln, {k: [error] * grid.size for k in ln})


def test_the_shared_model_is_the_reference_and_the_spread_model_follows():
    assert MODELS[0] is SharedAmplitude and [m.name for m in MODELS] == ["shared", "gaussian"]
    out = compare_models(curves_with_errors(), PopulationSettings(replicas=20))
    assert out["models"] == ["shared", "gaussian"] and out["events"] == 6 and out["replicas"] == 20
    shared, spread = out["shared"], out["gaussian"]
    assert shared["ln_bf_vs_shared"] == 0.0
    assert spread["ln_bf_vs_shared"] == pytest.approx(spread["ln_bf_vs_no_memory"] - shared["ln_bf_vs_no_memory"])
    assert {"median", "lower_90", "upper_90", "median_err"} <= set(spread["mu"]) and spread["sigma_max"] == 2.0
    assert {"median", "lower_90", "upper_90", "upper_bound_90"} <= set(spread["sigma"])
    # errors from replicas: 6 events with 0.05 nats per point move ln Z by about 0.05 sqrt(6) at most
    assert 0 < spread["ln_bf_vs_no_memory_err"] < 0.2 and 0 < spread["ln_bf_vs_shared_err"] < 0.2


def test_replica_errors_scale_with_the_curves_errors_and_vanish_without_them():
    small = compare_models(curves_with_errors(0.01), PopulationSettings(replicas=30))["shared"]
    large = compare_models(curves_with_errors(0.1), PopulationSettings(replicas=30))["shared"]
    assert large["ln_bf_vs_no_memory_err"] == pytest.approx(10 * small["ln_bf_vs_no_memory_err"], rel=0.1)
    none = compare_models(curves_with_errors(0.0))
    assert none["replicas"] == 0 and none["gaussian"]["ln_bf_vs_shared_err"] is None


def test_a_new_model_is_one_class_given_to_the_comparison():
    # the seam: a model without parameters, compared with the shared one; its ln Z is prod_i l_i(1) exactly
    curves = curves_with_errors(0.0)
    out = compare_models(curves, models=(SharedAmplitude, FixedAtOne))
    expected = sum(np.interp(1.0, curves.grid, row) for row in curves.ln_curves)
    assert out["models"] == ["shared", "fixed"] and out["fixed"]["ln_bf_vs_no_memory"] == pytest.approx(expected)
    assert out["fixed"]["prior"] == "A_i = 1"


def test_a_fine_grid_is_moved_to_fewer_nodes_and_said_so():
    grid = np.linspace(-2, 2, 1001)
    curves = EventCurves(grid, [-0.5 * (grid - 0.5) ** 2 / 0.25], 0.0, ("e0",))
    out = compare_models(curves)
    assert "1001 grid points were moved to 301 even nodes" in out["method"]
