"""The one exception type users see: a plain sentence, no traceback; and the sentence's "did you mean" hint."""


class MemoryInferError(Exception):
    """Bad input or an impossible request; the message is one sentence for the user."""


class WaveformError(MemoryInferError):
    """A waveform model could not produce this binary (range, data files, segment too short)."""


def close_match(word: str, choices) -> str:
    """`` (did you mean 'X'?)`` for the closest of ``choices`` to a misspelled ``word``, else empty."""
    import difflib

    lowered = {str(choice).lower(): str(choice) for choice in choices}
    found = difflib.get_close_matches(str(word).lower(), list(lowered), n=1, cutoff=0.6)
    return f" (did you mean '{lowered[found[0]]}'?)" if found else ""
