import dataclasses

import pytest

from memory_infer.results import methods
from memory_infer.results.estimates import EvidenceEstimate
from memory_infer.results.methods import (DESCRIPTIONS, MethodDescription, approximate_column, campaign_columns,
                                          description_of, family_of, full_columns, preference_order, preference_rank,
                                          quantile_columns)

TOY = MethodDescription(family="toy", label="toy estimate", preference=5, column="toy")


def test_built_in_families_and_their_order():
    assert [d.family for d in DESCRIPTIONS] == ["nested", "reweighting", "fixed-point", "two-point"]
    assert preference_order() == ("reweighting", "nested", "two-point")  # fixed-point is a cross-check only
    assert preference_rank("fixed-point") is None and preference_rank("reweighting") == 0
    assert preference_rank("toy") is None and description_of("toy") is None
    assert campaign_columns() == {"nested": "nested", "reweighting": "reweighting", "fixed-point": "fixed",
                                  "two-point": "fast"}


def test_the_descriptions_are_static_data():
    # one description per family and per label, each frozen: nothing can change them after import
    assert len({d.family for d in DESCRIPTIONS}) == len({d.label for d in DESCRIPTIONS}) == len(DESCRIPTIONS)
    assert isinstance(DESCRIPTIONS, tuple)
    with pytest.raises(dataclasses.FrozenInstanceError):
        DESCRIPTIONS[0].preference = 7


def test_the_campaign_columns_read_from_the_descriptions():
    assert full_columns() == ["nested", "reweighting"]  # Monte-Carlo error: the full methods, in order
    assert approximate_column() == "fast"  # the preferred family without a Monte-Carlo error
    assert quantile_columns() == {"amplitude_quantile_nested": "nested sampling with A free",
                                  "amplitude_quantile_reweighting": "reweighted A curve from the A = 0 posterior"}


def test_family_is_read_from_the_label_that_begins_the_method_text(monkeypatch):
    assert family_of("importance reweighting from the A = 0 posterior [none]") == "reweighting"
    assert family_of("two-point approximation (with the sign-degenerate partner)") == "two-point"
    assert family_of("toy estimate") == ""
    # a new family is one more description in the static list
    monkeypatch.setattr(methods, "DESCRIPTIONS", DESCRIPTIONS + (TOY,))
    assert EvidenceEstimate(method="toy estimate, first try", ln_bf=0.0, ln_bf_err=0.1).family == "toy"
    assert preference_order()[-1] == "toy" and campaign_columns()["toy"] == "toy"
    assert full_columns() == ["nested", "reweighting", "toy"]
