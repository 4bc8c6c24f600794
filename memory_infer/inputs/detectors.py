"""Noise curves and networks from bilby's bundled files, under our own short names."""
from __future__ import annotations

import os

import numpy as np

from ..common.errors import MemoryInferError

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


def network_names():
    return list(NETWORKS)


def network(name: str):
    if name not in NETWORKS:
        raise MemoryInferError(f"unknown network '{name}'; choose one of {', '.join(NETWORKS)}")
    return NETWORKS[name]
