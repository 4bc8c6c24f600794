"""A new evidence method is its file, its entry in ``STRATEGIES`` and its families' descriptions in
``results.methods.DESCRIPTIONS``: the two lists agree, and a toy method added to both is run by the runner,
preferred by the preference rule, combined by the catalog and chosen by the campaign summary."""
import types

import numpy as np
import pytest

from memory_infer.campaign.summary import calibration, headline_key
from memory_infer.catalog.combine import combine
from memory_infer.inference.methods import STRATEGIES, EvidenceMethod, Found
from memory_infer.inference.runner import run_methods
from memory_infer.results import methods
from memory_infer.results.estimates import EvidenceEstimate, SignSummary, event_pair
from memory_infer.results.methods import DESCRIPTIONS, MethodDescription, preference_order

# ranked before reweighting (rank 0): among equal errors the toy's estimates win
TOY = MethodDescription(family="toy", label="toy estimate", preference=-1, column="toy", monte_carlo_error=True)
TOY_PLUS, TOY_MINUS = 0.7, -0.4


class ToyMethod(EvidenceMethod):
    name = "toy"
    describes = (TOY,)

    def run(self, state):
        plus = EvidenceEstimate(method="toy estimate", ln_bf=TOY_PLUS, ln_bf_err=0.05, family="toy")
        minus = EvidenceEstimate(method="toy estimate", ln_bf=TOY_MINUS, ln_bf_err=0.05, numerator="flipped",
                                 family="toy")
        sign = SignSummary(ln_bf_plus=TOY_PLUS, ln_bf_plus_err=0.05, ln_bf_minus=TOY_MINUS, ln_bf_minus_err=0.05,
                           ln_bf_sign=TOY_PLUS - TOY_MINUS, ln_bf_sign_err=0.07, weight_plus=0.75,
                           method="toy estimate", note="from the toy")
        return Found(estimates=[plus, minus], signs={"toy": sign})


def reweighted(ln_bf_plus, ln_bf_minus, error=0.05):
    return [EvidenceEstimate(method="importance reweighting from the A = 0 posterior [none]", ln_bf=value,
                             ln_bf_err=error, numerator=numerator, effective_sample_size=500.0, sample_set="none",
                             family="reweighting", base_amplitude=0.0)
            for numerator, value in (("memory", ln_bf_plus), ("flipped", ln_bf_minus))]


def test_the_strategies_describe_every_family_once_in_the_descriptions_order():
    assert [s.name for s in STRATEGIES] == ["nested", "reweighting", "fast"]  # the run order
    assert tuple(d for strategy in STRATEGIES for d in strategy.describes) == DESCRIPTIONS


@pytest.fixture
def toy(monkeypatch):
    """The toy's description added to the static list for one test (the strategies are passed to the runner)."""
    monkeypatch.setattr(methods, "DESCRIPTIONS", DESCRIPTIONS + (TOY,))
    return (*STRATEGIES, ToyMethod)


def test_a_toy_method_is_run_preferred_combined_and_summarized(toy, tmp_path):
    assert toy[-1].name == "toy" and preference_order()[0] == "toy"
    setup = types.SimpleNamespace(grid=np.linspace(-4, 4, 81), lookup_path=None)
    state = run_methods(setup, str(tmp_path), ["toy"], "toy-event", progress=False, strategies=toy)
    result = state.result
    # the runner filed the toy's sign at the toy family's preference rank
    assert [e.family for e in result.methods] == ["toy", "toy"] and list(state.signs) == [-1]
    result.methods.extend(reweighted(0.2, -0.1))  # equal errors: the preference rank decides
    result.choose_headline([state.signs[rank] for rank in sorted(state.signs)])
    assert result.headline.method == "toy estimate" and result.headline.ln_bf == TOY_PLUS
    assert result.sign.note == "from the toy"  # the toy's own sign summary, not one rebuilt from the pair

    second = result.reloaded()
    second.event = "toy-event-2"
    catalog = combine([result, second])
    assert catalog.consistent_sign.ln_bf == pytest.approx(2 * TOY_PLUS, abs=1e-12)
    assert catalog.wrong_sign.ln_bf == pytest.approx(2 * TOY_MINUS, abs=1e-12)
    assert {e["method"] for e in catalog.events} == {"toy estimate"}

    records = [{"ln_bf_plus_toy": 0.1 * i, "ln_bf_plus_reweighting": 0.1 * i + 0.01, "ln_bf_plus_fast": 0.05 * i}
               for i in range(4)]
    assert headline_key(records) == "ln_bf_plus_toy"
    assert calibration(records)["full_method"] == "reweighting"  # described before the toy: compared first


def test_without_the_toy_the_built_in_rule_applies(tmp_path):
    assert "toy" not in [s.name for s in STRATEGIES] and "toy" not in [d.family for d in DESCRIPTIONS]
    setup = types.SimpleNamespace(grid=np.linspace(-4, 4, 81), lookup_path=None)
    assert run_methods(setup, str(tmp_path), ["toy"], "toy-event", progress=False).result.methods == []
    methods = reweighted(0.2, -0.1) + [EvidenceEstimate(method="toy estimate", ln_bf=TOY_PLUS, ln_bf_err=0.05,
                                                        family="toy")]
    assert event_pair(methods)["memory"].family == "reweighting"  # an unknown family is never preferred
    assert headline_key([{"ln_bf_plus_toy": 1.0, "ln_bf_plus_nested": 0.5}]) == "ln_bf_plus_nested"
