import json
import h5py
import numpy as np
import pandas as pd
import pytest

from helpers import FIXED_SKY_AND_TIME

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
        (tmp_path / "x.npy").write_text("1")
        read_samples(str(tmp_path / "x.npy"))


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


# ---------------------------------------------------------------- catalog posterior releases

def write_release(path, analyses=("C01:IMRPhenomTHM", "C01:IMRPhenomTPHM"), reference="15.0", samples=40):
    """A synthetic catalog release with the public layout: one group per analysis holding a structured
    ``posterior_samples`` table, a ``psds`` group (frequency, PSD per detector), the configuration that produced it
    (``config_file/config`` with byte-string values) and ``meta_data``; invented values."""
    import h5py

    rng = np.random.default_rng(4)
    names = ["mass_1", "mass_2", "luminosity_distance", "theta_jn", "psi", "phase", "ra", "dec", "geocent_time",
             "a_1", "a_2", "tilt_1", "tilt_2", "phi_12", "phi_jl", "log_likelihood", "chirp_mass"]
    with h5py.File(path, "w") as handle:
        handle.create_dataset("version/pesummary", data=np.array([b"0.0"]))  # what releases carry beside analyses
        for k, analysis in enumerate(analyses):
            table = np.zeros(samples, dtype=[(n, "<f8") for n in names])
            table["mass_1"], table["mass_2"] = 36 + rng.normal(0, 0.5, samples), 29 + rng.normal(0, 0.5, samples)
            table["luminosity_distance"] = 400 + rng.normal(0, 20, samples)
            for n, v in (("theta_jn", 1.0), ("psi", 0.3), ("phase", 0.5), ("ra", 1.0), ("dec", 0.2),
                         ("geocent_time", 1e9 + 2.0)):
                table[n] = v
            table["log_likelihood"] = rng.normal(100, 1, samples)
            table["chirp_mass"] = (table["mass_1"] * table["mass_2"]) ** 0.6 / (table["mass_1"] + table["mass_2"]) ** 0.2
            group = handle.create_group(analysis)
            group.create_dataset("posterior_samples", data=table)
            frequencies = np.linspace(10, 600, 1200)
            for detector in ("H1", "L1"):
                group.create_dataset(f"psds/{detector}", data=np.column_stack([frequencies,
                                                                                np.full(frequencies.size, 1e-46 * (k + 1))]))
            group.create_dataset("config_file/config/reference-frequency", data=np.array([reference.encode()]))
            group.create_dataset("meta_data/meta_data/approximant", data=np.array([analysis.split(":")[1].encode()]))
            group.create_dataset("approximant", data=np.array([analysis.split(":")[1].encode()]))
    return path


def release_config(path, detector, strain, masses="mass_1 = 36.0\nmass_2 = 29.0\nluminosity_distance = 400.0",
                   evidence=""):
    """An evidence configuration on file strain with the PSD and samples from ``release.h5``."""
    path.write_text(f"""
[event]
label = "release-event"
[data]
kind = "files"
duration = 4.0
sampling_rate = 1024.0
start_time = 1e9
[data.files.{detector}]
strain = "{strain}"
psd_from_samples = true
[priors]
{masses}
{FIXED_SKY_AND_TIME}
[evidence]
methods = ["reweighting"]
samples_file = "release.h5"
{evidence}
""")


def test_release_reader_takes_the_analysis_its_psds_and_settings(tmp_path):
    from memory_infer.common.errors import MemoryInferError
    from memory_infer.inputs.readers import read_release, read_samples

    path = write_release(tmp_path / "release.h5")
    release = read_release(str(path), "C01:IMRPhenomTPHM")
    assert release["analysis"] == "C01:IMRPhenomTPHM" and len(release["samples"]) == 40
    assert release["reference_frequency"] == 15.0 and release["waveform_model"] == "IMRPhenomTPHM"
    assert sorted(release["psds"]) == ["H1", "L1"] and release["psds"]["H1"][0, 1] == 2e-46
    # two analyses and none named: the rule takes the precessing model (IMRPhenomTPHM before IMRPhenomTHM)
    assert len(read_samples(str(path))) == 40 and read_release(str(path))["analysis"] == "C01:IMRPhenomTPHM"
    with pytest.raises(MemoryInferError, match="no analysis 'C02:Other'; it holds C01:IMRPhenomTHM"):
        read_release(str(path), "C02:Other")
    single = write_release(tmp_path / "single.h5", analyses=("C01:IMRPhenomTHM",))
    assert read_release(str(single))["analysis"] == "C01:IMRPhenomTHM"


