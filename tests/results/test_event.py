from memory_infer.results.estimates import EvidenceEstimate, SignSummary
from memory_infer.results.event import EventResult


def test_headline_is_chosen_by_the_one_rule_and_survives_the_round_trip():
    result = EventResult(event="e1", methods=[
        EvidenceEstimate(method="two-point approximation", ln_bf=0.2, ln_bf_err=None),
        EvidenceEstimate(method="nested sampling (dynesty through bilby)", ln_bf=0.4, ln_bf_err=0.1),
        EvidenceEstimate(method="nested sampling (dynesty through bilby)", ln_bf=-1.0, ln_bf_err=0.1,
                         numerator="flipped")],
        sign=SignSummary(0.4, 0.1, -1.0, 0.1, 1.4, 0.14, 0.8, "nested sampling"))
    result.choose_headline()
    assert result.headline.ln_bf == 0.4 and "smallest Monte-Carlo error" in result.headline.rule
    assert result.sign.ln_bf_plus == 0.4 and result.sign.ln_bf_minus == -1.0
    again = result.reloaded()
    assert again.to_json() == result.to_json()
    assert isinstance(again.methods[0], EvidenceEstimate) and isinstance(again.sign, SignSummary)
