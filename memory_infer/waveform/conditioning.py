"""A time-domain model's oscillatory signal exactly as bilby's ``lal_binary_black_hole`` makes it.

bilby takes a time-domain model to the frequency domain through lalsimulation's ``SimInspiralFD``, which
conditions it first (lalsimulation's ``SimInspiralTD``). Read off lalsimulation 6.x (its Python mirror,
``lalsimulation.gwsignal.core.waveform_conditioning``) and pinned by tests/waveform/test_conditioning.py
against bilby's own polarizations:

- ``lowered start`` (IMRPhenomTHM, IMRPhenomTPHM): the minimum frequency is capped at the Kerr ISCO bound; the model
  is generated from a lower start frequency, ``SimInspiralChirpStartFrequencyBound`` of 1.1 x the chirp time
  bound plus the merger and ringdown bounds plus three cycles at the minimum frequency, with the reference
  frequency kept; ``SimInspiralTDConditionStage1`` tapers the first ``0.1 t_chirp + 3 / f_min`` seconds and
  high-passes at the minimum frequency, ``SimInspiralTDConditionStage2`` tapers one cycle at each end;
- the same for SEOBNRv5PHM and SEOBNRv5HM, whose frequency-domain polarizations pyseobnr makes this way (bilby
  takes them through ``gwsignal_binary_black_hole``);
- ``start taper`` (SEOBNRv4PHM): the model is generated from the minimum frequency and only
  ``SimInspiralREAL8WaveTaper`` (start) is applied;
- then the series is cut or zero-padded at its start to ``2 f_nyquist / delta_f`` samples (``f_nyquist`` is the
  maximum frequency rounded up to a power of two times ``delta_f``), transformed, shifted so that the model's
  t = 0 sits at the segment's start, and zeroed outside [minimum, maximum frequency].

For these models the polarizations are the mode sum of ``SimInspiralChooseTDModes`` (to ~1e-15), so the modes the
memory is computed from also give the oscillatory signal, from one model call. Models whose polarizations are
not their modes' sum (TaylorT4, whose polarizations take bilby's PN amplitude order) and models not listed take
bilby's own call (``library``): exact too, at the cost of a second model call.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..common.errors import WaveformError
from .models.lal_call import EXTRA_TIME_FRACTION, conditioning_bounds, lal_modules, quiet

LOWERED_START, START_TAPER, LIBRARY = "lowered start", "start taper", "library"
ROUTES = {"IMRPhenomTHM": LOWERED_START, "IMRPhenomTPHM": LOWERED_START, "SEOBNRv4PHM": START_TAPER,
          "SEOBNRv5PHM": LOWERED_START, "SEOBNRv5HM": LOWERED_START}
GWSIGNAL_MODELS = ("SEOBNRv5PHM", "SEOBNRv5HM")  # bilby's gwsignal_binary_black_hole (pyseobnr) is their model


@dataclass(frozen=True)
class Conditioning:
    """How one binary's time-domain model is generated and conditioned (SI units: Hz, s)."""

    route: str
    start_frequency: float  # where the model (and the memory's modes) start
    minimum_frequency: float  # the band's lower edge: stage 1 high-passes here, bilby zeroes below it
    maximum_frequency: float
    delta_t: float  # the model's step, 0.5 / f_nyquist
    n_samples: int  # the conditioned series' length, 2 f_nyquist / delta_f
    taper_duration: float  # stage 1's start taper
    stage_two_minimum: float  # the minimum frequency capped at the Kerr ISCO bound
    stage_two_maximum: float  # the Schwarzschild ISCO frequency


def route(approximant: str) -> str:
    return ROUTES.get(approximant, LIBRARY)


def conditioning(approximant: str, mass_1: float, mass_2: float, spin_1z: float, spin_2z: float,
                 minimum_frequency: float, maximum_frequency: float, frequency_array) -> Conditioning:
    """The conditioning ``SimInspiralFD`` applies to this binary (masses in solar masses)."""
    lal, _ = lal_modules()
    delta_f = float(frequency_array[1] - frequency_array[0])
    count = int(round(maximum_frequency / delta_f))
    nyquist = maximum_frequency if count & (count - 1) == 0 else 2 ** math.ceil(math.log2(count)) * delta_f
    delta_t, n_samples = 0.5 / nyquist, int(round(2 * nyquist / delta_f))
    kind = route(approximant)
    if kind != LOWERED_START:
        return Conditioning(kind, minimum_frequency, minimum_frequency, maximum_frequency, delta_t, n_samples,
                            0.0, minimum_frequency, 0.0)
    total_seconds = (mass_1 + mass_2) * lal.MTSUN_SI
    f_min = min(minimum_frequency, 1.0 / (9.0 ** 1.5 * math.pi * total_seconds))
    chirp, _, extra, start = conditioning_bounds(mass_1, mass_2, spin_1z, spin_2z, f_min, True)
    return Conditioning(kind, float(start), minimum_frequency, maximum_frequency, delta_t, n_samples,
                        EXTRA_TIME_FRACTION * chirp + extra, f_min, 1.0 / (6.0 ** 1.5 * math.pi * total_seconds))


