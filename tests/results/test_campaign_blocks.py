import json

import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.common.writing import JSONEncoder
from memory_infer.results.base import ABSENT
from memory_infer.results.campaign import CampaignSummary
from memory_infer.results.campaign_blocks import Distribution, EventCount, Forecast

DISTRIBUTION = {"mean": 0.02, "mean_err": 0.01, "median": 0.01, "lower_90": -0.01, "upper_90": 0.05, "count": 4,
                "note": "expected ln BF+"}
COUNT = {"median": 400.0, "lower_90": 200.0, "upper_90": None, "method": "threshold / mean"}
FORECAST = {"expected": DISTRIBUTION, "spread": DISTRIBUTION, "quadrature_error": 1e-14, "known_sign": DISTRIBUTION,
            "zero_noise": DISTRIBUTION, "expected_minus": DISTRIBUTION, "events_from_mean": COUNT,
            "events_known_sign": COUNT, "events_to_bound_spread": dict({"bound": 0.5}, **COUNT)}


def summary(forecast):
    return CampaignSummary(label="c", n_injections=4, n_failed=0, n_detected=4, detection_snr=12.0, ln_bf={},
                           memory_snr={}, events_to_threshold={}, cumulative={}, pp={}, calibration={},
                           forecast=forecast)


def text(mapping) -> str:
    return json.dumps(mapping, cls=JSONEncoder, allow_nan=True)


def test_the_forecast_is_typed_and_written_key_for_key_in_order():
    result = summary(FORECAST)
    assert isinstance(result.forecast, Forecast) and isinstance(result.forecast.expected, Distribution)
    assert isinstance(result.forecast.events_to_bound_spread, EventCount) and result.forecast.events_from_mean.bound is ABSENT
    written = json.loads(text(result.to_json()))
    assert text(written["forecast"]) == text(FORECAST)
    assert text(CampaignSummary.from_json(written).to_json()) == text(written)


def test_an_empty_forecast_stays_empty_and_an_unknown_key_is_refused():
    empty = summary({})
    assert not empty.forecast and empty.to_json()["forecast"] == {}
    with pytest.raises(MemoryInferError, match="Distribution block holds the unknown key 'mode'"):
        summary(dict(FORECAST, expected=dict(DISTRIBUTION, mode=0.0)))
