import pytest

import memory_infer.inference.methods  # noqa: F401 - registers the built-in methods' families
from memory_infer.common.errors import MemoryInferError
from memory_infer.results import methods
from memory_infer.results.estimates import EvidenceEstimate
from memory_infer.results.methods import MethodDescription, described, family_of, preference_order, preference_rank

TOY = MethodDescription(family="toy", label="toy estimate", preference=5, column="toy")


def test_built_in_families_and_their_order():
    assert preference_order() == ("reweighting", "nested", "two-point")  # fixed-point is a cross-check only
    assert preference_rank("fixed-point") is None and preference_rank("reweighting") == 0
    assert methods.campaign_columns() == {"nested": "nested", "reweighting": "reweighting", "fixed-point": "fixed",
                                          "two-point": "fast"}


def test_family_is_read_from_the_label_that_begins_the_method_text():
    assert family_of("importance reweighting from the A = 0 posterior [none]") == "reweighting"
    assert family_of("two-point approximation (with the sign-degenerate partner)") == "two-point"
    assert family_of("toy estimate") == ""
    with described(TOY):
        assert EvidenceEstimate(method="toy estimate, first try", ln_bf=0.0, ln_bf_err=0.1).family == "toy"
        assert preference_order()[-1] == "toy"
    assert "toy" not in methods.DESCRIPTIONS and family_of("toy estimate") == ""


def test_a_family_described_twice_differently_is_refused():
    with described(TOY):
        methods.describe(TOY)  # the same description again is harmless
        with pytest.raises(MemoryInferError, match="described twice"):
            methods.describe(MethodDescription(family="toy", label="other words", preference=5))
    assert "toy" not in methods.DESCRIPTIONS


def test_an_empty_registry_says_how_to_fill_it(monkeypatch):
    monkeypatch.setattr(methods, "DESCRIPTIONS", {})
    with pytest.raises(MemoryInferError, match="memory_infer.inference.methods is imported"):
        preference_order()
