"""Files in: strain, PSDs and posterior samples, each checked on entry (one sentence per problem)."""
from __future__ import annotations

import json
import logging
import os

import numpy as np

from ..common.errors import MemoryInferError
from .release_layout import PLACES, PSDS, SAMPLES

logger = logging.getLogger("memory_infer")


# ---------------------------------------------------------------- inputs, checked on entry

def _fail(message: str):
    raise MemoryInferError(message)


def _exists(path: str, what: str):
    if not os.path.isfile(path):
        _fail(f"{what} file '{path}' does not exist")


def _stretch_indices(total: int, rate: float, start: float, stretch) -> slice:
    """The samples of a series (``total`` samples at ``rate`` from ``start``) that cover ``stretch`` = (first, last)
    seconds, one sample beyond each end; the whole series when ``stretch`` is None."""
    if stretch is None:
        return slice(0, total)
    low = int(np.floor((stretch[0] - start) * rate)) - 1
    high = int(np.ceil((stretch[1] - start) * rate)) + 2
    return slice(min(max(low, 0), total), min(max(high, 0), total))


def _open_data_strain(handle, name: str, stretch=None):
    """The open-data layout: dataset ``strain/Strain`` with its sample spacing (``Xspacing``) and start
    (``Xstart``, else ``meta/GPSstart``) as attributes; ``meta/Duration`` is checked against the samples, and
    seconds that the ``quality/simple/DQmask`` marks without data (bit 0 clear) are reported. Only the samples
    covering ``stretch`` are read when it is given: (strain, rate, its start, the file's start, the file's end)."""
    if "Strain" not in handle["strain"]:
        _fail(f"open-data strain file '{name}' has no dataset 'strain/Strain'")
    dataset = handle["strain/Strain"]
    attributes = dict(dataset.attrs)
    if "Xspacing" not in attributes:
        _fail(f"open-data strain file '{name}' lacks the sample spacing attribute 'Xspacing' of strain/Strain")
    spacing = float(attributes["Xspacing"])
    if "Xstart" in attributes:
        start = float(attributes["Xstart"])
    elif "meta/GPSstart" in handle:
        start = float(handle["meta/GPSstart"][()])
    else:
        _fail(f"open-data strain file '{name}' gives no start time (attribute 'Xstart' or meta/GPSstart)")
    if spacing <= 0:
        _fail(f"open-data strain file '{name}' has a non-positive sample spacing")
    total = int(dataset.shape[0]) if dataset.ndim == 1 else 0
    if "meta/Duration" in handle and abs(float(handle["meta/Duration"][()]) - total * spacing) > spacing:
        _fail(f"open-data strain file '{name}': meta/Duration disagrees with the number of samples")
    part = _stretch_indices(total, 1.0 / spacing, start, stretch)
    strain = np.asarray(dataset[part] if dataset.ndim == 1 else dataset[()], dtype=float)
    if "quality/simple/DQmask" in handle:
        mask = np.asarray(handle["quality/simple/DQmask"][()], dtype=np.int64)
        missing = int(np.sum((mask & 1) == 0))
        if missing:
            logger.warning("open-data strain file '%s': its data-quality mask marks %d of %d seconds without data",
                           name, missing, mask.size)
    return strain, 1.0 / spacing, start + part.start * spacing, start, start + total * spacing


def read_strain(path: str, channel: str | None = None):
    """(strain, sampling rate, start time) from HDF5 (the open-data layout ``strain/Strain`` with ``Xspacing`` and
    ``Xstart``/``meta/GPSstart``, or a dataset 'strain' with attributes 'start_time' and 'sampling_rate'),
    two-column text (time, strain), or a frame file with the optional gwpy reader."""
    strain, rate, start, _, _ = read_strain_stretch(path, channel)
    return strain, rate, start


