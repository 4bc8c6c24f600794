"""Noise curves, detectors and networks from bilby's bundled files, under our own short names.

The one place that knows bilby's multi-interferometer detectors: bilby builds "ET" as three interferometers ET1,
ET2 and ET3 (its ``TriangularInterferometer``), so every per-detector setting (noise curve, calibration file, data
file) is given under the detector's bilby name and applies to each of its interferometers, or under one
interferometer's name for that one alone. Keys that name no detector of the analysis are refused.
"""
from __future__ import annotations

import os
import types
from functools import lru_cache

import numpy as np

from ..common.errors import MemoryInferError, close_match

# our name -> (bilby file, what it is)
NOISE_CURVES = {
    "ligo-o4": ("aLIGO_O4_high_asd.txt", "second generation, O4-like LIGO"),
    "ligo-design": ("aLIGO_ZERO_DET_high_P_asd.txt", "second generation, LIGO at design"),
    "virgo-design": ("AdV_asd.txt", "second generation, Virgo at design"),
    "kagra-design": ("KAGRA_design_asd.txt", "second generation, KAGRA at design"),
    "aplus": ("Aplus_asd.txt", "LIGO A+"),
    "et-d": ("ET_D_asd.txt", "third generation, Einstein Telescope ET-D"),
    "ce": ("CE_asd.txt", "third generation, Cosmic Explorer"),
}
# our network name -> [(bilby detector, noise curve)]
NETWORKS = {
    "hl-o4": [("H1", "ligo-o4"), ("L1", "ligo-o4")],
    "hlv-design": [("H1", "ligo-design"), ("L1", "ligo-design"), ("V1", "virgo-design")],
    "hl-design": [("H1", "ligo-design"), ("L1", "ligo-design")],
    "hlv-aplus": [("H1", "aplus"), ("L1", "aplus"), ("V1", "virgo-design")],
    "et": [("ET", "et-d")],
    "ce": [("CE", "ce")],
    "ce-et": [("CE", "ce"), ("ET", "et-d")],
}


def noise_curve_path(name: str) -> str:
    if name not in NOISE_CURVES:
        raise MemoryInferError(f"unknown noise curve '{name}'; choose one of {', '.join(NOISE_CURVES)}")
    import bilby

    return os.path.join(os.path.dirname(bilby.__file__), "gw", "detector", "noise_curves", NOISE_CURVES[name][0])


def power_spectral_density(name: str):
    """A bilby ``PowerSpectralDensity`` from one of our named noise curves."""
    import bilby

    return bilby.gw.detector.PowerSpectralDensity(asd_file=noise_curve_path(name))


def psd_values(name: str, frequencies) -> np.ndarray:
    """PSD at ``frequencies`` (inf outside the curve's range)."""
    return power_spectral_density(name).power_spectral_density_interpolated(np.asarray(frequencies))


def optimal_snr(strain_fd, psd, frequencies, minimum_frequency: float, maximum_frequency: float | None = None):
    """``sqrt(4 df sum |h|^2 / S)`` over the band (the noise-weighted norm)."""
    frequencies = np.asarray(frequencies)
    df = frequencies[1] - frequencies[0]
    top = frequencies[-1] if maximum_frequency is None else maximum_frequency
    band = (frequencies >= minimum_frequency) & (frequencies <= top) & np.isfinite(psd) & (psd > 0)
    return float(np.sqrt(4 * df * np.sum(np.abs(strain_fd[band]) ** 2 / psd[band])))


@lru_cache(maxsize=1)
def known_detectors():
    """Every detector bilby defines (its ``detectors/*.interferometer`` files), each with the names of its
    interferometers as bilby builds them (``ET`` -> ``ET1``, ``ET2``, ``ET3``; ``H1`` -> ``H1``)."""
    import bilby

    folder = os.path.join(os.path.dirname(bilby.gw.detector.__file__), "detectors")
    out = {}
    for file in sorted(os.listdir(folder)):
        if file.endswith(".interferometer"):
            name = file[: -len(".interferometer")]
            built = bilby.gw.detector.get_empty_interferometer(name)
            out[name] = tuple(i.name for i in built) if isinstance(built, list) else (built.name,)
    return types.MappingProxyType(out)  # read only: every caller shares it


def interferometers_of(detector: str) -> tuple:
    """The names of bilby's interferometers for one bilby detector name."""
    known = known_detectors()
    if detector not in known:
        raise MemoryInferError(f"unknown detector '{detector}'; use one of bilby's: {', '.join(known)}")
    return known[detector]


def detector_of(name: str) -> str:
    """The bilby detector an interferometer (or detector) name belongs to (``ET2`` -> ``ET``)."""
    for detector, members in known_detectors().items():
        if name == detector or name in members:
            return detector
    raise MemoryInferError(f"unknown detector '{name}'; use one of bilby's: {', '.join(known_detectors())}")


def per_interferometer(table: dict, detectors, what: str) -> dict:
    """A per-detector ``table`` spread over the interferometers of ``detectors`` (bilby names).

    A key that is a detector's name applies to each of its interferometers; a key that is one interferometer's
    name (``ET1``) applies to that one and, for tables of settings, is merged over its detector's entry. Any other
    key is refused in one sentence naming ``what`` the table is."""
    detectors = list(detectors)
    members = {name: detector for detector in detectors for name in interferometers_of(detector)}
    out = {}
    for key in table:
        if key not in detectors and key not in members:
            hint = close_match(str(key), list(detectors) + list(members))
            raise MemoryInferError(f"{what} names '{key}', which is not a detector of this analysis ("
                                   f"{', '.join(detectors)}){hint}")
    for detector in detectors:
        for name in interferometers_of(detector):
            value = table.get(detector)
            if name != detector and name in table:
                own = table[name]
                value = {**value, **own} if isinstance(value, dict) and isinstance(own, dict) else own
            if value is not None:
                out[name] = value
    return out


def empty_detectors(names):
    """bilby's interferometers for bilby detector names (ET gives three), without data."""
    import bilby

    for name in names:
        interferometers_of(str(name))
    return bilby.gw.detector.InterferometerList(list(names))


def configured_detectors(names, noise_curves: dict, default_curve: str | None, minimum_frequency: float,
                         maximum_frequency: float | None = None):
    """bilby's interferometers for ``names`` with each one's noise curve (``noise_curves`` by detector or
    interferometer name, ``default_curve`` otherwise) and the band, set on every interferometer."""
    curves = per_interferometer(noise_curves, names, "noise_curves")
    for name, curve in curves.items():
        if curve not in NOISE_CURVES:
            raise MemoryInferError(f"unknown noise curve '{curve}' for {name}; choose one of {', '.join(NOISE_CURVES)}")
    detectors = empty_detectors(names)
    for detector in detectors:
        detector.power_spectral_density = power_spectral_density(curves.get(detector.name, default_curve))
        detector.minimum_frequency = float(minimum_frequency)
        if maximum_frequency:
            detector.maximum_frequency = float(maximum_frequency)
    return detectors


def network_detectors(name: str, minimum_frequency: float, maximum_frequency: float | None = None):
    """A named network's interferometers (ET as its three), each with its detector's noise curve and the band."""
    members = network(name)
    return configured_detectors([detector for detector, _ in members], dict(members), None,
                                minimum_frequency, maximum_frequency)


def network(name: str):
    if name not in NETWORKS:
        raise MemoryInferError(f"unknown network '{name}'; choose one of {', '.join(NETWORKS)}")
    return NETWORKS[name]
