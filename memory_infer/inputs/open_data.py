"""Strain files as published: the analysis segment cut from a longer file and decimated to the analysis rate,
data-quality gaps checked, and an off-source PSD from the same file.

Decimation: ``scipy.signal.decimate`` with a zero-phase FIR anti-aliasing filter (Hamming-windowed, order
``DECIMATION_ORDER_PER_FACTOR`` times the decimation factor; scipy applies it by ``resample_poly``), the same
call gwpy's ``TimeSeries.resample`` makes for an integer factor. The filter runs over the stretch plus a margin
of ``pad`` seconds on either side where the file has data, so its edge transients stay outside the segment.
"""
from __future__ import annotations

import logging
import os

import numpy as np

from ..common.errors import MemoryInferError
from .readers import read_strain_stretch

logger = logging.getLogger("memory_infer")

DECIMATION_ORDER_PER_FACTOR = 64  # FIR order per unit of decimation factor (gwpy's default is 20)
PAD_SECONDS = 2.0  # filter margin either side of a stretch, where the file has data


def data_quality_seconds(path: str):
    """(start, one flag per second: True where the open-data ``quality/simple/DQmask`` has data (bit 0 set));
    ``None`` for files without that mask."""
    if not path.endswith((".h5", ".hdf5", ".hdf")):
        return None
    import h5py

    try:
        with h5py.File(path, "r") as handle:
            if "quality/simple/DQmask" not in handle:
                return None
            mask = np.asarray(handle["quality/simple/DQmask"][()], dtype=np.int64)
            dataset = handle["strain/Strain"] if "strain/Strain" in handle else None
            if dataset is not None and "Xstart" in dataset.attrs:
                start = float(dataset.attrs["Xstart"])
            elif "meta/GPSstart" in handle:
                start = float(handle["meta/GPSstart"][()])
            else:
                return None
    except OSError:
        return None
    return start, (mask & 1) == 1


def check_gaps(path: str, stretches: dict) -> list:
    """Refuse (one sentence) when a second without data overlaps one of ``stretches`` (name -> (start, end));
    return a note for gaps elsewhere in the file."""
    quality = data_quality_seconds(path)
    if quality is None:
        return []
    start, good = quality
    name = os.path.basename(path)
    seconds = start + np.arange(good.size)
    bad = seconds[~good]
    for what, (low, high) in stretches.items():
        inside = bad[(bad + 1 > low) & (bad < high)]
        if inside.size:
            raise MemoryInferError(f"strain file '{name}' has no data (data-quality mask) for {inside.size} s inside "
                                   f"the {what} ({low:.3f} to {high:.3f}), first at GPS {inside[0]:.0f}")
    if bad.size:
        return [f"strain file '{name}': {bad.size} s without data (data-quality mask) outside the analysis and PSD "
                f"stretches, first at GPS {bad[0]:.0f}"]
    return []


def decimation_factor(file_rate: float, rate: float, name: str) -> int:
    factor = file_rate / rate
    if factor < 1 - 1e-9:
        raise MemoryInferError(f"strain file '{name}' is sampled at {file_rate:g} Hz, below the analysis rate "
                               f"{rate:g} Hz")
    if abs(factor - round(factor)) > 1e-9:
        raise MemoryInferError(f"strain file '{name}' is sampled at {file_rate:g} Hz, not a whole multiple of the "
                               f"analysis rate {rate:g} Hz")
    return int(round(factor))


RESAMPLING = ("fir with margin", "gwpy", "lal")


def lal_resample(strain: np.ndarray, file_rate: float, rate: float) -> np.ndarray:
    """lal's ``ResampleREAL8TimeSeries`` (a low-pass Butterworth filter, then every ``factor``-th sample), as
    bilby_pipe's default resampling applies it to the analysis segment alone."""
    import lal

    series = lal.CreateREAL8TimeSeries("strain", lal.LIGOTimeGPS(0), 0.0, 1.0 / file_rate, lal.DimensionlessUnit,
                                       strain.size)
    series.data.data = np.asarray(strain, dtype=float)
    lal.ResampleREAL8TimeSeries(series, float(1.0 / rate))
    return np.array(series.data.data)


def decimate(strain: np.ndarray, factor: int) -> np.ndarray:
    """Anti-aliased decimation by a whole ``factor`` (zero-phase FIR, see the module text)."""
    if factor == 1:
        return np.asarray(strain, dtype=float)
    from scipy.signal import decimate as scipy_decimate

    return scipy_decimate(strain, factor, n=DECIMATION_ORDER_PER_FACTOR * factor, ftype="fir", zero_phase=True)