def read_strain_stretch(path: str, channel: str | None = None, stretch=None):
    """(strain, sampling rate, its start, the file's start, the file's end) of the samples covering ``stretch`` =
    (first, last) GPS seconds (one sample beyond each end), the whole file when None. An HDF5 file is read only
    there (a 4096 s file at 16 kHz is 0.5 GB); text and frame files are read whole and cut."""
    _exists(path, "strain")
    name = os.path.basename(path)
    if path.endswith(".gwf"):
        try:
            from gwpy.timeseries import TimeSeries
        except ImportError:
            _fail("reading frame files needs the optional gwpy reader: pip install 'memory_infer[frames]'")
        if not channel:
            _fail(f"frame file '{name}' needs a 'channel' in its [data.files] entry")
        series = TimeSeries.read(path, channel)
        strain, rate, start = np.asarray(series.value, float), float(series.sample_rate.value), float(series.t0.value)
    elif path.endswith((".h5", ".hdf5", ".hdf")):
        import h5py

        try:
            with h5py.File(path, "r") as handle:
                if isinstance(handle.get("strain"), h5py.Group):
                    strain, rate, start, file_start, file_end = _open_data_strain(handle, name, stretch)
                else:
                    if "strain" not in handle:
                        _fail(f"HDF5 strain file '{name}' has no dataset 'strain'")
                    dataset = handle["strain"]
                    attributes = dict(dataset.attrs) | dict(handle.attrs)
                    for key in ("start_time", "sampling_rate"):
                        if key not in attributes:
                            _fail(f"HDF5 strain file '{name}' lacks the attribute '{key}'")
                    rate, file_start = float(attributes["sampling_rate"]), float(attributes["start_time"])
                    if not rate > 0:
                        _fail(f"HDF5 strain file '{name}' has a non-positive sampling rate")
                    total = int(dataset.shape[0]) if dataset.ndim == 1 else 0
                    part = _stretch_indices(total, rate, file_start, stretch)
                    strain = np.asarray(dataset[part] if dataset.ndim == 1 else dataset[()], dtype=float)
                    start, file_end = file_start + part.start / rate, file_start + total / rate
        except OSError:
            _fail(f"strain file '{name}' is not a readable HDF5 file")
    else:
        table = _read_columns(path, "strain", 2)
        times, strain = table[:, 0], table[:, 1]
        steps = np.diff(times)
        if steps.size < 1 or np.any(steps <= 0) or np.ptp(steps) > 1e-6 * np.mean(steps):
            _fail(f"strain file '{name}' is not uniformly sampled in time")
        rate, start = 1.0 / float(np.mean(steps)), float(times[0])
    if not path.endswith((".h5", ".hdf5", ".hdf")):  # read whole: cut here
        file_start, file_end = start, start + strain.size / rate
        part = _stretch_indices(strain.size, rate, start, stretch)
        strain, start = strain[part], start + part.start / rate
    if strain.ndim != 1 or (stretch is None and strain.size < 16):
        _fail(f"strain file '{name}' holds no usable strain series")
    if not np.all(np.isfinite(strain)):
        _fail(f"strain file '{name}' contains NaN or infinite samples")
    return strain, rate, start, file_start, file_end


def _read_columns(path: str, what: str, columns: int) -> np.ndarray:
    name = os.path.basename(path)
    try:
        table = np.loadtxt(path, ndmin=2)
    except ValueError:
        _fail(f"{what} file '{name}' is not plain numeric text")
    if table.shape[1] != columns:
        _fail(f"{what} file '{name}' must have {columns} columns, found {table.shape[1]}")
    if not np.all(np.isfinite(table)):
        _fail(f"{what} file '{name}' contains NaN or infinite values")
    return table


def read_psd(path: str):
    """(frequencies, PSD) from two-column text; every value must be finite and positive."""
    _exists(path, "PSD")
    table = _read_columns(path, "PSD", 2)
    if np.any(table[:, 1] <= 0):
        _fail(f"PSD file '{os.path.basename(path)}' has non-positive values")
    if np.any(np.diff(table[:, 0]) <= 0):
        _fail(f"PSD file '{os.path.basename(path)}' has frequencies that do not increase")
    return table[:, 0], table[:, 1]


def welch_psd(path: str, sampling_rate: float, segment: float, overlap: float, channel=None):
    """PSD of off-source strain by Welch's method (scipy.signal.welch, Hann window)."""
    from scipy.signal import welch

    strain, rate, _ = read_strain(path, channel)
    if abs(rate - sampling_rate) > 1e-6 * sampling_rate:
        _fail(f"off-source strain '{os.path.basename(path)}' is sampled at {rate:g} Hz, not {sampling_rate:g} Hz")
    per_segment = int(round(segment * rate))
    if per_segment > strain.size or not 0 <= overlap < 1:
        _fail(f"off-source strain '{os.path.basename(path)}' is shorter than one {segment:g} s Welch segment, "
              "or the overlap is outside [0, 1)")
    frequencies, psd = welch(strain, fs=rate, nperseg=per_segment, noverlap=int(overlap * per_segment))
    keep = (frequencies > 0) & (psd > 0)
    count = 1 + (strain.size - per_segment) // max(1, per_segment - int(overlap * per_segment))
    note = (f"PSD by Welch's method: {segment:g} s Hann segments, {overlap:.0%} overlap, {count} averages "
            f"from {strain.size / rate:g} s of off-source strain")
    return frequencies[keep], psd[keep], note


# ---------------------------------------------------------------- catalog posterior releases

def release_analyses(handle) -> list:
    """The analyses of a catalog release file: top-level groups holding a ``posterior_samples`` table."""
    import h5py

    return [name for name, node in handle.items() if isinstance(node, h5py.Group) and SAMPLES in node]


