"""SEOBNRv5PHM and SEOBNRv5HM through the pyseobnr package (optional extra ``seobnr``): inertial-frame modes.

lalsimulation routes these models only through its Python ``gwsignal`` interface, which calls pyseobnr's
``GenerateWaveform``; bilby's ``gwsignal_binary_black_hole`` takes its frequency-domain polarizations, which pyseobnr
makes as lalsimulation's ``SimInspiralFD`` does (lowered start, ``SimInspiralTDConditionStage1``/``2``). Its modes are
in lalsimulation's convention: with ``phi_ref = 0`` they summed at ``(inclination, pi/2 - phase)`` give its
polarizations (pinned by tests/waveform/models/test_pyseobnr_modes.py against bilby's own model, 4e-9 relative with
aligned spins, 3e-10 precessing). Times are seconds from the model's peak.
"""
from __future__ import annotations

import functools
import math

import numpy as np

from ...common.errors import WaveformError
from .series import ModeSeries

MODELS = ("SEOBNRv5PHM", "SEOBNRv5HM")
PRECESSING = ("SEOBNRv5PHM",)
INSTALL_HINT = ("install the optional extra with scripts/install_seobnr.sh (Debian's libgsl-dev for the GSL headers, "
                "then pip install '.[seobnr]' with setuptools below 80 for the build)")


@functools.lru_cache(maxsize=1)
def _generator():
    """pyseobnr's ``GenerateWaveform``, imported once (its first import compiles for about a minute)."""
    try:
        from pyseobnr.generate_waveform import GenerateWaveform
    except ImportError:
        return None
    return GenerateWaveform


def available() -> bool:
    return _generator() is not None


def require(approximant: str) -> None:
    """One sentence when pyseobnr is missing."""
    if not available():
        raise WaveformError(f"waveform model '{approximant}' needs the pyseobnr package, which is not installed here; "
                            + INSTALL_HINT)


def seobnr_modes(approximant, mass_1, mass_2, luminosity_distance, delta_t, minimum_frequency, spin_1, spin_2,
                 reference_frequency, mode_list=None) -> ModeSeries:
    """Modes at phi_ref = 0 in lalsimulation's convention, starting at ``minimum_frequency`` (Hz) on the step
    ``delta_t`` (s), spins at ``reference_frequency``."""
    require(approximant)
    spin_1, spin_2 = np.asarray(spin_1, float), np.asarray(spin_2, float)
    if not (mass_1 > 0 and mass_2 > 0 and luminosity_distance > 0):
        raise WaveformError("masses and luminosity distance must be positive")
    for label, spin in (("first", spin_1), ("second", spin_2)):
        if not np.all(np.isfinite(spin)) or math.sqrt(float(spin @ spin)) > 1:
            raise WaveformError(f"the {label} spin has magnitude above 1 or is not a number")
    aligned = bool(max(abs(spin_1[0]), abs(spin_1[1]), abs(spin_2[0]), abs(spin_2[1])) <= 1e-8)
    if approximant not in PRECESSING and not aligned:
        raise WaveformError(f"waveform model '{approximant}' takes aligned spins only; set the in-plane spins to zero "
                            "or choose SEOBNRv5PHM")
    parameters = dict(mass1=float(mass_1), mass2=float(mass_2), spin1x=float(spin_1[0]), spin1y=float(spin_1[1]),
                      spin1z=float(spin_1[2]), spin2x=float(spin_2[0]), spin2y=float(spin_2[1]),
                      spin2z=float(spin_2[2]), distance=float(luminosity_distance), inclination=0.0, phi_ref=0.0,
                      f22_start=float(minimum_frequency), f_ref=float(reference_frequency), deltaT=float(delta_t),
                      approximant=approximant)  # as bilby's gwsignal route passes them (heavier body first)
    if mode_list:
        parameters["ModeArray"] = [tuple(int(x) for x in mode) for mode in mode_list if int(mode[1]) > 0]
    try:
        times, modes = _generator()(parameters).generate_td_modes()
    except Exception as error:  # pyseobnr raises plain Python errors (ValueError, RuntimeError, ...)
        detail = (str(error).strip().splitlines() or [type(error).__name__])[0].rstrip(".")
        raise WaveformError(f"waveform model '{approximant}' could not generate masses {mass_1:g} and {mass_2:g} "
                            f"solar masses with these settings ({detail})") from None
    modes = {(int(l), int(m)): np.asarray(value, dtype=complex) for (l, m), value in modes.items()}
    if mode_list:
        wanted = {tuple(int(x) for x in mode) for mode in mode_list}
        modes = {key: value for key, value in modes.items() if key in wanted}
    total = mass_1 + mass_2
    return ModeSeries(times=np.asarray(times, dtype=float), modes=modes, total_mass=total,
                      luminosity_distance=luminosity_distance, symmetric_mass_ratio=mass_1 * mass_2 / total ** 2,
                      approximant=approximant, aligned_spins=aligned)
