import numpy as np
import pytest

from memory_infer.common.errors import WaveformError
from memory_infer.waveform.models import generate_modes
from memory_infer.waveform.models.series import SOLAR_MASS_METRES, SOLAR_MASS_SECONDS


@pytest.mark.parametrize("approximant", ["IMRPhenomTHM", "IMRPhenomTPHM", "TaylorT4"])
def test_models_give_modes_with_both_signs_of_m(approximant):
    spins = {"TaylorT4": ((0, 0, 0), (0, 0, 0)), "IMRPhenomTHM": ((0, 0, 0.3), (0, 0, -0.1)),
             "IMRPhenomTPHM": ((0.2, 0.1, 0.3), (0, -0.2, 0.1))}[approximant]
    series = generate_modes(approximant, 30.0, 20.0, 400.0, 1 / 2048, 20.0, *spins)
    assert (2, 2) in series.modes and (2, -2) in series.modes
    assert all(v.shape == series.times.shape for v in series.modes.values())
    assert np.all(np.isfinite(series.times))
    # lalsimulation's epoch: t = 0 at the peak of |h22| for the merger models, at the end for TaylorT4 (reference
    # library), to one sample
    peak = series.times[np.argmax(np.abs(series.modes[(2, 2)]))]
    assert abs(peak) <= 1.01 / 2048 and (approximant == "TaylorT4" or series.times[-1] > 0.05)
    # the start lies the leading-order time to coalescence from 20 Hz before the peak, 5/256 (pi f)^(-8/3)
    # (G Mc / c^3)^(-5/3) (Peters, Phys. Rev. 136, B1224 (1964)); post-Newtonian terms shorten it by a few percent
    chirp_mass = (30.0 * 20.0) ** 0.6 / 50.0 ** 0.2 * SOLAR_MASS_SECONDS
    newtonian = 5 / 256 * (np.pi * 20.0) ** (-8 / 3) * chirp_mass ** (-5 / 3)
    assert 0.85 < -series.times[0] / newtonian < 1.02
    if approximant == "TaylorT4":
        assert all(m != 0 for _, m in series.modes)  # its m = 0 modes carry PN memory: dropped


def test_mode_list_restricts_modes():
    series = generate_modes("IMRPhenomTHM", 36.0, 29.0, 440.0, 1 / 4096, 20.0, mode_list=[(2, 2), (2, -2)])
    assert set(series.modes) == {(2, 2), (2, -2)}
