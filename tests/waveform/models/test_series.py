import numpy as np
import pytest

from memory_infer.common.errors import WaveformError
from memory_infer.waveform.models import generate_modes
from memory_infer.waveform.models.series import SOLAR_MASS_METRES, SOLAR_MASS_SECONDS


def test_geometric_conversion_matches_lal_constants():
    lal = pytest.importorskip("lal")  # reference library: lal's constants
    assert SOLAR_MASS_SECONDS == pytest.approx(lal.MTSUN_SI, rel=1e-12)
    assert SOLAR_MASS_METRES == pytest.approx(lal.MRSUN_SI, rel=1e-12)
    series = generate_modes("IMRPhenomTHM", 36.0, 29.0, 440.0, 1 / 4096, 20.0)
    times, modes = series.geometric()
    assert times[1] - times[0] == pytest.approx(1 / 4096 / (65 * lal.MTSUN_SI))
    # r h_22 / M of order 0.4 at the peak for a comparable-mass merger (common practice, from memory)
    assert 0.3 < np.max(np.abs(modes[(2, 2)])) < 0.5
