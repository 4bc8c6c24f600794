"""The container every model adapter returns, with the SI <-> geometric conversion."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

SOLAR_MASS_SECONDS = 4.925490947641267e-06  # G M_sun / c^3 (lal.MTSUN_SI)
SOLAR_MASS_METRES = 1476.6250380501247  # G M_sun / c^2 (lal.MRSUN_SI)
MEGAPARSEC_METRES = 3.085677581491367e22  # lal.PC_SI * 1e6


@dataclass
class ModeSeries:
    """Modes ``(l, m) -> h_lm`` as SI strain at the source distance, sampled at ``times`` (s).

    ``times`` are seconds relative to the model's own peak (t = 0); ``total_mass`` is the
    detector-frame total mass in solar masses, ``luminosity_distance`` in Mpc.
    """

    times: np.ndarray
    modes: dict
    total_mass: float
    luminosity_distance: float
    symmetric_mass_ratio: float
    approximant: str
    aligned_spins: bool = True

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

    def geometric(self):
        """``(t / M, {(l, m): r h_lm / M})`` for :func:`memory_infer.memory.memory_modes`."""
        scale = 1.0 / self.strain_scale
        return self.times / self.mass_seconds, {k: v * scale for k, v in self.modes.items()}