def is_release(path: str) -> bool:
    if not path.endswith((".h5", ".hdf5", ".hdf")):
        return False
    import h5py

    try:
        with h5py.File(path, "r") as handle:
            return bool(release_analyses(handle))
    except OSError:
        return False


def scalar_text(value):
    """A dataset's value as one number or string (releases store both, often as 1-element byte arrays)."""
    value = np.asarray(value).ravel()
    if value.size == 0:
        return None
    item = value[0]
    if isinstance(item, bytes):
        item = item.decode()
    if isinstance(item, str):
        try:
            return float(item)
        except ValueError:
            return item.strip()
    return float(item) if np.isreal(item) else None


# the analysis folder mode and a release without ``samples_analysis`` take: never a mixed one, then the first model
# here that this tool runs (precessing models with higher modes first, as catalogs present them)
ANALYSIS_PREFERENCE = ("IMRPhenomXPHM", "SEOBNRv5PHM", "SEOBNRv4PHM", "IMRPhenomTPHM", "IMRPhenomXHM", "IMRPhenomTHM",
                       "TaylorT4")
MIXED_LABELS = ("mixed", "combined")


def analysis_model(group) -> str | None:
    """The waveform model an analysis group names (None when it names none)."""
    import h5py

    for place in PLACES["waveform_model"]:
        if place in group and isinstance(group[place], h5py.Dataset):
            value = scalar_text(group[place][()])
            if isinstance(value, str) and value:
                return value
    return None


def _mixed(label: str, model: str | None) -> bool:
    """Whether an analysis says it mixes several models' samples (its label, or a model naming several)."""
    return (any(word in label.lower() for word in MIXED_LABELS)
            or (model is not None and (any(word in model.lower() for word in MIXED_LABELS)
                                       or any(c in model for c in ",;+ "))))


def choose_analysis(handle, name: str) -> tuple:
    """(analysis, why) by the stated rule: a release's only analysis unless it is mixed; among several, never a mixed
    one nor one without a model, then the first model of ``ANALYSIS_PREFERENCE`` (then the label's order)."""
    from ..waveform.models import FREQUENCY_DOMAIN, SUPPORTED

    analyses = release_analyses(handle)
    models = {label: analysis_model(handle[label]) for label in analyses}
    if len(analyses) == 1 and not _mixed(analyses[0], models[analyses[0]]):
        return analyses[0], "the release's only analysis"
    runnable = set(SUPPORTED) | set(FREQUENCY_DOMAIN)
    candidates = [label for label in analyses if not _mixed(label, models[label]) and models[label] in runnable]
    if not candidates:
        described = ", ".join(f"{label} ({'mixed models' if _mixed(label, models[label]) else models[label]})"
                              for label in analyses)
        _fail(f"catalog release '{name}' holds no analysis of one model this tool runs ({described}); an analysis "
              "mixing several models' samples is never reweighted with one model")
    order = {model: rank for rank, model in enumerate(ANALYSIS_PREFERENCE)}
    chosen = min(candidates, key=lambda label: (order.get(models[label], len(order)), label))
    skipped = [label for label in analyses if label != chosen]
    return chosen, (f"chosen by rule among {len(analyses)} analyses (never a mixed one; then the order "
                    f"{', '.join(ANALYSIS_PREFERENCE)}); not taken: {', '.join(skipped)}")


def release_group(handle, name: str, analysis: str | None, why: list | None = None):
    """(group, analysis) of the named analysis, or of the one the rule chooses; ``why`` receives the reason."""
    analyses = release_analyses(handle)
    reason = "[evidence] samples_analysis"
    if analysis is None:
        analysis, reason = choose_analysis(handle, name)
    if analysis not in analyses:
        _fail(f"catalog release '{name}' has no analysis '{analysis}'; it holds {', '.join(analyses)}")
    model = analysis_model(handle[analysis])
    if _mixed(analysis, model):
        _fail(f"analysis '{analysis}' of catalog release '{name}' mixes several models' samples"
              f"{f' ({model})' if model else ''}; it is never reweighted with one model: choose one model's analysis")
    if why is not None:
        why.append(reason)
    return handle[analysis], analysis


