import numpy as np
import pytest

from memory_infer.common.errors import WaveformError
from memory_infer.waveform.models.analytic import leading_order_inspiral
from memory_infer.waveform.models.series import SOLAR_MASS_SECONDS


def test_duration_matches_the_newtonian_chirp_time():
    # Peters, PR 136, B1224 (1964), leading order, from memory: t(f) = (5/256) (pi f)^(-8/3) (G Mc/c^3)^(-5/3)
    m1, m2, f0 = 30.0, 20.0, 20.0
    series = leading_order_inspiral(m1, m2, 100.0, 1 / 4096, f0, final_x=0.1)
    chirp = (m1 * m2) ** 0.6 / (m1 + m2) ** 0.2 * SOLAR_MASS_SECONDS
    f_end = 0.1 ** 1.5 / (np.pi * (m1 + m2) * SOLAR_MASS_SECONDS)
    expected = 5 / 256 * chirp ** (-5 / 3) * ((np.pi * f0) ** (-8 / 3) - (np.pi * f_end) ** (-8 / 3))
    assert -series.times[0] == pytest.approx(expected, rel=1e-3)


def test_frequency_and_amplitude_follow_x():
    # the (2,2) frequency is x^(3/2) / (pi M) and |r h22 / M| = 8 sqrt(pi/5) eta x (leading-order quadrupole)
    series = leading_order_inspiral(30.0, 20.0, 100.0, 1 / 8192, 20.0, final_x=0.1)
    times, modes = series.geometric()
    h22 = modes[(2, 2)]
    frequency = np.gradient(np.unwrap(np.angle(h22)), times) / (2 * np.pi)  # cycles per M
    x = (np.pi * np.abs(frequency)) ** (2 / 3)
    eta = 0.24
    inner = slice(10, -10)
    assert np.allclose(np.abs(h22)[inner], 8 * np.sqrt(np.pi / 5) * eta * x[inner], rtol=1e-4)
    assert x[10] == pytest.approx((np.pi * 20.0 * 50 * SOLAR_MASS_SECONDS) ** (2 / 3), rel=1e-3)


def test_start_above_the_end_is_an_error():
    with pytest.raises(WaveformError, match="above the end"):
        leading_order_inspiral(30.0, 20.0, 100.0, 1 / 4096, 2000.0)
