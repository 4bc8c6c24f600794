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


def open_data_file(path, strain, start, spacing, duration=None, mask=None, with_xstart=True):
    """A synthetic file in the open-data strain layout (strain/Strain with Xspacing and Xstart; meta; quality)."""
    import h5py

    with h5py.File(path, "w") as handle:
        dataset = handle.create_dataset("strain/Strain", data=strain)
        dataset.attrs["Xspacing"] = spacing
        if with_xstart:
            dataset.attrs["Xstart"] = start
        dataset.attrs["Npoints"] = strain.size
        handle["meta/GPSstart"] = int(start)
        handle["meta/Duration"] = duration if duration is not None else int(round(strain.size * spacing))
        handle["meta/Detector"] = b"H1"
        handle["quality/simple/DQmask"] = mask if mask is not None else np.full(int(strain.size * spacing), 127)
        handle["quality/simple/DQShortnames"] = [b"DATA", b"CBC_CAT1"]


def test_open_data_strain_layout(tmp_path, caplog):
    # layout of the trade's public strain files (public documentation of the open-data HDF5 format): the strain
    # in strain/Strain, its spacing and start as attributes, meta and quality groups beside it
    from memory_infer.inputs.readers import read_strain

    rng = np.random.default_rng(1)
    strain = rng.normal(size=4096 * 8) * 1e-21
    open_data_file(tmp_path / "a.hdf5", strain, 1126259446.0, 1 / 4096)
    values, rate, start = read_strain(str(tmp_path / "a.hdf5"))
    assert np.array_equal(values, strain) and rate == 4096.0 and start == 1126259446.0
    open_data_file(tmp_path / "b.hdf5", strain, 1126259446.0, 1 / 4096, with_xstart=False,
                   mask=np.array([127, 127, 0, 127, 127, 127, 127, 127]))
    with caplog.at_level("WARNING", logger="memory_infer"):
        assert read_strain(str(tmp_path / "b.hdf5"))[2] == 1126259446.0  # start from meta/GPSstart
    assert "marks 1 of 8 seconds without data" in caplog.text
    open_data_file(tmp_path / "c.hdf5", strain, 1126259446.0, 1 / 4096, duration=32)
    with pytest.raises(MemoryInferError, match="meta/Duration disagrees"):
        read_strain(str(tmp_path / "c.hdf5"))