def read_release(path: str, analysis: str | None = None) -> dict:
    """One analysis of a catalog posterior release (HDF5: a group per analysis with a structured
    ``posterior_samples`` table, a ``psds`` group of two-column arrays per detector, and the configuration and
    metadata that produced them): its samples, PSDs, reference frequency and waveform model."""
    import h5py
    import pandas as pd

    _exists(path, "posterior samples")
    name = os.path.basename(path)
    try:
        with h5py.File(path, "r") as handle:
            group, analysis = release_group(handle, name, analysis)
            table = group[SAMPLES]
            if isinstance(table, h5py.Dataset) and table.dtype.names:
                data = table[()]
                frame = pd.DataFrame({field: np.asarray(data[field]) for field in table.dtype.names})
            elif isinstance(table, h5py.Group):
                frame = pd.DataFrame({k: np.asarray(v[()]) for k, v in table.items() if isinstance(v, h5py.Dataset)})
            else:
                _fail(f"catalog release '{name}': {analysis}/{SAMPLES} is not a table of named columns")
            psds = {}
            if isinstance(group.get(PSDS), h5py.Group):
                for detector, dataset in group[PSDS].items():
                    values = np.asarray(dataset[()], dtype=float)
                    if values.ndim == 2 and values.shape[1] == 2:
                        psds[detector] = values
            found = {}
            for key in ("reference_frequency", "waveform_model"):
                for place in PLACES[key]:
                    if place in group and isinstance(group[place], h5py.Dataset):
                        value = scalar_text(group[place][()])
                        if value is not None:
                            found[key] = float(value) if key == "reference_frequency" else str(value)
                            break
    except OSError:
        _fail(f"catalog release '{name}' is not a readable HDF5 file")
    if frame.empty:
        _fail(f"catalog release '{name}': analysis '{analysis}' holds no samples")
    return {"samples": frame, "psds": psds, "analysis": analysis, **found}


def read_sample_file(path: str, analysis: str | None = None) -> dict:
    """Any posterior-samples file: ``samples``, ``psds`` (a catalog release's, else empty) and, when the file says,
    the ``reference_frequency`` and ``waveform_model`` the samples were drawn with."""
    if is_release(path):
        return read_release(path, analysis)
    return {"samples": read_samples(path), "psds": {}, **read_sample_settings(path)}


def read_sample_settings(path: str) -> dict:
    """The reference frequency and waveform model the samples were drawn with, from a bilby result file's
    metadata (``meta_data/likelihood/waveform_arguments`` in JSON or HDF5); empty when the file does not say
    (a catalog release's come with :func:`read_release`)."""
    try:
        if path.endswith(".json"):
            with open(path) as handle:
                content = json.load(handle)
            meta = content.get("meta_data") if isinstance(content, dict) else None
            arguments = ((meta or {}).get("likelihood") or {}).get("waveform_arguments") or {}
        elif path.endswith((".h5", ".hdf5", ".hdf")):
            import h5py

            with h5py.File(path, "r") as handle:
                node = handle.get("meta_data/likelihood/waveform_arguments")
                arguments = ({k: v[()] for k, v in node.items() if isinstance(v, h5py.Dataset)}
                             if isinstance(node, h5py.Group) else {})
        else:
            return {}
    except (ValueError, OSError, KeyError, AttributeError, TypeError):
        return {}
    found = {}
    if arguments.get("reference_frequency") is not None:
        found["reference_frequency"] = float(np.asarray(arguments["reference_frequency"]).ravel()[0])
    model = arguments.get("waveform_approximant")
    if model is not None:
        found["waveform_model"] = model.decode() if isinstance(model, bytes) else str(model)
    return found


def read_samples(path: str, analysis: str | None = None):
    """Posterior samples as a pandas DataFrame from CSV, whitespace-separated text with a header (bilby's
    ``*_posterior_samples.dat``), JSON (bilby result or a plain table) or HDF5 (bilby result, or a table)."""
    import pandas as pd

    _exists(path, "posterior samples")
    name = os.path.basename(path)
    if is_release(path):
        return read_release(path, analysis)["samples"]
    try:
        if path.endswith(".csv"):
            frame = pd.read_csv(path)
        elif path.endswith((".dat", ".txt")):
            frame = pd.read_csv(path, sep=r"\s+")
        elif path.endswith(".json"):
            with open(path) as handle:
                content = json.load(handle)
            if isinstance(content, dict) and "posterior" in content:
                content = content["posterior"]
                content = content.get("content", content) if isinstance(content, dict) else content
            frame = pd.DataFrame(content)
        elif path.endswith((".h5", ".hdf5", ".hdf")):
            import h5py

            with h5py.File(path, "r") as handle:
                group = handle["posterior"] if "posterior" in handle else handle
                if isinstance(group, h5py.Dataset):
                    frame = pd.DataFrame(group[()])
                else:
                    frame = pd.DataFrame({k: np.asarray(v[()]) for k, v in group.items() if isinstance(v, h5py.Dataset)})
        else:
            _fail(f"posterior samples file '{name}' must end in .csv, .dat, .txt, .json, .h5 or .hdf5")
    except (ValueError, OSError, KeyError, json.JSONDecodeError):
        _fail(f"posterior samples file '{name}' could not be read as a table")
    if frame.empty:
        _fail(f"posterior samples file '{name}' holds no samples")
    return frame
