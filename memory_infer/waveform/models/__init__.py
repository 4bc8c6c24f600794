"""Waveform-model adapters: each returns time-domain modes as a :class:`ModeSeries`.

``generate_modes(approximant, ...)`` picks the adapter: ``LeadingOrderInspiral`` is the
analytic (2, +-2) inspiral of :mod:`.analytic`; every other name goes to lalsimulation's
``SimInspiralChooseTDModes`` (:mod:`.lal_modes`). Frequency-domain mode models (:mod:`.fd_modes`) are used by
the source model through :mod:`memory_infer.waveform.frequency_source`, not here.
"""
from __future__ import annotations

from ...common.errors import WaveformError
from .series import ModeSeries
from . import analytic, fd_modes, lal_modes, pyseobnr_modes
from .refine import finer_levels

SUPPORTED = ("IMRPhenomTHM", "IMRPhenomTPHM", "SEOBNRv4PHM", "TaylorT4", *pyseobnr_modes.MODELS,
             analytic.NAME)  # time-domain modes (SEOBNRv5 through the optional pyseobnr package)
FREQUENCY_DOMAIN = fd_modes.FD_MODELS  # frequency-domain modes: through the source model only (frequency_source)
DEFAULT_APPROXIMANT = "IMRPhenomTHM"
DEFAULT_MINIMUM_FREQUENCY = 20.0  # Hz, the analysis band's lower edge
DEFAULT_REFERENCE_FREQUENCY = 20.0  # Hz, when neither the configuration nor the samples file gives one


def generate_modes(approximant: str, mass_1: float, mass_2: float, luminosity_distance: float,
                   delta_t: float, minimum_frequency: float, spin_1=(0.0, 0.0, 0.0),
                   spin_2=(0.0, 0.0, 0.0), reference_frequency: float | None = None,
                   mode_list=None, finer_for_memory: bool = True) -> ModeSeries:
    """Time-domain modes of one binary (detector-frame masses in solar masses, distance in Mpc).

    ``spin_1``/``spin_2`` are dimensionless Cartesian spins in the frame of the orbital angular
    momentum at the reference frequency; ``mode_list`` restricts the modes (lalsimulation mode array).
    Every model's modes are in lalsimulation's convention. With ``finer_for_memory`` the late inspiral
    and merger are also sampled as finely as the memory's flux needs (``series.finer``, see
    :mod:`.refine`); the modes themselves stay at ``delta_t``.
    """
    reference_frequency = reference_frequency or minimum_frequency
    if fd_modes.is_frequency_domain(approximant):
        raise WaveformError(f"waveform model '{approximant}' gives frequency-domain modes, which only the likelihood's "
                            "source model uses (memory-infer evidence); here choose a time-domain model such as "
                            "IMRPhenomTHM")

    def generate(step, start, reference):
        if approximant == analytic.NAME:
            return analytic.leading_order_inspiral(mass_1, mass_2, luminosity_distance, step, start)
        if approximant in pyseobnr_modes.MODELS:
            return pyseobnr_modes.seobnr_modes(approximant, mass_1, mass_2, luminosity_distance, step, start, spin_1,
                                               spin_2, reference, mode_list)
        return lal_modes.choose_td_modes(approximant, mass_1, mass_2, luminosity_distance, step, start,
                                         spin_1, spin_2, reference, mode_list)

    frame = None
    if approximant in pyseobnr_modes.PRECESSING and finer_for_memory:  # its finer levels come from the same call
        series, frame = pyseobnr_modes.seobnr_modes(approximant, mass_1, mass_2, luminosity_distance, delta_t,
                                                    minimum_frequency, spin_1, spin_2, reference_frequency, mode_list,
                                                    keep_frame=True)
    else:
        series = generate(delta_t, minimum_frequency, reference_frequency)
    if finer_for_memory:
        series.finer = finer_levels(series, generate, minimum_frequency, reference_frequency,
                                    interpolate=frame.level if frame is not None else None)
    return series


def takes_precessing_spins(approximant: str) -> bool:
    """Whether the model accepts in-plane spin components (lalsimulation's spin support)."""
    if approximant == analytic.NAME:
        return False
    if fd_modes.is_frequency_domain(approximant):
        return approximant in fd_modes.PRECESSING
    if approximant in pyseobnr_modes.MODELS:
        return approximant in pyseobnr_modes.PRECESSING
    return lal_modes.spin_support(approximant) == "precessing"


__all__ = ["ModeSeries", "generate_modes", "takes_precessing_spins", "SUPPORTED", "FREQUENCY_DOMAIN",
           "DEFAULT_APPROXIMANT"]
