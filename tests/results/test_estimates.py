import numpy as np
import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.results.estimates import (EvidenceEstimate, SignSummary, consistent_sign, cumulative_distribution,
                                            event_pair, grid_index, headline, normalized_density, preferred)


def estimate(family, numerator, ln_bf, reliable=True, ess=None, sample_set=None, error=0.1):
    names = {"nested": "nested sampling", "reweighting": "importance reweighting from the A = 0 posterior",
             "two-point": "two-point approximation"}
    return EvidenceEstimate(method=names[family], ln_bf=ln_bf, ln_bf_err=None if family == "two-point" else error,
                            numerator=numerator, reliable=reliable, effective_sample_size=ess, sample_set=sample_set)


def test_headline_is_the_reliable_estimate_with_the_smallest_error():
    methods = [estimate("two-point", "memory", 0.1), estimate("two-point", "flipped", -0.1),
               estimate("reweighting", "memory", 0.002, ess=300, error=0.004),
               estimate("reweighting", "flipped", -0.2, ess=300, error=0.004), estimate("nested", "memory", 0.3, error=0.2)]
    chosen = headline(methods)
    assert chosen["ln_bf"] == 0.002  # reweighting's 0.004 beats nested sampling's 0.2
    check = chosen["cross_check"]
    assert check["method"] == "nested sampling" and check["difference"] == pytest.approx(0.298)
    assert check["difference_in_errors"] == pytest.approx(0.298 / np.hypot(0.2, 0.004))
    loud = [estimate("reweighting", "memory", 4.0, ess=40, error=0.6), estimate("nested", "memory", 4.3, error=0.15)]
    assert headline(loud)["ln_bf"] == 4.3  # a loud memory: the reweighting error grows past nested sampling's
    pair = preferred(methods, ("memory", "flipped"))
    assert pair["memory"].ln_bf == 0.002  # nested lacks A = -1: the reweighting pair
    assert preferred(methods[:2], ("memory", "flipped"))["memory"].ln_bf == 0.1
    assert headline(methods[:2])["cross_check"] is None  # no estimate with an error to compare


def test_one_pair_per_event_even_when_another_sample_set_has_a_smaller_error_on_ln_bf_plus():
    # the case of a demo event: reweighting the A = 1 run gives ln BF+ alone with a slightly smaller error than the
    # A = 0 run, which gives both ln BF+ and ln BF-; every page must show the A = 0 pair
    methods = [estimate("reweighting", "memory", -0.6441, ess=900, sample_set="none", error=0.0023),
               estimate("reweighting", "flipped", -0.9, ess=900, sample_set="none", error=0.003),
               estimate("reweighting", "memory", -0.6486, ess=950, sample_set="memory", error=0.0022)]
    pair = event_pair(methods)
    assert pair["memory"].sample_set == pair["flipped"].sample_set == "none"
    chosen = headline(methods)
    assert chosen["ln_bf"] == -0.6441 and chosen["ln_bf_minus"] == -0.9 and chosen["sample_set"] == "none"
    assert chosen["cross_check"]["ln_bf"] == -0.6486  # the A = 1 set is the cross-check
    curve_sign = SignSummary(-0.6441, 0.0023, -0.9, 0.003, 0.2559, 0.004, 0.56, "importance reweighting")
    nested_sign = SignSummary(-0.5, 0.2, -0.7, 0.2, 0.2, 0.28, 0.55, "nested sampling")
    assert consistent_sign(pair, [nested_sign, curve_sign]) is curve_sign
    assert curve_sign.method == methods[0].method  # relabelled with the pair's method
    built = consistent_sign(pair, [nested_sign])
    assert (built.ln_bf_plus, built.ln_bf_minus) == (-0.6441, -0.9)
    assert built.ln_bf_sign_err == pytest.approx(np.hypot(0.0023, 0.003))
    assert consistent_sign(event_pair(methods[2:]), [curve_sign]) is None  # no ln BF- beside this ln BF+


def test_reweighting_prefers_reliable_sets_with_more_effective_samples():
    methods = [estimate("reweighting", "memory", 0.5, ess=80, sample_set="none", error=0.01),
               estimate("reweighting", "memory", 0.7, ess=400, sample_set="file", error=0.01),
               estimate("reweighting", "memory", 9.0, reliable=False, ess=3, sample_set="memory")]
    assert headline(methods)["ln_bf"] == 0.7
    assert headline([methods[2]]) is None


def test_family_is_read_from_old_method_names():
    old = EvidenceEstimate.from_dict({"method": "importance reweighting from the A = 1 posterior (inverse mean)",
                                      "ln_bf": 0.1, "ln_bf_err": 0.01, "extra": "ignored"})
    assert old.family == "reweighting" and old.base_amplitude == 1.0


def test_grid_helpers():
    grid = np.linspace(-2, 2, 41)
    assert grid_index(grid, 1.0) == 30
    with pytest.raises(MemoryInferError, match="does not contain"):
        grid_index(grid, 0.05)
    density = normalized_density(grid, -0.5 * grid ** 2 / 0.3 ** 2 + 1e3)  # large offset: log space must cope
    assert np.trapezoid(density, grid) == pytest.approx(1.0, abs=1e-12)
    cdf = cumulative_distribution(grid, density)
    assert cdf[0] == 0 and cdf[-1] == 1 and np.interp(0.0, grid, cdf) == pytest.approx(0.5, abs=1e-12)
