import numpy as np
import pytest

from memory_infer.common.errors import WaveformError
from memory_infer.waveform.models import generate_modes


@pytest.mark.slow
def test_seobnr_modes():
    series = generate_modes("SEOBNRv4PHM", 30.0, 25.0, 400.0, 1 / 2048, 25.0, (0, 0, 0.2), (0, 0, 0))
    assert (2, 2) in series.modes and np.max(np.abs(series.modes[(2, 2)])) > 0


@pytest.mark.parametrize("approximant, arguments, message", [
    ("NRSur7dq4", {}, "downloadable data files"),
    ("NoSuchModel", {}, "unknown waveform model 'NoSuchModel'"),
    ("TaylorT4", {"spin_1": (0, 0, 0.5)}, "does not take spins"),
    ("IMRPhenomTHM", {"spin_1": (0, 0, 1.5)}, "spin has magnitude above 1"),
    ("IMRPhenomTHM", {"mass_2": -3.0}, "must be positive"),
])
def test_model_errors_are_one_sentence(approximant, arguments, message):
    values = dict(mass_1=36.0, mass_2=29.0, luminosity_distance=440.0, delta_t=1 / 4096, minimum_frequency=20.0)
    values.update(arguments)
    with pytest.raises(WaveformError, match=message) as caught:
        generate_modes(approximant, **values)
    assert "\n" not in str(caught.value)


def test_out_of_range_is_a_clear_error():
    with pytest.raises(WaveformError, match="could not generate"):
        generate_modes("IMRPhenomTHM", 300.0, 1.0, 400.0, 1 / 4096, 20.0)
