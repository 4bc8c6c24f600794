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
    assert np.all(np.isfinite(series.times)) and series.times[0] < 0 < series.times[-1] + 1
    if approximant == "TaylorT4":
        assert all(m != 0 for _, m in series.modes)  # its m = 0 modes carry PN memory: dropped


def test_mode_list_restricts_modes():
    series = generate_modes("IMRPhenomTHM", 36.0, 29.0, 440.0, 1 / 4096, 20.0, mode_list=[(2, 2), (2, -2)])
    assert set(series.modes) == {(2, 2), (2, -2)}
