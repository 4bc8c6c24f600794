"""Waveform-model adapters: each returns time-domain modes as a :class:`ModeSeries`.

``generate_modes(approximant, ...)`` picks the adapter: ``LeadingOrderInspiral`` is the
analytic (2, +-2) inspiral of :mod:`.analytic`; every other name goes to lalsimulation's
``SimInspiralChooseTDModes`` (:mod:`.lal_modes`).
"""
from __future__ import annotations

from .series import ModeSeries
from . import analytic, lal_modes

SUPPORTED = ("IMRPhenomTHM", "IMRPhenomTPHM", "SEOBNRv4PHM", "TaylorT4", analytic.NAME)
DEFAULT_APPROXIMANT = "IMRPhenomTHM"


def generate_modes(approximant: str, mass_1: float, mass_2: float, luminosity_distance: float,
                   delta_t: float, minimum_frequency: float, spin_1=(0.0, 0.0, 0.0),
                   spin_2=(0.0, 0.0, 0.0), reference_frequency: float | None = None,
                   mode_list=None) -> ModeSeries:
    """Time-domain modes of one binary (detector-frame masses in solar masses, distance in Mpc).

    ``spin_1``/``spin_2`` are dimensionless Cartesian spins in the frame of the orbital angular
    momentum at the reference frequency; ``mode_list`` restricts the modes (lalsimulation mode array).
    """
    if approximant == analytic.NAME:
        return analytic.leading_order_inspiral(mass_1, mass_2, luminosity_distance, delta_t,
                                               minimum_frequency)
    return lal_modes.choose_td_modes(approximant, mass_1, mass_2, luminosity_distance, delta_t,
                                     minimum_frequency, spin_1, spin_2,
                                     reference_frequency or minimum_frequency, mode_list)


__all__ = ["ModeSeries", "generate_modes", "SUPPORTED", "DEFAULT_APPROXIMANT"]
