"""bilby's boundary: the source model bilby calls with ``(frequency_array, **parameters)``.

bilby's parameter dictionary is read once here into a :class:`.options.Binary` and :class:`.options.SourceOptions`,
which key the generator's cache; the model's domain is looked up once (:mod:`.models.registry`) and the parts come
from :mod:`.source` (time-domain models) or :mod:`.frequency_source` (frequency-domain mode models).
"""
from __future__ import annotations

import logging

import numpy as np

from ..common.errors import WaveformError
from .frequency_source import frequency_parts
from .models.registry import is_frequency_domain
from .options import Binary, SourceOptions
from .source import (SourceCache, combined, segment_geometry, time_domain_modes, time_domain_parts,
                     truncated_start_frequency)

logger = logging.getLogger("memory_infer")


def signal_parts(frequency_array, cache: SourceCache | None = None, **parameters) -> dict:
    """Frequency-domain oscillatory (``plus``, ``cross``) and memory (``memory_plus``, ``memory_cross``) parts for
    bilby's binary-black-hole parameters, SI at the distance; with a ``cache`` (one per generator) the last few
    results and modes are reused."""
    binary, options = Binary.of(parameters), SourceOptions.of(parameters)
    if not binary.luminosity_distance > 0:
        raise WaveformError("the luminosity distance must be positive")
    parts = frequency_parts if is_frequency_domain(options.approximant) else time_domain_parts
    if cache is None:
        return parts(frequency_array, binary, options, None)
    key = (binary, options, frequency_array.size, float(frequency_array[-1]))
    return cache.recall_parts(key, lambda: parts(frequency_array, binary, options, cache))


def signal_strain(frequency_array, amplitude: float, cache: SourceCache | None = None, **parameters) -> dict:
    """Frequency-domain ``plus`` and ``cross`` of the oscillatory signal plus ``amplitude`` x memory (the parts
    of :func:`signal_parts` combined; parts already in ``cache`` are reused)."""
    parts = signal_parts(frequency_array, cache=cache, **parameters)
    return combined({"plus": parts["plus"], "cross": parts["cross"]},
                    {"plus": parts["memory_plus"], "cross": parts["memory_cross"]}, amplitude)


def memory_binary_black_hole(frequency_array, mass_1, mass_2, luminosity_distance, a_1, tilt_1, phi_12,
                             a_2, tilt_2, phi_jl, theta_jn, phase, memory_amplitude=1.0, **waveform_kwargs):
    """bilby frequency-domain source model: oscillatory signal plus ``memory_amplitude`` x memory.

    ``memory_amplitude`` = 1 is general relativity, 0 no memory, -1 the flipped sign. Waveform
    arguments: ``waveform_approximant`` (default IMRPhenomTHM), ``reference_frequency``,
    ``minimum_frequency``, ``memory_taper_duration`` (s), ``early_inspiral_memory`` (bool),
    ``mode_list`` (list of (l, m)), ``include_memory`` (False skips the memory altogether). Use it in
    ``bilby.gw.WaveformGenerator``.
    """
    parameters = dict(mass_1=mass_1, mass_2=mass_2, luminosity_distance=luminosity_distance, a_1=a_1,
                      tilt_1=tilt_1, phi_12=phi_12, a_2=a_2, tilt_2=tilt_2, phi_jl=phi_jl,
                      theta_jn=theta_jn, phase=phase, **waveform_kwargs)
    try:
        return signal_strain(np.asarray(frequency_array), float(memory_amplitude), **parameters)
    except WaveformError as error:
        if waveform_kwargs.get("catch_waveform_errors", False):
            logger.debug("waveform failed, likelihood set to zero: %s", error)
            return None
        raise


def segment_note(frequency_array, band_start: float, cache: SourceCache | None = None, **parameters) -> str | None:
    """One sentence when the segment is too short to hold the model's in-band inspiral, else None."""
    n_buffer, _ = segment_geometry(frequency_array)
    binary, options = Binary.of(parameters), SourceOptions.of(parameters)
    if is_frequency_domain(options.approximant):
        return None  # the model's own frequency-domain signal; the memory keeps what a dropped start accumulated
    _, series, _ = time_domain_modes(frequency_array, binary, options, cache)
    start = truncated_start_frequency(series, n_buffer, options.taper_duration)
    if start is None or start <= band_start:
        return None
    return (f"the {n_buffer * series.delta_t:g} s segment is too short for this binary: the model's inspiral below "
            f"{start:.1f} Hz is dropped although the analysis starts at {band_start:g} Hz (the memory keeps "
            "what that part accumulated); use a longer segment")