def test_release_drives_an_evidence_run_with_its_psds_and_reference_frequency(tmp_path, capsys):
    """Strain from an open-data-layout HDF5 file, samples, PSD and reference frequency from one analysis of a
    release: the run takes 15 Hz from the file (said so), the PSD is the release's, and reweighting runs."""
    import h5py

    from memory_infer.cli import main

    write_release(tmp_path / "release.h5")
    rate, duration, start = 1024.0, 4.0, 1e9
    with h5py.File(tmp_path / "H1.hdf5", "w") as handle:
        handle.create_dataset("strain/Strain", data=np.random.default_rng(0).normal(0, 1e-23, int(rate * duration)))
        handle["strain/Strain"].attrs["Xspacing"] = 1 / rate
        handle["strain/Strain"].attrs["Xstart"] = start
    release_config(tmp_path / "release.toml", "H1", "H1.hdf5", masses="""
mass_1 = { kind = "uniform", minimum = 30.0, maximum = 42.0 }
mass_2 = { kind = "uniform", minimum = 24.0, maximum = 34.0 }
luminosity_distance = { kind = "uniform", minimum = 100.0, maximum = 2000.0 }""",
                   evidence='samples_analysis = "C01:IMRPhenomTHM"\nminimum_effective_samples = 5')
    assert main(["evidence", str(tmp_path / "release.toml"), "--outdir", str(tmp_path / "out"), "--quiet"]) == 0
    record = json.loads((tmp_path / "out" / "evidence.json").read_text())
    assert record["settings"]["reference_frequency"] == 15.0
    # the release's own configuration, named by its place in the file (file data with a release: every setting
    # left out comes from the release)
    assert record["settings"]["reference_frequency_from"] == ("release.h5: C01:IMRPhenomTHM/config_file/config/"
                                                              "reference-frequency")
    check = next(iter(record["sample_checks"].values()))
    assert check["reference_frequency"]["differs"] is False and check["waveform_model"]["samples"] == "IMRPhenomTHM"
    assert len([m for m in record["methods"] if m["family"] == "reweighting"]) == 2


def test_release_without_the_detectors_psd_gets_one_sentence(tmp_path, capsys):
    from memory_infer.cli import main

    write_release(tmp_path / "release.h5", analyses=("C01:IMRPhenomTHM",))
    np.savetxt(tmp_path / "V1.txt", np.column_stack([1e9 + np.arange(4096) / 1024, np.zeros(4096)]))
    release_config(tmp_path / "v.toml", "V1", "V1.txt")
    assert main(["evidence", str(tmp_path / "v.toml"), "--outdir", str(tmp_path / "out")]) != 0
    error = capsys.readouterr().err
    assert "holds no PSD for V1" in error and "Traceback" not in error


def test_three_analysis_release_by_pesummarys_writer_never_reweights_the_mixed_one(tmp_path):
    # reference library: pesummary's own writer (a release with one analysis per model and a mixed one, as catalogs
    # publish them)
    import logging

    import pandas as pd
    from pesummary.gw.file.formats.pesummary import write_pesummary

    from memory_infer.common.errors import MemoryInferError
    from memory_infer.inputs.readers import read_release
    from memory_infer.inputs.release_settings import read_release_settings

    logging.getLogger("PESummary").setLevel(logging.ERROR)
    rng = np.random.default_rng(5)
    table = pd.DataFrame({"mass_1": 36 + rng.normal(0, 0.5, 30), "mass_2": 29 + rng.normal(0, 0.5, 30),
                          "luminosity_distance": 400 + rng.normal(0, 20, 30), "log_likelihood": rng.normal(50, 1, 30)})
    labels = ["C01:IMRPhenomXPHM", "C01:SEOBNRv4PHM", "C01:Mixed"]
    models = {"C01:IMRPhenomXPHM": "IMRPhenomXPHM", "C01:SEOBNRv4PHM": "SEOBNRv4PHM",
              "C01:Mixed": "IMRPhenomXPHM, SEOBNRv4PHM"}
    from pesummary.utils.samples_dict import MultiAnalysisSamplesDict

    analyses = MultiAnalysisSamplesDict({label: {c: table[c].to_numpy() for c in table.columns} for label in labels})
    write_pesummary(analyses, outdir=str(tmp_path), approximant=models, hdf5=True, filename="three.h5", file_kwargs={label: {"sampler": {}, "meta_data": {
                        "f_ref": 20.0, "approximant": models[label]}} for label in labels})
    path = str(tmp_path / "three.h5")
    assert read_release(path)["analysis"] == "C01:IMRPhenomXPHM"  # the rule: never mixed, XPHM first
    found = read_release_settings(path)
    assert found["analysis"][0] == "C01:IMRPhenomXPHM" and "not taken: C01:Mixed, C01:SEOBNRv4PHM" in found["analysis"][1]
    with pytest.raises(MemoryInferError, match="mixes several models' samples"):
        read_release(path, "C01:Mixed")
    assert read_release(path, "C01:SEOBNRv4PHM")["waveform_model"] == "SEOBNRv4PHM"
