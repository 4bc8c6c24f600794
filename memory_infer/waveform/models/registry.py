"""The waveform models: one entry each (name, domain, whether it takes precessing spins, how it is generated).

A time-domain model's ``generate(approximant, mass_1, mass_2, luminosity_distance, delta_t, minimum_frequency,
spin_1, spin_2, reference_frequency, mode_list)`` returns a :class:`.series.ModeSeries`; a frequency-domain
model's ``generate`` is :func:`.fd_modes.mode_spectra`. A model that gives its own finer samplings of the merger
from the same call has ``own_levels`` (same arguments, returns ``(series, frame)``, ``frame.level`` the
interpolation of :func:`.refine.finer_levels`). A new lalsimulation family is one entry below; a model from another
package is one adapter module and one entry. Names not listed go to lalsimulation's time-domain modes, its own
spin support deciding whether they take precessing spins.
"""
from __future__ import annotations

import functools
from dataclasses import dataclass
from types import MappingProxyType
from typing import Callable

from . import analytic, fd_modes, lal_modes, pyseobnr_modes

TIME, FREQUENCY = "time", "frequency"


@dataclass(frozen=True)
class Model:
    name: str
    domain: str  # TIME or FREQUENCY
    precessing: bool | None  # takes in-plane spins (None: lalsimulation's spin support decides)
    generate: Callable
    own_levels: Callable | None = None


def _analytic(approximant, mass_1, mass_2, luminosity_distance, delta_t, minimum_frequency, spin_1, spin_2,
              reference_frequency, mode_list=None):
    return analytic.leading_order_inspiral(mass_1, mass_2, luminosity_distance, delta_t, minimum_frequency)


_LAL = lal_modes.choose_td_modes
MODELS = MappingProxyType({model.name: model for model in (
    Model("IMRPhenomTHM", TIME, False, _LAL),
    Model("IMRPhenomTPHM", TIME, True, _LAL),
    Model("SEOBNRv4PHM", TIME, True, _LAL),
    Model("TaylorT4", TIME, False, _LAL),
    *(Model(name, TIME, name in pyseobnr_modes.PRECESSING, pyseobnr_modes.seobnr_modes,  # the optional pyseobnr
            functools.partial(pyseobnr_modes.seobnr_modes, keep_frame=True) if name in pyseobnr_modes.PRECESSING
            else None) for name in pyseobnr_modes.MODELS),
    Model(analytic.NAME, TIME, False, _analytic),
    *(Model(name, FREQUENCY, name in fd_modes.PRECESSING, fd_modes.mode_spectra) for name in fd_modes.MODELS),
)})
SUPPORTED = tuple(name for name, model in MODELS.items() if model.domain == TIME)
FREQUENCY_DOMAIN = tuple(name for name, model in MODELS.items() if model.domain == FREQUENCY)


def model(approximant: str) -> Model:
    """The entry of ``approximant``; names not listed are lalsimulation time-domain models."""
    return MODELS.get(approximant) or Model(approximant, TIME, None, _LAL)


def is_frequency_domain(approximant: str) -> bool:
    return model(approximant).domain == FREQUENCY


def takes_precessing_spins(approximant: str) -> bool:
    """Whether the model accepts in-plane spin components (for lalsimulation models not listed: its spin support)."""
    entry = model(approximant)
    if entry.precessing is None:
        return lal_modes.spin_support(approximant) == "precessing"
    return entry.precessing
