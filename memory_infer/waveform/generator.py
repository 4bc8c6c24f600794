"""bilby's ``WaveformGenerator`` for the memory source model, handing out the oscillatory and memory
parts separately and counting the waveforms that failed.

The likelihood needs both parts at each point (ln L is quadratic in the memory amplitude A), so
:meth:`MemoryWaveformGenerator.parts` returns them from one evaluation; ``frequency_domain_strain``
keeps bilby's interface (oscillatory + A x memory). Caches belong to the generator instance.
"""
from __future__ import annotations

import logging

import bilby

from ..common.errors import WaveformError
from .source import SourceCache, combined
from .source_model import memory_binary_black_hole, signal_parts

logger = logging.getLogger("memory_infer")


class MemoryWaveformGenerator(bilby.gw.WaveformGenerator):
    """A ``WaveformGenerator`` around :func:`memory_binary_black_hole` with its own caches.

    ``failures`` counts waveforms that failed and were handed to bilby as None (zero likelihood);
    that happens only with ``catch_waveform_errors`` in the waveform arguments, otherwise the
    error is raised.
    """

    def __init__(self, duration, sampling_frequency, start_time, waveform_arguments):
        super().__init__(duration=duration, sampling_frequency=sampling_frequency, start_time=start_time,
                         frequency_domain_source_model=memory_binary_black_hole,
                         parameter_conversion=bilby.gw.conversion.convert_to_lal_binary_black_hole_parameters,
                         waveform_arguments=dict(waveform_arguments))
        self.source_cache = SourceCache()
        self.failures = 0

    def __getstate__(self):  # caches stay behind when the generator goes to another process
        state = self.__dict__.copy()
        state["source_cache"] = SourceCache()
        return state

    def parts(self, parameters, raise_errors: bool = False) -> tuple[dict, dict] | tuple[None, None]:
        """(oscillatory, memory) polarizations at bilby ``parameters``; (None, None) for a caught failure
        (``raise_errors`` raises it instead)."""
        return self._parts(self._format_parameters(dict(parameters, memory_amplitude=0.0)), raise_errors)

    def _parts(self, formatted: dict, raise_errors: bool = False):
        """:meth:`parts` for parameters already converted and completed by ``_format_parameters``."""
        try:
            parts = signal_parts(self.frequency_array, cache=self.source_cache, **formatted)
        except WaveformError as error:
            if raise_errors or not formatted.get("catch_waveform_errors", False):
                raise
            self.failures += 1
            logger.debug("waveform failed, likelihood set to zero: %s", error)
            return None, None
        return ({"plus": parts["plus"], "cross": parts["cross"]},
                {"plus": parts["memory_plus"], "cross": parts["memory_cross"]})

    def _strain_from_model(self, model_data_points, model, parameters):
        if model is not memory_binary_black_hole:
            return super()._strain_from_model(model_data_points, model, parameters)
        oscillatory, memory = self._parts(parameters)  # bilby has converted the parameters already
        if oscillatory is None:
            return None
        return combined(oscillatory, memory, float(parameters.get("memory_amplitude", 1.0)))


def waveform_generator(duration, sampling_frequency, start_time, waveform_arguments) -> MemoryWaveformGenerator:
    """The memory model's generator for a segment (``waveform_arguments`` as for :func:`memory_binary_black_hole`)."""
    return MemoryWaveformGenerator(duration, sampling_frequency, start_time, waveform_arguments)


def segment_note(generator: MemoryWaveformGenerator, band_start: float, parameters: dict) -> str | None:
    """One sentence when the generator's segment is too short for the binary's in-band inspiral, else None."""
    from .source_model import segment_note as note

    formatted = generator._format_parameters(dict(parameters, memory_amplitude=0.0))
    return note(generator.frequency_array, band_start, cache=generator.source_cache, **formatted)


__all__ = ["MemoryWaveformGenerator", "waveform_generator", "segment_note"]