def conditioned_series(start_time: float, strain: np.ndarray, plan: Conditioning):
    """(plus, cross, start time) of the complex ``h+ - i hx`` (at ``plan.delta_t`` from ``start_time``) after
    ``SimInspiralTD``'s conditioning and ``SimInspiralFD``'s cut to ``plan.n_samples``; lalsimulation's own
    functions do the conditioning and keep its epoch arithmetic (nanoseconds)."""
    lal, lalsim = lal_modules()
    epoch = lal.LIGOTimeGPS(start_time)
    plus = lal.CreateREAL8TimeSeries("plus", epoch, 0.0, plan.delta_t, lal.DimensionlessUnit, strain.size)
    cross = lal.CreateREAL8TimeSeries("cross", epoch, 0.0, plan.delta_t, lal.DimensionlessUnit, strain.size)
    plus.data.data, cross.data.data = strain.real, -strain.imag
    try:
        with quiet():
            if plan.route == LOWERED_START:
                lalsim.SimInspiralTDConditionStage1(plus, cross, plan.taper_duration, plan.minimum_frequency)
                lalsim.SimInspiralTDConditionStage2(plus, cross, plan.stage_two_minimum, plan.stage_two_maximum)
            else:
                lalsim.SimInspiralREAL8WaveTaper(plus.data, lalsim.SIM_INSPIRAL_TAPER_START)
                lalsim.SimInspiralREAL8WaveTaper(cross.data, lalsim.SIM_INSPIRAL_TAPER_START)
            plus = lal.ResizeREAL8TimeSeries(plus, plus.data.length - plan.n_samples, plan.n_samples)
            cross = lal.ResizeREAL8TimeSeries(cross, cross.data.length - plan.n_samples, plan.n_samples)
    except RuntimeError as error:
        raise WaveformError(f"lalsimulation could not condition the waveform ({error})") from None
    return plus.data.data, cross.data.data, float(plus.epoch)


def frequency_bounds(frequency_array, plan: Conditioning) -> np.ndarray:
    """bilby's mask: the model is zero below the minimum and above the maximum frequency."""
    return (frequency_array >= plan.minimum_frequency) & (frequency_array <= plan.maximum_frequency)


def library_polarizations(frequency_array, binary, options) -> dict:
    """bilby's own ``lal_binary_black_hole`` polarizations of a :class:`.options.Binary` for
    :class:`.options.SourceOptions` (bilby's own waveform arguments included)."""
    import bilby

    kwargs = dict(options.bilby_arguments(), catch_waveform_errors=True)
    model = (bilby.gw.source.gwsignal_binary_black_hole if options.approximant in GWSIGNAL_MODELS
             else bilby.gw.source.lal_binary_black_hole)
    if model is not bilby.gw.source.lal_binary_black_hole:
        kwargs = {k: v for k, v in kwargs.items() if k in ("waveform_approximant", "reference_frequency",
                                                            "minimum_frequency", "maximum_frequency",
                                                            "catch_waveform_errors", "mode_array")}
    names = ("mass_1", "mass_2", "luminosity_distance", "a_1", "tilt_1", "phi_12", "a_2", "tilt_2", "phi_jl",
             "theta_jn", "phase")
    failure = (f"waveform model '{options.approximant}' could not generate masses {binary.mass_1:g} and "
               f"{binary.mass_2:g} solar masses with these settings")
    try:
        polarizations = model(frequency_array, **{k: getattr(binary, k) for k in names}, **kwargs)
    except RuntimeError as error:  # bilby passes on lalsimulation's errors other than a domain error
        raise WaveformError(f"{failure} ({error})") from None
    if polarizations is None:
        raise WaveformError(failure)
    return polarizations
