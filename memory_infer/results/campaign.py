"""The campaign summary: what ``memory-infer campaign`` writes as campaign.json."""
from __future__ import annotations

from dataclasses import dataclass, field

from .base import ResultFile
from .campaign_blocks import Forecast
from .cautions import FORECAST


@dataclass
class CampaignSummary(ResultFile):
    """Distributions, forecasts, PP test and calibration of an injection campaign.

    ``ln_bf_values`` are the per-detected-injection ln BF+ the distribution figure draws. ``forecast`` holds the
    expected ln BF over noise, the known-sign bound and the zero-noise diagnostic; ``events_to_threshold`` and
    ``cumulative`` come from catalogs simulated with each event's noise scatter.
    """

    KIND = "campaign"
    FILE = "campaign.json"
    NESTED = {"forecast": Forecast}

    label: str
    n_injections: int
    n_failed: int
    n_detected: int
    detection_snr: float
    ln_bf: dict
    memory_snr: dict
    events_to_threshold: dict
    cumulative: dict
    pp: dict
    calibration: dict
    failures: list = field(default_factory=list)
    ln_bf_values: list = field(default_factory=list)
    forecast: Forecast = field(default_factory=Forecast)
    warnings: list = field(default_factory=list)
    provenance: dict | None = None
    caution: str = FORECAST
