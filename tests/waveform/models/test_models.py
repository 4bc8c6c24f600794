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


@pytest.mark.slow
def test_seobnr_modes():
    series = generate_modes("SEOBNRv4PHM", 30.0, 25.0, 400.0, 1 / 2048, 25.0, (0, 0, 0.2), (0, 0, 0))
    assert (2, 2) in series.modes and np.max(np.abs(series.modes[(2, 2)])) > 0


def test_mode_list_restricts_modes():
    series = generate_modes("IMRPhenomTHM", 36.0, 29.0, 440.0, 1 / 4096, 20.0, mode_list=[(2, 2), (2, -2)])
    assert set(series.modes) == {(2, 2), (2, -2)}


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
