"""lalsimulation ``SimInspiralChooseTDModes`` adapter, with clear errors instead of XLAL tracebacks."""
from __future__ import annotations

import contextlib
import functools
import io
import math

import numpy as np

from ...common.errors import WaveformError
from .series import MEGAPARSEC_METRES, ModeSeries

SURROGATE_HINT = ("needs lalsimulation's downloadable data files (surrogate or ROM tables), which are "
                  "not available on this machine; use IMRPhenomTHM or IMRPhenomTPHM instead")
# TaylorT4's (l, 0) modes carry the post-Newtonian memory already; drop them so it is not counted twice.
DROP_MEMORY_MODES = {"TaylorT4"}


@functools.lru_cache(maxsize=1)
def _lal():
    """(lal, lalsimulation), imported on first use (importing them takes a second; looking them up each call
    took 0.1 ms, a twentieth of a mode generation)."""
    import lal
    import lalsimulation

    return lal, lalsimulation


@contextlib.contextmanager
def _quiet(capture: io.StringIO | None):
    """Silence XLAL's messages (fast path), or capture them into ``capture`` (slow, for errors)."""
    import lal

    level = lal.GetDebugLevel()
    if capture is None:
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


# models of the pyseobnr package: SEOBNRv5PHM and SEOBNRv5HM run through .pyseobnr_modes, the eccentric one does not run
PYSEOBNR_MODELS = ("SEOBNRv5PHM", "SEOBNRv5HM", "SEOBNRv5EHM")


def _refuse_pyseobnr(approximant: str) -> None:
    from .pyseobnr_modes import INSTALL_HINT, MODELS

    if approximant in MODELS:
        raise WaveformError(f"waveform model '{approximant}' runs through the pyseobnr package, not lalsimulation's "
                            f"mode functions; if it is missing, {INSTALL_HINT}")
    raise WaveformError(f"waveform model '{approximant}' (eccentric) is not supported; use SEOBNRv5PHM or "
                        "IMRPhenomXPHM instead")


@functools.lru_cache(maxsize=32)  # refusals raise and are not kept
def approximant_number(approximant: str) -> int:
    _, lalsim = _lal()
    if approximant in PYSEOBNR_MODELS:
        _refuse_pyseobnr(approximant)
    try:
        with _quiet(None):
            number = lalsim.GetApproximantFromString(str(approximant))
    except RuntimeError:
        raise WaveformError(f"unknown waveform model '{approximant}'; try IMRPhenomTHM, IMRPhenomTPHM, "
                            "SEOBNRv4PHM or TaylorT4") from None
    if not lalsim.SimInspiralImplementedTDApproximants(number):
        raise WaveformError(f"waveform model '{approximant}' has no time-domain modes in lalsimulation; "
                            "try IMRPhenomTHM, IMRPhenomTPHM, SEOBNRv4PHM or TaylorT4")
    return number


def spin_support(approximant: str) -> str:
    """"precessing", "aligned", "single", or "spinless": which spins lalsimulation's model takes."""
    _, lalsim = _lal()
    support = lalsim.SimInspiralGetSpinSupportFromApproximant(approximant_number(approximant))
    names = {lalsim.SIM_INSPIRAL_PRECESSINGSPIN: "precessing", lalsim.SIM_INSPIRAL_ALIGNEDSPIN: "aligned",
             lalsim.SIM_INSPIRAL_SINGLESPIN: "single"}
    return names.get(support, "spinless")


