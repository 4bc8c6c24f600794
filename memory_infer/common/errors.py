"""The one exception type users see: a plain sentence, no traceback."""


class MemoryInferError(Exception):
    """Bad input or an impossible request; the message is one sentence for the user."""


class WaveformError(MemoryInferError):
    """A waveform model could not produce this binary (range, data files, segment too short)."""
