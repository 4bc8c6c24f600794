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

from ..common.errors import WaveformError
from .conditioning import library_polarizations
from .memory import memory_at_direction
from .models.fd_modes import (MEMORY_LEAD, PRECESSING, ModeSpectra, band_step, is_frequency_domain, late_modes,
                              mode_spectra, time_modes)
from .models.refine import finer_levels
from .models.series import ModeSeries
from .source import (_INTRINSIC, _SETTINGS, TimeSignal, circular_layout, lalsimulation_spins, observer_angles,
                     segment_geometry, to_frequency_domain)
from .source import signal_parts as time_domain_parts

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
    if spectra.approximant in PRECESSING:  # J-frame modes, generated at this phase and inclination
        return spectra.theta, spectra.phi, spectra.rotation
    theta, phi = observer_angles(inclination, phase)  # modes at phi_ref = 0, as for the time-domain models
    return theta, phi, 1.0


def memory_strain(modes: FrequencyModes, inclination: float, phase: float, early_inspiral: bool = True) -> np.ndarray:
    """Complex memory ``h+ - i hx`` (SI at 1 Mpc) at ``modes.series.times`` in lalsimulation's polarization frame."""
    series = modes.series
    theta, phi, rotation = observer(modes, inclination, phase)
    times, strain = series.geometric(scaled=False)  # SI strain, times in M
    memory = memory_at_direction(strain, times, theta, phi, early_inspiral=early_inspiral,
                                 symmetric_mass_ratio=series.symmetric_mass_ratio,
                                 finer=series.geometric_finer(scaled=False), mode_scale=series.strain_scale)
    return memory * rotation


def frequency_parts(frequency_array, parameters: dict, settings: dict, values: dict, cache) -> dict:
    """Oscillatory (bilby's own polarizations) and memory parts of a frequency-domain mode model."""
    n_buffer, delta_t = segment_geometry(frequency_array)
    oscillatory = library_polarizations(frequency_array, values, settings)
    if not settings["include_memory"]:
        return {"plus": oscillatory["plus"], "cross": oscillatory["cross"],
                "memory_plus": np.zeros_like(oscillatory["plus"]), "memory_cross": np.zeros_like(oscillatory["cross"])}
    reference = float(settings["reference_frequency"])
    inclination, spin_1, spin_2 = lalsimulation_spins(values, reference)
    approximant = settings["waveform_approximant"]
    mode_list = tuple(tuple(int(x) for x in m) for m in settings["mode_list"]) if settings["mode_list"] else None
    observer_key = (float(inclination), values["phase"]) if approximant in PRECESSING else ()
    arguments = (approximant, values["mass_1"], values["mass_2"], delta_t, float(settings["minimum_frequency"]),
                 tuple(float(x) for x in spin_1), tuple(float(x) for x in spin_2), reference, *observer_key)

    def make():
        angles = observer_key or (0.0, 0.0)
        return frequency_modes(*arguments[:8], *angles, 0.0, mode_list)

    modes = make() if cache is None else cache._recall(cache.modes, arguments + (mode_list,), make, cache.modes_size)
    memory = memory_strain(modes, inclination, values["phase"], bool(settings["early_inspiral_memory"]))
    signal = TimeSignal(modes.series.times, np.zeros(memory.size, complex), memory, float(abs(memory[0])))
    _, buffer, shift = circular_layout(signal, n_buffer, delta_t, float(settings["memory_taper_duration"]), 0.0)
    parts = to_frequency_domain(buffer / values["luminosity_distance"], delta_t, shift, frequency_array)
    return {"plus": oscillatory["plus"], "cross": oscillatory["cross"], "memory_plus": parts["plus"],
            "memory_cross": parts["cross"]}


def signal_parts(frequency_array, cache=None, **parameters) -> dict:
    """:func:`.source.signal_parts` for every model: frequency-domain mode models here, the others there."""
    settings = {k: parameters.get(k, v) for k, v in _SETTINGS.items()}
    if not is_frequency_domain(settings["waveform_approximant"]):
        return time_domain_parts(frequency_array, cache=cache, **parameters)
    if not float(parameters.get("luminosity_distance", 0.0)) > 0:
        raise WaveformError("the luminosity distance must be positive")
    values = {k: float(parameters.get(k, 0.0)) for k in _INTRINSIC}
    if cache is None:
        return frequency_parts(frequency_array, parameters, dict(parameters, **settings), values, None)
    key = (tuple(values.values()), tuple((k, str(v)) for k, v in settings.items()), frequency_array.size,
           float(frequency_array[-1]))
    return cache._recall(cache.parts, key, lambda: frequency_parts(frequency_array, parameters,
                                                                    dict(parameters, **settings), values, cache),
                         cache.parts_size)
