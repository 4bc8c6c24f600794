"""lalsimulation ``SimInspiralChooseTDModes`` adapter, with clear errors instead of XLAL tracebacks."""
from __future__ import annotations

import functools

import numpy as np

from ...common.errors import WaveformError
from .lal_call import call, checked_binary, lal_modules, quiet, walk, waveform_dictionary
from .series import MEGAPARSEC_METRES, ModeSeries

# TaylorT4's (l, 0) modes carry the post-Newtonian memory already; drop them so it is not counted twice.
DROP_MEMORY_MODES = {"TaylorT4"}


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
    _, lalsim = lal_modules()
    if approximant in PYSEOBNR_MODELS:
        _refuse_pyseobnr(approximant)
    try:
        with quiet():
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
    _, lalsim = lal_modules()
    support = lalsim.SimInspiralGetSpinSupportFromApproximant(approximant_number(approximant))
    names = {lalsim.SIM_INSPIRAL_PRECESSINGSPIN: "precessing", lalsim.SIM_INSPIRAL_ALIGNEDSPIN: "aligned",
             lalsim.SIM_INSPIRAL_SINGLESPIN: "single"}
    return names.get(support, "spinless")


def choose_td_modes(approximant, mass_1, mass_2, luminosity_distance, delta_t, minimum_frequency,
                    spin_1, spin_2, reference_frequency, mode_list=None) -> ModeSeries:
    """Modes at phi_ref = 0 in lalsimulation's frame; t = 0 at the model's peak."""
    lal, lalsim = lal_modules()
    spin_1, spin_2, aligned = checked_binary(approximant, mass_1, mass_2, luminosity_distance, spin_1, spin_2)
    number = approximant_number(approximant)
    arguments = (0.0, delta_t, mass_1 * lal.MSUN_SI, mass_2 * lal.MSUN_SI, *spin_1, *spin_2, minimum_frequency,
                 reference_frequency, luminosity_distance * MEGAPARSEC_METRES, waveform_dictionary(mode_list), 5,
                 number)
    modes, times = {}, None
    for key, series in walk(call(lalsim.SimInspiralChooseTDModes, arguments, approximant, mass_1, mass_2)):
        data = np.array(series.data.data, dtype=complex)
        if times is None:
            times = float(series.epoch) + np.arange(data.size) * series.deltaT
        if not (approximant in DROP_MEMORY_MODES and key[1] == 0):
            modes[key] = data
    if mode_list:
        modes = {k: v for k, v in modes.items() if k in {tuple(x) for x in mode_list}}
    if aligned:  # models that return only m >= 0: fill m < 0 by h_{l,-m} = (-1)^l conj(h_lm)
        for (l, m), data in list(modes.items()):
            if m > 0 and (l, -m) not in modes:
                modes[(l, -m)] = (-1) ** l * np.conj(data)
    total = mass_1 + mass_2
    return ModeSeries(times=times, modes=modes, total_mass=total, luminosity_distance=luminosity_distance,
                      symmetric_mass_ratio=mass_1 * mass_2 / total ** 2, approximant=approximant,
                      aligned_spins=aligned)

