"""Frequency-domain mode models in the source model: the model's own polarizations plus the memory.

For IMRPhenomXHM and IMRPhenomXPHM the oscillatory part is exactly bilby's ``lal_binary_black_hole`` for that
approximant (lalsimulation's ``SimInspiralChooseFDWaveform``), so with the memory amplitude at zero the
likelihood is bilby's own. The memory is computed from the model's modes (``SimInspiralChooseFDModes``) taken
to the time domain (:mod:`.models.fd_modes`), with finer samplings of the merger for its flux where the data's
rate does not resolve it (:mod:`.models.refine`), and laid on the segment like the time-domain models' memory
(:func:`.source.circular_layout`, long raised-cosine taper after the ringdown).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .conditioning import library_polarizations
from .models.fd_modes import MEMORY_LEAD, ModeSpectra, band_step, late_modes, mode_spectra, time_modes
from .models.refine import finer_levels
from .models.registry import takes_precessing_spins
from .models.series import ModeSeries
from .options import Binary, ModesRequest, SourceOptions
from .source import (TimeSignal, circular_layout, lalsimulation_spins, memory_towards, observer_angles,
                     segment_geometry, to_frequency_domain)

@dataclass
class FrequencyModes:
    """A frequency-domain model's modes in the time domain (with finer levels) and where the observer sits."""

    series: ModeSeries
    spectra: ModeSpectra


def frequency_modes(approximant, mass_1, mass_2, delta_t, minimum_frequency, spin_1, spin_2, reference_frequency,
                    inclination, phase, duration, mode_list=None, finer_for_memory=True,
                    memory_lead=MEMORY_LEAD) -> FrequencyModes:
    """Modes at 1 Mpc on the data's step ``delta_t``, and finer levels of the merger for the memory's flux
    (``memory_lead`` as in :func:`.models.fd_modes.mode_spectra`)."""
    spectra = mode_spectra(approximant, mass_1, mass_2, 1.0, minimum_frequency, spin_1, spin_2,
                           reference_frequency, inclination, phase, duration, mode_list, memory_lead)
    series = time_modes(spectra, delta_t)
    native = series if delta_t <= band_step(spectra) * (1 + 1e-9) else None  # holds every frequency of the spectra

    def generate(step, start, reference):
        nonlocal native
        if start > minimum_frequency * 1.0001:  # the late part: from the band-complete series, for its cost only
            native = native or time_modes(spectra, band_step(spectra))
            level = late_modes(native, step, start)
            if level is not None:
                return level
        return time_modes(spectra, step, start_frequency=start if start > minimum_frequency * 1.0001 else None)

    if finer_for_memory:
        # every level is cut from the same spectra (to the model's cutoff), so a level's later start is exact for
        # precessing spins too, and no level is interpolated from the data-rate modes (cut at the data's Nyquist
        # frequency; for precessing spins without the aligned-spin symmetry h_{l,-m} = (-1)^l conj(h_lm))
        series.finer = finer_levels(series, generate, minimum_frequency, reference_frequency, cut_from_spectra=True)
    return FrequencyModes(series=series, spectra=spectra)


def observer(modes: FrequencyModes, inclination: float, phase: float):
    """(theta, phi, rotation): the observer in the modes' frame and the turn onto lalsimulation's polarizations."""
    spectra = modes.spectra
    if takes_precessing_spins(spectra.approximant):  # J-frame modes, generated at this phase and inclination
        return spectra.theta, spectra.phi, spectra.rotation
    theta, phi = observer_angles(inclination, phase)  # modes at phi_ref = 0, as for the time-domain models
    return theta, phi, 1.0


def memory_strain(modes: FrequencyModes, inclination: float, phase: float, early_inspiral: bool = True) -> np.ndarray:
    """Complex memory ``h+ - i hx`` (SI at 1 Mpc) at ``modes.series.times`` in lalsimulation's polarization frame."""
    theta, phi, rotation = observer(modes, inclination, phase)
    return memory_towards(modes.series, theta, phi, early_inspiral) * rotation


def frequency_parts(frequency_array, binary: Binary, options: SourceOptions, cache) -> dict:
    """Oscillatory (bilby's own polarizations) and memory parts of a frequency-domain mode model, SI at the
    distance; the modes come from ``cache``."""
    n_buffer, delta_t = segment_geometry(frequency_array)
    oscillatory = library_polarizations(frequency_array, binary, options)
    if not options.include_memory:
        return {"plus": oscillatory["plus"], "cross": oscillatory["cross"],
                "memory_plus": np.zeros_like(oscillatory["plus"]), "memory_cross": np.zeros_like(oscillatory["cross"])}
    inclination, spin_1, spin_2 = lalsimulation_spins(binary, options.reference_frequency)
    request = ModesRequest(options.approximant, binary.mass_1, binary.mass_2, delta_t, options.minimum_frequency,
                           tuple(float(x) for x in spin_1), tuple(float(x) for x in spin_2),
                           options.reference_frequency, options.mode_list,
                           observer=(float(inclination), binary.phase) if takes_precessing_spins(options.approximant)
                           else ())

    def make():
        inclination, phase = request.observer or (0.0, 0.0)
        return frequency_modes(request.approximant, request.mass_1, request.mass_2, request.delta_t,
                               request.minimum_frequency, request.spin_1, request.spin_2, request.reference_frequency,
                               inclination, phase, 0.0, request.mode_list)

    modes = make() if cache is None else cache.recall_modes(request, make)
    memory = memory_strain(modes, inclination, binary.phase, options.early_inspiral)
    signal = TimeSignal(modes.series.times, np.zeros(memory.size, complex), memory, float(abs(memory[0])))
    _, buffer, shift = circular_layout(signal, n_buffer, delta_t, options.taper_duration, 0.0)
    parts = to_frequency_domain(buffer / binary.luminosity_distance, delta_t, shift, frequency_array)
    return {"plus": oscillatory["plus"], "cross": oscillatory["cross"], "memory_plus": parts["plus"],
            "memory_cross": parts["cross"]}
