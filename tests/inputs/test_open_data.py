"""Strain files as the open-data archive publishes them: cut, decimated, gap-checked, off-source PSD."""
import numpy as np
import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.inputs.open_data import off_source_psd, segment_from_file, write_open_data

FILE_START = 1_000_000_000


def noise_file(path, rate=4096.0, duration=32, sigma=1e-21, seed=3, mask=None, detector="H1"):
    rng = np.random.default_rng(seed)
    strain = sigma * rng.standard_normal(int(rate * duration))
    write_open_data(str(path), strain, rate, FILE_START, detector, mask)
    return strain


@pytest.mark.parametrize("file_rate", [4096.0, 16384.0])
def test_cut_and_decimated_segment_equals_gwpy(tmp_path, file_rate):
    """A 32 s open-data file cut to a 4 s, 1024 Hz segment equals gwpy's reading of the same file
    (TimeSeries.read, format 'hdf5.gwosc'), resampled by gwpy's TimeSeries.resample with the same FIR order, and
    cropped: to 1e-6 relative in the band (reference: gwpy 4, a general-purpose library)."""
    gwpy = pytest.importorskip("gwpy.timeseries")
    from memory_infer.inputs.open_data import DECIMATION_ORDER_PER_FACTOR

    path = tmp_path / "H-H1_GWOSC_4KHZ_R1-1000000000-32.hdf5"
    noise_file(path, rate=file_rate)
    start, duration, rate = FILE_START + 20.0, 4.0, 1024.0
    ours, notes = segment_from_file(str(path), rate, start, duration)
    assert ours.size == 4096 and "decimated to 1024 Hz" in notes[0]
    factor = int(file_rate / rate)
    series = gwpy.TimeSeries.read(str(path), format="hdf5.gwosc")
    theirs = series.resample(rate, n=DECIMATION_ORDER_PER_FACTOR * factor).crop(start, start + duration).value
    assert theirs.size == ours.size
    frequencies = np.fft.rfftfreq(ours.size, 1 / rate)
    band = (frequencies >= 20) & (frequencies <= 448)
    a, b = np.fft.rfft(ours)[band], np.fft.rfft(theirs)[band]
    relative = np.max(np.abs(a - b) / np.abs(b))
    print(f"decimation check {file_rate:g} Hz: max relative difference in band {relative:.2e}")
    assert relative < 1e-6, relative
    # the anti-aliasing filter is flat in the band: the decimated white noise keeps its density there
    # (one-sided PSD 2 sigma^2 / f_s for white noise of variance sigma^2: common practice, no source)
    psd = 2 * np.abs(np.fft.rfft(ours)[band]) ** 2 / (rate * ours.size)
    expected = 2 * (1e-21) ** 2 / file_rate
    assert abs(np.mean(psd) / expected - 1) < 5 / np.sqrt(band.sum())


def test_gaps_inside_the_segment_or_psd_stretch_are_refused_outside_reported(tmp_path):
    path = tmp_path / "gappy.hdf5"
    mask = np.full(32, 127)
    mask[21] = 126  # bit 0 clear: no data in second 21
    noise_file(path, mask=mask)
    with pytest.raises(MemoryInferError, match=r"has no data \(data-quality mask\) for 1 s inside the analysis "
                                               r"segment"):
        segment_from_file(str(path), 1024.0, FILE_START + 20.0, 4.0)
    with pytest.raises(MemoryInferError, match="inside the PSD stretch"):
        off_source_psd(str(path), 1024.0, FILE_START + 26.0, 4.0, psd_duration=16.0)
    _, notes = segment_from_file(str(path), 1024.0, FILE_START + 4.0, 4.0)
    assert any("1 s without data (data-quality mask) outside" in note for note in notes)


def test_off_source_psd_of_white_noise(tmp_path):
    """Welch's method on the data before the segment, after decimation: white noise of variance sigma^2 sampled
    at f_s has one-sided PSD 2 sigma^2 / f_s in the band (common practice, no source)."""
    path = tmp_path / "white.hdf5"
    noise_file(path, sigma=2e-21)
    frequencies, psd, note = off_source_psd(str(path), 1024.0, FILE_START + 20.0, 4.0, psd_duration=16.0)
    band = (frequencies > 30) & (frequencies < 400)
    ratio = np.mean(psd[band]) / (2 * (2e-21) ** 2 / 4096.0)
    averages = 7  # 16 s in 4 s segments at 50% overlap
    assert abs(ratio - 1) < 4 / np.sqrt(averages * band.sum()), ratio
    assert "16 s of off-source data (1000000004.000 to 1000000020.000)" in note


def test_stretch_outside_the_file_or_off_rate_is_refused(tmp_path):
    path = tmp_path / "short.hdf5"
    noise_file(path, duration=8)
    with pytest.raises(MemoryInferError, match="covers 1000000000.000 to 1000000008.000, not the stretch"):
        segment_from_file(str(path), 1024.0, FILE_START + 6.0, 4.0)
    with pytest.raises(MemoryInferError, match="not a whole multiple of the analysis rate 1500 Hz"):
        segment_from_file(str(path), 1500.0, FILE_START + 2.0, 4.0)
    with pytest.raises(MemoryInferError, match="fewer than two 4 s Welch segments"):
        off_source_psd(str(path), 1024.0, FILE_START + 2.0, 4.0)


def test_the_segment_resampled_alone_as_bilby_pipe_does(tmp_path):
    # reference libraries: lal's ResampleREAL8TimeSeries on the segment alone (bilby_pipe's default "lal" method) and
    # gwpy's TimeSeries.resample with its defaults on the segment alone (bilby_pipe's "gwpy" method)
    import lal
    from gwpy.timeseries import TimeSeries

    from memory_infer.inputs.open_data import cut_stretch

    rng = np.random.default_rng(8)
    file_rate, rate, start = 4096.0, 1024.0, 1_000_000_000.0
    strain = rng.normal(size=int(32 * file_rate))
    first = int(14 * file_rate)
    alone = strain[first:first + int(4 * file_rate)]
    ours = cut_stretch(strain, file_rate, start, rate, start + 14, 4.0, "f", resampling="lal")
    series = lal.CreateREAL8TimeSeries("x", lal.LIGOTimeGPS(0), 0.0, 1 / file_rate, lal.DimensionlessUnit, alone.size)
    series.data.data = alone.copy()
    lal.ResampleREAL8TimeSeries(series, 1 / rate)
    assert np.array_equal(ours, series.data.data)
    gwpy_like = cut_stretch(strain, file_rate, start, rate, start + 14, 4.0, "f", resampling="gwpy")
    assert np.array_equal(gwpy_like, TimeSeries(alone, sample_rate=file_rate).resample(rate).value)
    with pytest.raises(MemoryInferError, match="unknown resampling"):
        cut_stretch(strain, file_rate, start, rate, start + 14, 4.0, "f", resampling="cubic")
