import json

import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.common.writing import JSONEncoder
from memory_infer.results.base import ABSENT
from memory_infer.results.estimates import EvidenceEstimate, headline
from memory_infer.results.event import EventResult
from memory_infer.results.event_blocks import CrossCheck, Headline, MemorySNR

NESTED = "nested sampling (dynesty through bilby)"
REWEIGHTED = "importance reweighting from the A = 0 posterior"


def methods():
    return [EvidenceEstimate(method=REWEIGHTED, ln_bf=0.5, ln_bf_err=0.05),
            EvidenceEstimate(method=REWEIGHTED, ln_bf=-0.9, ln_bf_err=0.05, numerator="flipped"),
            EvidenceEstimate(method=NESTED, ln_bf=0.6, ln_bf_err=0.3)]


def text(mapping) -> str:
    return json.dumps(mapping, cls=JSONEncoder, allow_nan=True)


def test_headline_and_memory_snr_are_typed_and_written_as_computed():
    computed = headline(methods())
    result = EventResult(event="e", methods=methods())
    result.choose_headline()
    result.memory_snr = {"value": 1.2, "error": None, "point": "the injection", "method": "optimal SNR"}  # set late
    assert isinstance(result.headline, Headline) and isinstance(result.headline.cross_check, CrossCheck)
    assert isinstance(result.memory_snr, MemorySNR) and result.memory_snr.value == 1.2
    written = result.to_json()
    assert text(written["headline"]) == text(computed)  # same keys, same order, same values
    assert list(written["memory_snr"]) == ["value", "error", "point", "method"]
    assert text(EventResult.from_json(json.loads(text(written))).to_json()) == text(written)


def test_a_short_memory_snr_and_an_unknown_headline_key():
    assert MemorySNR.from_dict({"value": 1.0}).to_dict() == {"value": 1.0}  # only the value, as older records
    assert MemorySNR.from_dict({"value": 1.0}).point is ABSENT
    with pytest.raises(MemoryInferError, match="Headline block holds the unknown key 'odds'"):
        Headline.from_dict(dict(headline(methods()), odds=2.0))
