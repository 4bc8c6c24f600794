"""SEOBNRv5PHM and SEOBNRv5HM through the pyseobnr package (optional extra ``seobnr``): inertial-frame modes.

lalsimulation routes these models only through its Python ``gwsignal`` interface, which calls pyseobnr's
``GenerateWaveform``; bilby's ``gwsignal_binary_black_hole`` takes its frequency-domain polarizations, which pyseobnr
makes as lalsimulation's ``SimInspiralFD`` does (lowered start, ``SimInspiralTDConditionStage1``/``2``). Its modes are
in lalsimulation's convention: with ``phi_ref = 0`` they summed at ``(inclination, pi/2 - phase)`` give its
polarizations (pinned by tests/waveform/models/test_pyseobnr_modes.py against bilby's own model, 4e-9 relative with
aligned spins, 3e-10 precessing). Times are seconds from the model's peak.

With precessing spins the memory's finer samplings (:mod:`.refine`) come from the same call: SEOBNRv5PHM builds its
inertial modes as ``h_lm = sum_m' h'_lm' e^{-i m alpha} d^l_{m m'}(beta) e^{-i m' gamma}`` from its smooth
co-precessing modes ``h'`` and the rotation from the co-precessing to the inertial frame (quaternion
``q_I2J q_J2P``, z-y-z Euler angles; Phys. Rev. D 108, 124037 (2023), Sec. II; reproduced here to 3e-12 of its own
inertial modes). :class:`CoprecessingFrame` interpolates each co-precessing mode (m < 0 too: they carry an
antisymmetric part) as aligned spins are (:func:`.refine.interpolated_level`) and the quaternion's components
(cubic spline), then rotates: no second call at a finer step.
"""
from __future__ import annotations

import dataclasses
import functools

import numpy as np

from ...common.errors import WaveformError
from ..sphere import wigner_d
from .lal_call import checked_binary
from .refine import interpolated_level
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
                 reference_frequency, mode_list=None, keep_frame: bool = False):
    """Modes at phi_ref = 0 in lalsimulation's convention, starting at ``minimum_frequency`` (Hz) on the step
    ``delta_t`` (s), spins at ``reference_frequency``. With ``keep_frame``: ``(modes, frame)``, ``frame`` the
    :class:`CoprecessingFrame` of a precessing binary (None with aligned spins)."""
    require(approximant)
    spin_1, spin_2, aligned = checked_binary(approximant, mass_1, mass_2, luminosity_distance, spin_1, spin_2,
                                             approximant in PRECESSING, "SEOBNRv5PHM")
    parameters = dict(mass1=float(mass_1), mass2=float(mass_2), spin1x=float(spin_1[0]), spin1y=float(spin_1[1]),
                      spin1z=float(spin_1[2]), spin2x=float(spin_2[0]), spin2y=float(spin_2[1]),
                      spin2z=float(spin_2[2]), distance=float(luminosity_distance), inclination=0.0, phi_ref=0.0,
                      f22_start=float(minimum_frequency), f_ref=float(reference_frequency), deltaT=float(delta_t),
                      approximant=approximant)  # as bilby's gwsignal route passes them (heavier body first)
    if mode_list:
        parameters["ModeArray"] = [tuple(int(x) for x in mode) for mode in mode_list if int(mode[1]) > 0]
    try:
        generator = _generator()(parameters)
        times, modes = generator.generate_td_modes()
    except Exception as error:  # pyseobnr raises plain Python errors (ValueError, RuntimeError, ...)
        detail = (str(error).strip().splitlines() or [type(error).__name__])[0].rstrip(".")
        raise WaveformError(f"waveform model '{approximant}' could not generate masses {mass_1:g} and {mass_2:g} "
                            f"solar masses with these settings ({detail})") from None
    modes = {(int(l), int(m)): np.asarray(value, dtype=complex) for (l, m), value in modes.items()}
    if mode_list:
        wanted = {tuple(int(x) for x in mode) for mode in mode_list}
        modes = {key: value for key, value in modes.items() if key in wanted}
    total = mass_1 + mass_2
    series = ModeSeries(times=np.asarray(times, dtype=float), modes=modes, total_mass=total,
                        luminosity_distance=luminosity_distance, symmetric_mass_ratio=mass_1 * mass_2 / total ** 2,
                        approximant=approximant, aligned_spins=aligned)
    if not keep_frame:
        return series
    return series, (None if aligned else CoprecessingFrame.of(series, generator))


