"""A campaign summary's forecast as typed blocks (:func:`memory_infer.campaign.summary.forecast` computes it; the
campaign page and command read it). The JSON keeps its keys and their order; a field at :data:`.base.ABSENT` is a
key not written (a campaign with no detected injection has an empty forecast)."""
from __future__ import annotations

from dataclasses import dataclass

from .base import ABSENT, Block


@dataclass(frozen=True)
class Distribution(Block):
    """A quantity over the detected injections: mean with its standard error, median, 90% range, count, and what
    the quantity is (None throughout when no injection was detected)."""

    mean: float | None = ABSENT
    mean_err: float | None = ABSENT
    median: float | None = ABSENT
    lower_90: float | None = ABSENT
    upper_90: float | None = ABSENT
    count: int = ABSENT
    note: str = ABSENT


@dataclass(frozen=True)
class EventCount(Block):
    """A number of events needed (median and 90% range over resampled injections; None when never reached), with
    the threshold or bound it refers to when it is not the campaign's threshold, and how it was found."""

    bound: float = ABSENT
    median: float | None = ABSENT
    lower_90: float | None = ABSENT
    upper_90: float | None = ABSENT
    method: str = ABSENT


@dataclass(frozen=True)
class Forecast(Block):
    """Expected ln BF+ and ln BF- over noise per detected event, their spread over noise, the known-sign bound and
    the zero-noise diagnostic, and the events needed from the mean, at the known-sign bound and to bound the
    amplitudes' spread."""

    expected: Distribution = ABSENT
    spread: Distribution = ABSENT
    quadrature_error: float | None = ABSENT
    known_sign: Distribution = ABSENT
    zero_noise: Distribution = ABSENT
    expected_minus: Distribution = ABSENT
    events_from_mean: EventCount = ABSENT
    events_known_sign: EventCount = ABSENT
    events_to_bound_spread: EventCount = ABSENT

    NESTED = {"expected": Distribution, "spread": Distribution, "known_sign": Distribution,
              "zero_noise": Distribution, "expected_minus": Distribution, "events_from_mean": EventCount,
              "events_known_sign": EventCount, "events_to_bound_spread": EventCount}
