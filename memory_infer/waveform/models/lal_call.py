"""One way to call lalsimulation: its modules, a quiet call that explains a failure in one sentence, the walk of its
linked list of modes, its mode-array dictionary, and the checks of a binary every model shares (masses, distance,
|chi| <= 1, aligned spins)."""
from __future__ import annotations

import contextlib
import functools
import io
import math

import numpy as np

from ...common.errors import WaveformError

EXTRA_TIME_FRACTION, EXTRA_CYCLES = 0.1, 3.0  # lalsimulation's SimInspiralTD and SimInspiralFD conditioning
SURROGATE_HINT = ("needs lalsimulation's downloadable data files (surrogate or ROM tables), which are "
                  "not available on this machine; use IMRPhenomTHM or IMRPhenomTPHM instead")


@functools.lru_cache(maxsize=1)
def lal_modules():
    """(lal, lalsimulation), imported on first use (importing them takes a second; looking them up each call
    took 0.1 ms, a twentieth of a mode generation)."""
    import lal
    import lalsimulation

    return lal, lalsimulation


@contextlib.contextmanager
def quiet(capture: io.StringIO | None = None):
    """Silence XLAL's messages (fast path), or capture them into ``capture`` (slow, for errors)."""
    lal, _ = lal_modules()
    if capture is None:
        level = lal.GetDebugLevel()
        lal.ClobberDebugLevel(0)
        try:
            yield
        finally:
            lal.ClobberDebugLevel(level)
        return
    lal.swig_redirect_standard_output_error(True)
    try:
        with contextlib.redirect_stderr(capture):
            yield
    finally:
        lal.swig_redirect_standard_output_error(False)


def call(function, arguments: tuple, approximant: str, mass_1: float, mass_2: float):
    """``function(*arguments)`` with XLAL silenced; on failure it runs again with XLAL's messages captured and
    raises a :class:`WaveformError` that explains them in one sentence."""
    try:
        with quiet():
            return function(*arguments)
    except RuntimeError:
        capture = io.StringIO()
        try:
            with quiet(capture):
                function(*arguments)
        except RuntimeError as error:
            raise WaveformError(explain(approximant, capture.getvalue(), error, mass_1, mass_2)) from None
        raise WaveformError(f"waveform model '{approximant}' failed once and then succeeded; "
                            "lalsimulation is in an inconsistent state") from None


def explain(approximant, log, error, mass_1, mass_2) -> str:
    """One sentence for a failed lalsimulation call from its XLAL messages ``log``."""
    text = log.lower()
    if any(word in text for word in ("data file", "lal_data_path", "i/o error", "surrogate data")):
        return f"waveform model '{approximant}' {SURROGATE_HINT}"
    if "non-spinning approximant" in text:
        return f"waveform model '{approximant}' does not take spins; set the spins to zero or choose another model"
    last = [line for line in log.splitlines() if line.startswith("XLAL Error")]
    detail = last[0].split("):", 1)[-1].strip() if last else str(error)
    return (f"waveform model '{approximant}' could not generate masses {mass_1:g} and {mass_2:g} solar masses "
            f"with these settings ({detail.rstrip('.')})")


def walk(linked):
    """``((l, m), series)`` of each node of lalsimulation's linked list of modes, in its order."""
    while linked is not None:
        yield (int(linked.l), int(linked.m)), linked.mode
        linked = linked.next


def waveform_dictionary(mode_list=None):
    """lalsimulation's waveform-parameter dictionary, with a mode array restricting the modes when given."""
    lal, lalsim = lal_modules()
    params = lal.CreateDict()
    if mode_list:
        array = lalsim.SimInspiralCreateModeArray()
        for l, m in mode_list:
            lalsim.SimInspiralModeArrayActivateMode(array, int(l), int(m))
        lalsim.SimInspiralWaveformParamsInsertModeArray(params, array)
    return params


def conditioning_bounds(mass_1, mass_2, spin_1z, spin_2z, frequency, merger_in_start: bool):
    """(chirp, merger, extra, start) as lalsimulation's ``SimInspiralTD`` (``merger_in_start``) and ``SimInspiralFD``
    bound them (s, Hz; masses in solar masses): the chirp time bound from ``frequency``, the merger and ringdown
    bounds, ``EXTRA_CYCLES`` cycles at ``frequency``, and the start frequency whose chirp time bound is
    ``(1 + EXTRA_TIME_FRACTION) chirp + extra`` (plus the merger for ``SimInspiralTD``)."""
    lal, lalsim = lal_modules()
    m1, m2 = mass_1 * lal.MSUN_SI, mass_2 * lal.MSUN_SI
    chirp = lalsim.SimInspiralChirpTimeBound(frequency, m1, m2, spin_1z, spin_2z)
    final_spin = lalsim.SimInspiralFinalBlackHoleSpinBound(spin_1z, spin_2z)
    merger = lalsim.SimInspiralMergeTimeBound(m1, m2) + lalsim.SimInspiralRingdownTimeBound(m1 + m2, final_spin)
    extra = EXTRA_CYCLES / frequency
    span = (1 + EXTRA_TIME_FRACTION) * chirp
    span = span + merger + extra if merger_in_start else span + extra
    return chirp, merger, extra, lalsim.SimInspiralChirpStartFrequencyBound(span, m1, m2)


def checked_binary(approximant: str, mass_1, mass_2, luminosity_distance, spin_1, spin_2,
                   precessing: bool | None = None, alternative: str = ""):
    """(spin_1, spin_2 as float arrays, aligned): refuses masses or distance that are not positive, a spin of
    magnitude above 1 or not a number, and in-plane spins for a model that takes aligned spins only
    (``precessing`` False; ``alternative`` names a model that takes them). Aligned: in-plane components below
    1e-8 (as ``np.allclose``)."""
    spin_1, spin_2 = np.asarray(spin_1, float), np.asarray(spin_2, float)
    if not (mass_1 > 0 and mass_2 > 0 and luminosity_distance > 0):
        raise WaveformError("masses and luminosity distance must be positive")
    for label, spin in (("first", spin_1), ("second", spin_2)):
        x, y, z = (float(value) for value in spin)
        if not (math.isfinite(x) and math.isfinite(y) and math.isfinite(z)) or math.sqrt(x * x + y * y + z * z) > 1:
            raise WaveformError(f"the {label} spin has magnitude above 1 or is not a number")
    aligned = bool(max(abs(spin_1[0]), abs(spin_1[1]), abs(spin_2[0]), abs(spin_2[1])) <= 1e-8)
    if precessing is False and not aligned:
        raise WaveformError(f"waveform model '{approximant}' takes aligned spins only; set the in-plane spins to zero "
                            f"or choose {alternative}")
    return spin_1, spin_2, aligned
