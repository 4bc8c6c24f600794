"""One way to call lalsimulation: quiet, one-sentence errors, the walk of its mode list, the shared binary checks."""
import numpy as np
import pytest

from memory_infer.common.errors import WaveformError
from memory_infer.waveform.models.lal_call import (call, checked_binary, explain, lal_modules, walk,
                                                   waveform_dictionary)


def test_a_failed_call_is_explained_from_xlals_own_message():
    lal, lalsim = lal_modules()
    # mass ratio 300 is outside IMRPhenomTHM's range (lalsimulation refuses it with an XLAL error)
    arguments = (0.0, 1 / 4096, 300 * lal.MSUN_SI, 1 * lal.MSUN_SI, 0, 0, 0, 0, 0, 0, 20.0, 20.0, 1e24,
                 lal.CreateDict(), 5, lalsim.GetApproximantFromString("IMRPhenomTHM"))
    with pytest.raises(WaveformError, match="could not generate masses 300 and 1 solar masses") as caught:
        call(lalsim.SimInspiralChooseTDModes, arguments, "IMRPhenomTHM", 300.0, 1.0)
    assert "\n" not in str(caught.value) and "XLAL" not in str(caught.value)
    assert "data files" in explain("NRSur7dq4", "XLAL Error - ... LAL_DATA_PATH not set", RuntimeError(), 30, 20)


def test_the_walk_and_the_mode_array_give_the_requested_modes_in_lalsimulations_order():
    lal, lalsim = lal_modules()
    arguments = (0.0, 1 / 2048, 30 * lal.MSUN_SI, 25 * lal.MSUN_SI, 0, 0, 0.2, 0, 0, 0, 30.0, 30.0, 1e24,
                 waveform_dictionary([(2, 2), (2, -2), (3, 3)]), 5, lalsim.GetApproximantFromString("IMRPhenomTHM"))
    linked = call(lalsim.SimInspiralChooseTDModes, arguments, "IMRPhenomTHM", 30.0, 25.0)
    keys, nodes = [], linked
    while nodes is not None:  # lalsimulation's own list, walked by hand
        keys.append((nodes.l, nodes.m))
        nodes = nodes.next
    walked = list(walk(linked))
    assert [key for key, _ in walked] == keys and set(keys) <= {(2, 2), (2, -2), (3, 3), (3, -3)}
    assert all(np.max(np.abs(series.data.data)) > 0 for _, series in walked)


@pytest.mark.parametrize("arguments, message", [
    (dict(mass_2=-1.0), "must be positive"), (dict(luminosity_distance=0.0), "must be positive"),
    (dict(spin_1=(0.8, 0.0, 0.8)), "first spin has magnitude above 1"),
    (dict(spin_2=(0.0, float("nan"), 0.0)), "second spin .* not a number"),
    (dict(spin_1=(0.3, 0.0, 0.0), precessing=False), "takes aligned spins only; .* choose OtherModel"),
])
def test_every_model_refuses_the_same_binaries(arguments, message):
    values = dict(mass_1=30.0, mass_2=20.0, luminosity_distance=100.0, spin_1=(0, 0, 0.1), spin_2=(0, 0, 0),
                  precessing=None, alternative="OtherModel")
    values.update(arguments)
    with pytest.raises(WaveformError, match=message):
        checked_binary("SomeModel", **values)


def test_aligned_means_in_plane_spins_below_1e_8():
    assert checked_binary("M", 30.0, 20.0, 1.0, (1e-9, 0, 0.5), (0, 0, 0))[2]
    assert not checked_binary("M", 30.0, 20.0, 1.0, (1e-6, 0, 0.5), (0, 0, 0), precessing=True)[2]