class CoprecessingFrame:
    """A precessing SEOBNRv5PHM call's co-precessing modes and rotation, which make its finer samplings."""

    def __init__(self, series: ModeSeries, coprecessing: ModeSeries, rotation: np.ndarray, flip_odd: bool):
        self.series, self.coprecessing, self.rotation, self.flip_odd = series, coprecessing, rotation, flip_odd

    @classmethod
    def of(cls, series: ModeSeries, generator) -> "CoprecessingFrame | None":
        """From pyseobnr's model object after ``generate_td_modes`` (None when its internals are not as expected)."""
        import quaternion  # pyseobnr's own dependency

        model = getattr(generator, "_model", None)
        if model is None or not hasattr(model, "imr_full") or not hasattr(model, "quatP2J"):
            return None
        if model.quatP2J.size != series.times.size or (2, 2) not in model.imr_full:
            return None
        # pyseobnr's conversion to SI strain: -M / r (lalsimulation's sign)
        modes = {key: -series.strain_scale * np.asarray(value, dtype=complex) for key, value in model.imr_full.items()}
        coprecessing = dataclasses.replace(series, modes=modes, aligned_spins=True, finer=[])
        rotation = quaternion.as_float_array(model.quatI2J * model.quatP2J)
        signs = np.sign(np.einsum("ij,ij->i", rotation[1:], rotation[:-1]))  # one hemisphere: smooth components
        rotation[1:] *= np.cumprod(np.where(signs == 0, 1.0, signs))[:, None]
        return cls(series, coprecessing, rotation, bool(generator.swap_masses))

    def inertial(self, coprecessing: dict, rotation: np.ndarray) -> dict:
        """``h_lm = sum_m' h'_lm' e^{-i m alpha} d^l_{m m'}(beta) e^{-i m' gamma}`` for the series' keys, the
        z-y-z Euler angles of the unit quaternions ``rotation`` (rows w, x, y, z)."""
        w, x, y, z = (rotation / np.linalg.norm(rotation, axis=1)[:, None]).T
        first, second = np.arctan2(z, w), np.arctan2(-x, y)
        alpha, gamma = first + second, first - second
        half_cos, half_sin = np.sqrt(w * w + z * z), np.sqrt(x * x + y * y)  # cos(beta/2), sin(beta/2)
        lmax = max(l for l, _ in self.series.modes)
        powers = np.arange(2 * lmax + 1)[:, None]
        cos_powers, sin_powers = half_cos ** powers, half_sin ** powers
        turns = {mp: np.exp(-1j * mp * gamma) for mp in range(-lmax, lmax + 1)}
        modes = {}
        for l, m in self.series.modes:
            total = np.zeros(alpha.size, dtype=complex)
            for mp in range(-l, l + 1):
                if (l, mp) in coprecessing:
                    total += coprecessing[(l, mp)] * wigner_d(l, m, mp, cos_powers, sin_powers) * turns[mp]
            total *= np.exp(-1j * m * alpha)
            modes[(l, m)] = -total if (self.flip_odd and m % 2) else total
        return modes

    def level(self, join_time: float, factor: int) -> ModeSeries:
        """The late part at a ``factor`` times finer step from a few samples before ``join_time`` (s): the
        co-precessing modes interpolated (:func:`.refine.interpolated_level`), the rotation's components by a cubic
        spline through the data's samples, then rotated to the inertial frame."""
        from scipy.interpolate import CubicSpline

        fine = interpolated_level(self.coprecessing, join_time, factor, mirrored=False)
        times = self.series.times
        first = max(int(np.searchsorted(times, fine.times[0])) - 8, 0)
        rotation = CubicSpline(times[first:], self.rotation[first:], axis=0)(fine.times)
        return dataclasses.replace(fine, modes=self.inertial(fine.modes, rotation), aligned_spins=False)
