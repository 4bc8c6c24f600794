"""Waveform-model adapters: each returns time-domain modes as a :class:`ModeSeries`.

``generate_modes(approximant, ...)`` picks the model's entry in :mod:`.registry` (the analytic inspiral of
:mod:`.analytic`, lalsimulation's ``SimInspiralChooseTDModes`` in :mod:`.lal_modes`, pyseobnr in
:mod:`.pyseobnr_modes`). Frequency-domain mode models (:mod:`.fd_modes`) are used by the source model through
:mod:`memory_infer.waveform.frequency_source`, not here.
"""
from __future__ import annotations

from ...common.errors import WaveformError
from ..options import DEFAULT_APPROXIMANT, DEFAULT_MINIMUM_FREQUENCY, DEFAULT_REFERENCE_FREQUENCY  # noqa: F401
from .series import ModeSeries
from .refine import finer_levels
from .registry import FREQUENCY, FREQUENCY_DOMAIN, SUPPORTED, model, takes_precessing_spins


def generate_modes(approximant: str, mass_1: float, mass_2: float, luminosity_distance: float,
                   delta_t: float, minimum_frequency: float, spin_1=(0.0, 0.0, 0.0),
                   spin_2=(0.0, 0.0, 0.0), reference_frequency: float | None = None,
                   mode_list=None, finer_for_memory: bool = True) -> ModeSeries:
    """Time-domain modes of one binary (detector-frame masses in solar masses, distance in Mpc).

    ``spin_1``/``spin_2`` are dimensionless Cartesian spins in the frame of the orbital angular
    momentum at the reference frequency (by default the minimum frequency); ``mode_list`` restricts the modes
    (lalsimulation mode array). Every model's modes are in lalsimulation's convention. With ``finer_for_memory``
    the late inspiral and merger are also sampled as finely as the memory's flux needs (``series.finer``, see
    :mod:`.refine`); the modes themselves stay at ``delta_t``.
    """
    reference_frequency = reference_frequency or minimum_frequency
    entry = model(approximant)
    if entry.domain == FREQUENCY:
        raise WaveformError(f"waveform model '{approximant}' gives frequency-domain modes, which only the likelihood's "
                            "source model uses (memory-infer evidence); here choose a time-domain model such as "
                            "IMRPhenomTHM")

    def generate(step, start, reference):
        return entry.generate(approximant, mass_1, mass_2, luminosity_distance, step, start, spin_1, spin_2,
                              reference, mode_list)

    frame = None
    if entry.own_levels is not None and finer_for_memory:  # its finer levels come from the same call
        series, frame = entry.own_levels(approximant, mass_1, mass_2, luminosity_distance, delta_t, minimum_frequency,
                                         spin_1, spin_2, reference_frequency, mode_list)
    else:
        series = generate(delta_t, minimum_frequency, reference_frequency)
    if finer_for_memory:
        series.finer = finer_levels(series, generate, minimum_frequency, reference_frequency,
                                    interpolate=frame.level if frame is not None else None)
    return series


__all__ = ["ModeSeries", "generate_modes", "takes_precessing_spins", "SUPPORTED", "FREQUENCY_DOMAIN",
           "DEFAULT_APPROXIMANT"]