def cut_stretch(strain, file_rate: float, file_start: float, rate: float, start: float, duration: float,
                name: str, pad: float = PAD_SECONDS, resampling: str = RESAMPLING[0]) -> np.ndarray:
    """``duration`` seconds from ``start`` at ``rate``, cut from a series starting at ``file_start`` at
    ``file_rate`` (decimated when that is higher): by default with the filter margin taken from the file where it
    exists; ``resampling = "gwpy"`` or ``"lal"`` resamples the stretch alone, as bilby_pipe does (gwpy's
    ``TimeSeries.resample`` with its defaults, or :func:`lal_resample`)."""
    factor = decimation_factor(file_rate, rate, name)
    if resampling not in RESAMPLING:
        raise MemoryInferError(f"unknown resampling '{resampling}'; choose one of {', '.join(RESAMPLING)}")
    if resampling != RESAMPLING[0]:
        pad = 0.0
    file_end = file_start + strain.size / file_rate
    tolerance = 0.5 / file_rate
    if start < file_start - tolerance or start + duration > file_end + tolerance:
        raise MemoryInferError(f"strain file '{name}' covers {file_start:.3f} to {file_end:.3f}, not the stretch "
                               f"{start:.3f} to {start + duration:.3f}")
    offset = (start - file_start) * file_rate
    if abs(offset - round(offset)) > 1e-3:
        raise MemoryInferError(f"the stretch starting at {start:.6f} does not fall on a sample of strain file "
                               f"'{name}' (sampled at {file_rate:g} Hz from {file_start:.6f})")
    first, count = int(round(offset)), int(round(duration * rate)) * factor
    margin = int(round(pad * rate)) * factor  # a whole number of output samples keeps the decimation phase
    low, high = max(0, first - margin), min(strain.size, first + count + margin)
    low = first - ((first - low) // factor) * factor
    if factor == 1 or resampling == RESAMPLING[0]:
        reduced = decimate(strain[low:high], factor)
    elif resampling == "lal":
        reduced = lal_resample(strain[low:high], file_rate, rate)
    else:  # gwpy's TimeSeries.resample for an integer factor: scipy's decimate with its default FIR order (20 x factor)
        from scipy.signal import decimate as scipy_decimate

        reduced = scipy_decimate(strain[low:high], factor, ftype="fir", zero_phase=True)
    skip = (first - low) // factor
    out = reduced[skip:skip + count // factor]
    if out.size != count // factor:
        raise MemoryInferError(f"strain file '{name}' holds too few samples for the stretch {start:.3f} to "
                               f"{start + duration:.3f}")
    return out


def _covers(name: str, file_start: float, file_end: float, start: float, duration: float, file_rate: float) -> None:
    """One sentence when a strain file does not cover the stretch from ``start`` for ``duration`` seconds."""
    tolerance = 0.5 / file_rate
    if start < file_start - tolerance or start + duration > file_end + tolerance:
        raise MemoryInferError(f"strain file '{name}' covers {file_start:.3f} to {file_end:.3f}, not the stretch "
                               f"{start:.3f} to {start + duration:.3f}")


def segment_from_file(path: str, rate: float, start: float, duration: float, channel=None,
                      psd_stretch: tuple | None = None, resampling: str = RESAMPLING[0]):
    """(segment strain at ``rate``, notes) from a strain file of any length and a whole-multiple rate."""
    name = os.path.basename(path)
    strain, file_rate, file_start, whole_start, whole_end = read_strain_stretch(
        path, channel, (start - PAD_SECONDS - 1.0, start + duration + PAD_SECONDS + 1.0))
    _covers(name, whole_start, whole_end, start, duration, file_rate)
    stretches = {"analysis segment": (start, start + duration)}
    if psd_stretch is not None:
        stretches["PSD stretch"] = psd_stretch
    notes = check_gaps(path, stretches)
    segment = cut_stretch(strain, file_rate, file_start, rate, start, duration, name, resampling=resampling)
    how = {"lal": "lal's ResampleREAL8TimeSeries on the segment alone",
           "gwpy": "gwpy's resample (zero-phase FIR, order 20 per unit factor) on the segment alone"}.get(
        resampling, f"zero-phase FIR, order {DECIMATION_ORDER_PER_FACTOR} per unit factor")
    if file_rate > rate or strain.size != segment.size:
        notes.append(f"strain file '{name}' ({whole_end - whole_start:g} s at {file_rate:g} Hz): {duration:g} s "
                     f"from {start:.3f} cut" + (f", decimated to {rate:g} Hz ({how})" if file_rate > rate else ""))
    return segment, notes


def off_source_stretch(file_start: float, file_end: float, start: float, duration: float,
                       psd_duration: float) -> tuple:
    """The PSD stretch: up to ``psd_duration`` seconds just before the segment, else just after it."""
    before = start - file_start
    after = file_end - (start + duration)
    if before >= psd_duration or before >= after:
        length = min(psd_duration, before)
        return start - length, start
    length = min(psd_duration, after)
    return start + duration, start + duration + length


def off_source_psd(path: str, rate: float, start: float, duration: float, psd_duration: float | None = None,
                   segment: float | None = None, overlap: float = 0.5, channel=None):
    """(frequencies, PSD, note) by Welch's method (scipy.signal.welch, Hann window) on the same file's data next
    to the analysis segment (never overlapping it), cut and decimated like the segment."""
    from scipy.signal import welch

    name = os.path.basename(path)
    _, file_rate, _, file_start, file_end = read_strain_stretch(path, channel, (start, start))  # the file's extent
    segment = float(segment or duration)
    low, high = off_source_stretch(file_start, file_end, start, duration, float(psd_duration or 32 * duration))
    usable = np.floor((high - low) * rate + 1e-6) / rate
    if usable < 2 * segment:
        raise MemoryInferError(f"strain file '{name}' holds {usable:g} s of off-source data next to the segment, "
                               f"fewer than two {segment:g} s Welch segments; give a PSD file or a longer strain file")
    if low < start:
        low = high - usable
    else:
        high = low + usable
    check_gaps(path, {"PSD stretch": (low, high)})
    strain, file_rate, part_start, _, _ = read_strain_stretch(path, channel, (low - PAD_SECONDS - 1.0,
                                                                             high + PAD_SECONDS + 1.0))
    data = cut_stretch(strain, file_rate, part_start, rate, low, high - low, name)
    per_segment = int(round(segment * rate))
    step = per_segment - int(overlap * per_segment)
    frequencies, psd = welch(data, fs=rate, nperseg=per_segment, noverlap=int(overlap * per_segment))
    count = 1 + (data.size - per_segment) // step
    keep = (frequencies > 0) & (psd > 0)
    note = (f"PSD by Welch's method on {high - low:g} s of off-source data ({low:.3f} to {high:.3f}) of "
            f"'{name}': {segment:g} s Hann segments, {overlap:.0%} overlap, {count} averages")
    return frequencies[keep], psd[keep], note


INVENTED_TAG = "INVENTED_DEMO"  # our own tag for invented data: never the archive's name


def invented_data_name(detector: str, start: int, duration: int, rate: float) -> str:
    """A file name in the archive's pattern (observatory, detector and tag, GPS start, seconds) but with our own
    tag, so invented data cannot be taken for published data: ``H-H1_INVENTED_DEMO_4KHZ-1000000000-32.hdf5``."""
    return f"{detector[0]}-{detector}_{INVENTED_TAG}_{int(round(rate / 1024))}KHZ-{int(start)}-{int(duration)}.hdf5"


def write_open_data(path: str, strain, rate: float, start: float, detector: str, data_mask=None) -> None:
    """A strain file in the open-data archive's layout: ``strain/Strain`` (attributes ``Xstart``, ``Xspacing``,
    ``Npoints``, units), ``meta/*`` (``GPSstart``, ``Duration``, ``Detector``, ``Observatory``, ...), and
    ``quality/simple`` with a per-second ``DQmask`` (bit 0: data present) and its short names."""
    import h5py

    strain = np.asarray(strain, dtype=float)
    duration = int(round(strain.size / rate))
    mask = np.full(duration, 127, dtype=np.int32) if data_mask is None else np.asarray(data_mask, dtype=np.int32)
    with h5py.File(path, "w") as handle:
        dataset = handle.create_dataset("strain/Strain", data=strain, compression="gzip")
        for key, value in (("Xstart", int(start)), ("Xspacing", 1.0 / rate), ("Npoints", strain.size),
                           ("Xunits", "second"), ("Xlabel", "GPS time"), ("Yunits", ""), ("Ylabel", "Strain")):
            dataset.attrs[key] = value
        meta = handle.create_group("meta")
        for key, value in (("GPSstart", int(start)), ("Duration", duration), ("Detector", detector),
                           ("Observatory", detector[0]), ("Type", "StrainTimeSeries"),
                           ("Description", "Strain data time series (invented)"), ("UTCstart", "")):
            meta.create_dataset(key, data=value)
        simple = handle.create_group("quality/simple")
        simple.create_dataset("DQmask", data=mask)
        simple.create_dataset("DQShortnames", data=np.array([b"DATA", b"CBC_CAT1", b"CBC_CAT2", b"CBC_CAT3",
                                                              b"BURST_CAT1", b"BURST_CAT2", b"BURST_CAT3"]))
        simple.create_dataset("DQDescriptions", data=np.array([b"data present"] * 7))
        handle.create_group("quality/injections")
