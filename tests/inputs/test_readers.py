import h5py
import numpy as np
import pandas as pd
import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.inputs.readers import read_psd, read_samples, read_strain, welch_psd


def test_strain_from_text_and_hdf5_agree(tmp_path):
    rate, start = 256.0, 1e9
    values = np.random.default_rng(1).normal(size=512)
    times = start + np.arange(values.size) / rate
    np.savetxt(tmp_path / "s.txt", np.column_stack([times, values]))
    with h5py.File(tmp_path / "s.h5", "w") as handle:
        dataset = handle.create_dataset("strain", data=values)
        dataset.attrs["start_time"], dataset.attrs["sampling_rate"] = start, rate
    text, hdf = read_strain(str(tmp_path / "s.txt")), read_strain(str(tmp_path / "s.h5"))
    assert np.allclose(text[0], hdf[0]) and text[1] == pytest.approx(rate) and text[2] == pytest.approx(start)


def test_bad_files_are_one_sentence(tmp_path):
    np.savetxt(tmp_path / "psd.txt", np.column_stack([[10.0, 20.0], [1e-46, -1.0]]))
    with pytest.raises(MemoryInferError, match="non-positive"):
        read_psd(str(tmp_path / "psd.txt"))
    with h5py.File(tmp_path / "no.h5", "w") as handle:
        handle.create_dataset("other", data=[1.0])
    with pytest.raises(MemoryInferError, match="no dataset 'strain'"):
        read_strain(str(tmp_path / "no.h5"))
    with pytest.raises(MemoryInferError, match="must end in"):
        (tmp_path / "x.dat").write_text("1")
        read_samples(str(tmp_path / "x.dat"))


def test_samples_from_csv_json_and_hdf5(tmp_path):
    frame = pd.DataFrame({"mass_1": [30.0, 31.0], "mass_2": [20.0, 21.0]})
    frame.to_csv(tmp_path / "p.csv", index=False)
    (tmp_path / "p.json").write_text('{"posterior": {"content": {"mass_1": [30.0, 31.0], "mass_2": [20.0, 21.0]}}}')
    with h5py.File(tmp_path / "p.h5", "w") as handle:
        group = handle.create_group("posterior")
        for key in frame:
            group.create_dataset(key, data=frame[key].to_numpy())
    for name in ("p.csv", "p.json", "p.h5"):
        read = read_samples(str(tmp_path / name))
        assert np.allclose(read[["mass_1", "mass_2"]].to_numpy(), frame.to_numpy())


def test_welch_psd_of_white_noise_is_flat(tmp_path):
    # white noise of variance s^2 sampled at fs has one-sided PSD 2 s^2 / fs (textbook)
    rate, sigma = 512.0, 2.0
    values = np.random.default_rng(3).normal(0, sigma, int(64 * rate))
    np.savetxt(tmp_path / "off.txt", np.column_stack([np.arange(values.size) / rate, values]))
    frequencies, psd, note = welch_psd(str(tmp_path / "off.txt"), rate, 4.0, 0.5)
    band = (frequencies > 10) & (frequencies < 200)
    assert np.mean(psd[band]) == pytest.approx(2 * sigma ** 2 / rate, rel=0.03)
    assert "Welch" in note
