"""The container every model adapter returns, with the SI <-> geometric conversion."""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ..memory import Sampling

SOLAR_MASS_SECONDS = 4.925490947641267e-06  # G M_sun / c^3 (lal.MTSUN_SI)
SOLAR_MASS_METRES = 1476.6250380501247  # G M_sun / c^2 (lal.MRSUN_SI)
MEGAPARSEC_METRES = 3.085677581491367e22  # lal.PC_SI * 1e6


@dataclass
class ModeSeries:
    """Modes ``(l, m) -> h_lm`` as SI strain at the source distance, sampled at ``times`` (s).

    ``times`` are seconds relative to the model's own peak (t = 0); ``total_mass`` is the
    detector-frame total mass in solar masses, ``luminosity_distance`` in Mpc. Modes are in
    lalsimulation's convention (its leading-order ``h_22 = +8 sqrt(pi/5) eta x e^{-2i Phi}``).
    ``finer`` holds finer samplings of the late part for the memory's flux (:mod:`.refine`), each
    used from its ``use_from`` time (s) on. ``start_h22``: the (2, 2) mode at the first 17 times taken from its
    whole band, when ``modes`` are cut below it (:func:`.fd_modes.band_values`), for the early inspiral's
    orbital velocity.
    """

    times: np.ndarray
    modes: dict
    total_mass: float
    luminosity_distance: float
    symmetric_mass_ratio: float
    approximant: str
    aligned_spins: bool = True
    use_from: float = float("-inf")
    finer: list = field(default_factory=list)
    start_h22: np.ndarray | None = None  # the (2, 2) mode at the first samples from its whole band, when cut below it

    @property
    def delta_t(self) -> float:
        return float(self.times[1] - self.times[0])

    @property
    def mass_seconds(self) -> float:
        return self.total_mass * SOLAR_MASS_SECONDS

    @property
    def strain_scale(self) -> float:
        """``M / r`` in SI: multiply ``r h / M`` by this to get strain at the distance."""
        return self.total_mass * SOLAR_MASS_METRES / (self.luminosity_distance * MEGAPARSEC_METRES)

    def geometric(self, scaled: bool = True):
        """``(t / M, {(l, m): r h_lm / M})`` for :func:`memory_infer.memory.memory_modes`; with ``scaled=False``
        the modes stay SI strain (``strain_scale`` x r h / M) and only the times are converted."""
        if not scaled:
            return self.times / self.mass_seconds, self.modes
        scale = 1.0 / self.strain_scale
        return self.times / self.mass_seconds, {k: v * scale for k, v in self.modes.items()}

    def geometric_finer(self, scaled: bool = True) -> list:
        """The finer samplings as :class:`memory_infer.memory.Sampling` in geometric units (t / M, r h / M;
        SI strain with ``scaled=False``)."""
        out = []
        for level in self.finer:
            times, modes = level.geometric(scaled)
            out.append(Sampling(times=times, modes=modes, use_from=level.use_from / self.mass_seconds))
        return out
