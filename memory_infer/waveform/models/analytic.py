"""Leading-order (Newtonian, quadrupole) quasi-circular inspiral in its (2, +-2) modes; for tests.

``x = tau^(-1/4) / 4``, orbital phase ``phi = -tau^(5/8) / eta``, ``tau = eta (t_c - t) / (5 M)``,
``r h_22 / M = +8 sqrt(pi/5) eta x e^{-2 i phi}``, ``h_2-2 = conj(h_22)``: lalsimulation's
convention, whose polarization basis is rotated by 90 degrees from (e_theta, e_phi) (CQG 25, 165003 (2008));
in the (e_theta, e_phi) basis of e.g. Living Rev. Rel. 17, 2 (2014), eqs. 317 and 327, the sign is minus.
The series ends at x = 1/6 (t = 0 there), abruptly: use it away from its end.
"""
from __future__ import annotations

import numpy as np

from ...common.errors import WaveformError
from .series import MEGAPARSEC_METRES, SOLAR_MASS_METRES, SOLAR_MASS_SECONDS, ModeSeries

NAME = "LeadingOrderInspiral"


def leading_order_inspiral(mass_1, mass_2, luminosity_distance, delta_t, minimum_frequency,
                           final_x: float = 1 / 6) -> ModeSeries:
    """Modes from GW frequency ``minimum_frequency`` up to ``x = final_x``."""
    if mass_1 <= 0 or mass_2 <= 0 or luminosity_distance <= 0:
        raise WaveformError("masses and distance must be positive for the leading-order inspiral")
    total = mass_1 + mass_2
    eta = mass_1 * mass_2 / total ** 2
    mass_s = total * SOLAR_MASS_SECONDS
    x_start = (np.pi * minimum_frequency * mass_s) ** (2 / 3)
    if x_start >= final_x:
        raise WaveformError("the minimum frequency is above the end of the leading-order inspiral")
    # tau(x) = (4 x)^-4 ; time before the end t_c - t = 5 M tau / eta
    tau_start, tau_end = (4 * x_start) ** -4, (4 * final_x) ** -4
    t_start = -5 * mass_s * (tau_start - tau_end) / eta
    times = np.arange(t_start, 0.0 + 0.5 * delta_t, delta_t)
    tau = tau_end + eta * (-times) / (5 * mass_s)
    x = tau ** -0.25 / 4
    phase = -tau ** 0.625 / eta
    scale = total * SOLAR_MASS_METRES / (luminosity_distance * MEGAPARSEC_METRES)
    h22 = 8 * np.sqrt(np.pi / 5) * eta * x * np.exp(-2j * phase) * scale
    return ModeSeries(times=times, modes={(2, 2): h22, (2, -2): np.conj(h22)}, total_mass=total,
                      luminosity_distance=luminosity_distance, symmetric_mass_ratio=eta,
                      approximant=NAME)
