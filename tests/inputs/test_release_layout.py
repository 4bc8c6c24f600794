import h5py
import numpy as np
import pytest

from memory_infer.inputs.readers import read_release
from memory_infer.inputs.release_layout import PLACES, PSDS, SAMPLES
from memory_infer.inputs.release_settings import read_release_settings


def one_place_release(path, setting, place, value):
    """A release of one analysis that states ``setting`` only at ``place``."""
    table = np.zeros(8, dtype=[("mass_1", "<f8"), ("mass_2", "<f8"), ("geocent_time", "<f8")])
    table["geocent_time"] = 1e9
    with h5py.File(path, "w") as handle:
        group = handle.create_group("C01:IMRPhenomXPHM")
        group.create_dataset(SAMPLES, data=table)
        group.create_dataset(f"{PSDS}/H1", data=np.column_stack([np.linspace(10, 500, 50), np.full(50, 1e-46)]))
        group.create_dataset(place, data=np.array([str(value).encode()]))
    return str(path)


@pytest.mark.parametrize("setting, value", [("reference_frequency", 21.0), ("waveform_model", "IMRPhenomXPHM")])
def test_both_readers_find_a_setting_at_each_of_its_places(tmp_path, setting, value):
    """read_release (samples) and read_release_settings (segment and model) read one layout: each place of the
    reference frequency and the model is found by both, with the same value."""
    for k, place in enumerate(PLACES[setting]):
        path = one_place_release(tmp_path / f"release_{k}.h5", setting, place, value)
        assert read_release(path)[setting] == value, place
        found, where = read_release_settings(path)[setting]
        assert found == value and where.endswith(f"C01:IMRPhenomXPHM/{place}"), place