def choose_td_modes(approximant, mass_1, mass_2, luminosity_distance, delta_t, minimum_frequency,
                    spin_1, spin_2, reference_frequency, mode_list=None) -> ModeSeries:
    """Modes at phi_ref = 0 in lalsimulation's frame; t = 0 at the model's peak."""
    lal, lalsim = _lal()
    spin_1, spin_2 = np.asarray(spin_1, float), np.asarray(spin_2, float)
    if not (mass_1 > 0 and mass_2 > 0 and luminosity_distance > 0):
        raise WaveformError("masses and luminosity distance must be positive")
    for label, spin in (("first", spin_1), ("second", spin_2)):
        x, y, z = (float(value) for value in spin)
        if not (math.isfinite(x) and math.isfinite(y) and math.isfinite(z)) or math.sqrt(x * x + y * y + z * z) > 1:
            raise WaveformError(f"the {label} spin has magnitude above 1 or is not a number")
    number = approximant_number(approximant)
    params = waveform_dictionary(mode_list)
    arguments = (0.0, delta_t, mass_1 * lal.MSUN_SI, mass_2 * lal.MSUN_SI, *spin_1, *spin_2, minimum_frequency,
                 reference_frequency, luminosity_distance * MEGAPARSEC_METRES, params, 5, number)
    try:
        with _quiet(None):
            linked = lalsim.SimInspiralChooseTDModes(*arguments)
    except RuntimeError:
        capture = io.StringIO()  # run again with XLAL's messages captured, to explain the failure
        try:
            with _quiet(capture):
                lalsim.SimInspiralChooseTDModes(*arguments)
        except RuntimeError as error:
            raise WaveformError(_explain(approximant, capture.getvalue(), error, mass_1, mass_2)) from None
        raise WaveformError(f"waveform model '{approximant}' failed once and then succeeded; "
                            "lalsimulation is in an inconsistent state") from None
    modes, times = {}, None
    while linked is not None:
        series = linked.mode
        data = np.array(series.data.data, dtype=complex)
        if times is None:
            times = float(series.epoch) + np.arange(data.size) * series.deltaT
        if not (approximant in DROP_MEMORY_MODES and linked.m == 0):
            modes[(int(linked.l), int(linked.m))] = data
        linked = linked.next
    if mode_list:
        modes = {k: v for k, v in modes.items() if k in {tuple(x) for x in mode_list}}
    aligned = bool(max(abs(spin_1[0]), abs(spin_1[1]), abs(spin_2[0]), abs(spin_2[1])) <= 1e-8)  # as np.allclose
    if aligned:  # models that return only m >= 0: fill m < 0 by h_{l,-m} = (-1)^l conj(h_lm)
        for (l, m), data in list(modes.items()):
            if m > 0 and (l, -m) not in modes:
                modes[(l, -m)] = (-1) ** l * np.conj(data)
    total = mass_1 + mass_2
    return ModeSeries(times=times, modes=modes, total_mass=total, luminosity_distance=luminosity_distance,
                      symmetric_mass_ratio=mass_1 * mass_2 / total ** 2, approximant=approximant,
                      aligned_spins=aligned)


def _explain(approximant, log, error, mass_1, mass_2) -> str:
    text = log.lower()
    if any(word in text for word in ("data file", "lal_data_path", "i/o error", "surrogate data")):
        return f"waveform model '{approximant}' {SURROGATE_HINT}"
    if "non-spinning approximant" in text:
        return f"waveform model '{approximant}' does not take spins; set the spins to zero or choose another model"
    last = [line for line in log.splitlines() if line.startswith("XLAL Error")]
    detail = last[0].split("):", 1)[-1].strip() if last else str(error)
    return (f"waveform model '{approximant}' could not generate masses {mass_1:g} and {mass_2:g} solar masses "
            f"with these settings ({detail.rstrip('.')})")


def waveform_dictionary(mode_list=None):
    """lalsimulation's waveform-parameter dictionary, with a mode array restricting the modes when given."""
    import lal
    import lalsimulation as lalsim

    params = lal.CreateDict()
    if mode_list:
        array = lalsim.SimInspiralCreateModeArray()
        for l, m in mode_list:
            lalsim.SimInspiralModeArrayActivateMode(array, int(l), int(m))
        lalsim.SimInspiralWaveformParamsInsertModeArray(params, array)
    return params
