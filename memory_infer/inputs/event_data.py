"""One event's data and priors from its settings: simulated or read from files, checked on entry."""
from __future__ import annotations

import contextlib
import logging
import os

import numpy as np

from ..common.errors import MemoryInferError
from .checks import SOURCE_PARAMETERS, ZERO_DEFAULTS, check_physical, check_prior_range
from .detectors import configured_detectors, detector_of, empty_detectors, interferometers_of, per_interferometer

logger = logging.getLogger("memory_infer")


def injection_parameters(data, injection: dict) -> dict:
    """Injection values (``[injection]``) with zero spins by default, memory_amplitude 1 by default, checked;
    ``data`` (:class:`memory_infer.inputs.settings.DataSettings`) places the merger when the table does not."""
    values = dict(ZERO_DEFAULTS, memory_amplitude=1.0)
    values["geocent_time"] = data.start_time + (data.duration - 2.0 if data.duration > 3 else data.duration / 2)
    values.update({k: float(v) for k, v in injection.items()})
    for key in SOURCE_PARAMETERS:
        if key not in values:
            raise MemoryInferError(f"the [injection] section needs '{key}'")
    check_physical(values, "the injection")
    return values


# ---------------------------------------------------------------- priors

def _prior(name: str, spec, injection: dict | None):
    import bilby

    prior = bilby.core.prior
    if isinstance(spec, bool) or not isinstance(spec, (int, float, dict)):
        raise MemoryInferError(f"prior for '{name}' must be a number (fixed) or a table with a 'kind'")
    if isinstance(spec, (int, float)):
        check_physical({name: float(spec)}, "[priors]")
        return prior.DeltaFunction(float(spec), name=name)
    kind = spec.get("kind")
    try:
        low, high = float(spec.get("minimum", np.nan)), float(spec.get("maximum", np.nan))
        if kind == "fixed_at_injection":
            if injection is None or name not in injection:
                raise MemoryInferError(f"prior for '{name}' is fixed at the injection, but there is no injection value")
            return prior.DeltaFunction(injection[name], name=name)
        if not (np.isfinite(low) and np.isfinite(high) and low < high):
            raise MemoryInferError(f"prior for '{name}' needs finite 'minimum' below 'maximum'")
        check_prior_range(name, low, high)
        if kind == "uniform":
            return prior.Uniform(low, high, name=name)
        if kind == "periodic":
            return prior.Uniform(low, high, name=name, boundary="periodic")
        if kind == "sine":
            return prior.Sine(minimum=low, maximum=high, name=name)
        if kind == "cosine":
            return prior.Cosine(minimum=low, maximum=high, name=name)
        if kind == "power_law":
            return prior.PowerLaw(float(spec.get("alpha", 2.0)), low, high, name=name)
        if kind == "comoving_volume":
            return bilby.gw.prior.UniformSourceFrame(minimum=low, maximum=high, name=name)
        if kind == "log_uniform":
            return prior.LogUniform(low, high, name=name)
    except (TypeError, ValueError) as error:
        raise MemoryInferError(f"prior for '{name}' could not be built ({error})") from None
    raise MemoryInferError(f"prior kind '{kind}' for '{name}' is unknown; use uniform, periodic, sine, cosine, "
                           "power_law, comoving_volume, log_uniform or fixed_at_injection")


def build_priors(specs: dict, injection: dict | None):
    """bilby priors: the ``[priors]`` table's ones, the rest fixed at the injection (simulated data only)."""
    import bilby

    priors = bilby.core.prior.PriorDict()
    specs = dict(specs)
    if "memory_amplitude" in specs:
        raise MemoryInferError("the memory amplitude's prior is set by the hypotheses, not in [priors]")
    for name, spec in specs.items():
        priors[name] = _prior(name, spec, injection)
    has_masses = ("mass_1" in priors and "mass_2" in priors) or ("chirp_mass" in priors and "mass_ratio" in priors)
    aligned = {f"{kind}_{i}" for i in ("1", "2") if f"chi_{i}" in priors for kind in ("a", "tilt")}
    for name in SOURCE_PARAMETERS:
        if name in priors or (name in ("mass_1", "mass_2") and has_masses):
            continue
        if name in aligned:  # aligned spin chi_i sampled: a fixed a_i would override it in bilby's conversion
            continue
        if injection is not None and name in injection:
            priors[name] = bilby.core.prior.DeltaFunction(injection[name], name=name)
        elif name in ZERO_DEFAULTS:
            priors[name] = bilby.core.prior.DeltaFunction(0.0, name=name)
        else:
            raise MemoryInferError(f"parameter '{name}' has no prior in [priors] and no injection value")
    if "chirp_mass" in priors and "mass_1" not in priors:
        priors["mass_1"] = bilby.core.prior.Constraint(1, 1000, name="mass_1")
        priors["mass_2"] = bilby.core.prior.Constraint(1, 1000, name="mass_2")
    return priors


# ---------------------------------------------------------------- detector data

def simulated_detectors(data, injection: dict, generator, rng):
    """Gaussian noise drawn from ``rng`` (a ``numpy.random.Generator``), or zero noise, from the named curves, with
    the injection added; ``data`` is :class:`memory_infer.inputs.settings.DataSettings`."""
    detectors = configured_detectors(list(data.detectors), data.noise_curves, data.noise_curve,
                                     data.minimum_frequency, data.maximum_frequency)
    with bilby_draws_from(rng):
        if data.noise == "zero":
            detectors.set_strain_data_from_zero_noise(data.sampling_rate, data.duration, data.start_time)
        else:
            detectors.set_strain_data_from_power_spectral_densities(data.sampling_rate, data.duration, data.start_time)
    detectors.inject_signal(waveform_generator=generator, parameters=injection, raise_error=False)
    return detectors


@contextlib.contextmanager
def bilby_draws_from(rng):
    """bilby draws its random numbers (noise, prior draws, equal-weight resampling) from one module-level
    generator and takes none as an argument; this hands it ``rng`` inside the block and restores the previous one
    after, so that randomness stays with the generator the caller passed."""
    from bilby.core.utils import random

    previous = random.Generator.rng
    random.Generator.rng = rng
    try:
        yield rng
    finally:
        random.Generator.rng = previous


def file_detectors(data, sample_psds: dict | None = None, samples_name: str | None = None):
    """Strain and PSD per detector from files named in ``[data.files.NAME]`` (``data``:
    :class:`memory_infer.inputs.settings.DataSettings`); ``psd_from_samples = true`` takes the detector's PSD
    from the samples file (a catalog release's ``psds`` group, ``sample_psds``)."""
    return detectors_from_files(data.files, float(data.sampling_rate), float(data.duration), float(data.start_time),
                                float(data.minimum_frequency), data.maximum_frequency, float(data.window_roll_off),
                                data.directory, sample_psds or {}, samples_name, data.resampling)


def detectors_from_files(files: dict, sampling_rate: float, duration: float, start_time: float,
                         minimum_frequency: float, maximum_frequency: float | None = None, roll_off: float = 0.2,
                         directory: str = ".", sample_psds: dict | None = None, samples_name: str | None = None,
                         resampling: str = "fir with margin"):
    """bilby interferometers with strain and PSD read from files, checked against the segment.

    ``files`` maps a detector name to ``{"strain": path, "psd": path}`` (or ``"psd_from_strain"``: off-source
    strain for Welch's method, with optional ``welch_segment``, ``welch_overlap``, and ``channel`` for frames);
    relative paths are taken from ``directory``. A detector of several interferometers (bilby's ET: ET1, ET2,
    ET3) takes its strain per interferometer (``files["ET1"]``...); settings under its own name (a PSD file)
    apply to each of them. A strain file may be longer than the segment and sampled at a
    whole multiple of ``sampling_rate`` (:func:`file_segment`); ``psd_off_source = true`` takes the PSD by Welch's
    method from the same file's data next to the segment.
    """
    import bilby

    from .readers import read_psd, welch_psd

    names = list(dict.fromkeys(detector_of(str(key)) for key in files))
    entries = per_interferometer(files, names, "[data.files]")
    for name in names:
        members = interferometers_of(name)
        shared = files.get(name)
        if len(members) > 1 and isinstance(shared, dict) and {"strain", "psd_from_strain"} & set(shared):
            raise MemoryInferError(f"[data.files.{name}] gives one strain file to the {len(members)} "
                                   f"interferometers {', '.join(members)}; give each its own "
                                   f"([data.files.{members[0]}] strain = ...)")
    detectors = empty_detectors(names)
    notes = []
    rate, duration, start = float(sampling_rate), float(duration), float(start_time)
    for detector in detectors:
        entry = entries.get(detector.name)
        if not isinstance(entry, dict) or "strain" not in entry:
            raise MemoryInferError(f"[data.files.{detector.name}] needs a 'strain' file")
        path = os.path.join(directory, entry["strain"])
        strain, psd_entry, found = file_segment(path, entry, rate, duration, start, resampling)
        notes.extend(f"{detector.name}: {note}" for note in found)
        detector.strain_data.roll_off = float(roll_off)
        detector.strain_data.set_from_time_domain_strain(strain, sampling_frequency=rate, duration=duration,
                                                         start_time=start)
        if psd_entry is not None:
            frequencies, psd = psd_entry
        elif entry.get("psd_from_samples"):
            if detector.name not in (sample_psds or {}):
                where = f"the samples file '{samples_name}'" if samples_name else "no samples file"
                raise MemoryInferError(f"[data.files.{detector.name}] takes its PSD from the samples file, but "
                                       f"{where} holds no PSD for {detector.name}")
            table = sample_psds[detector.name]
            keep = table[:, 1] > 0
            frequencies, psd = table[keep, 0], table[keep, 1]
        elif "psd" in entry:
            frequencies, psd = read_psd(os.path.join(directory, entry["psd"]))
        elif "psd_from_strain" in entry:
            frequencies, psd, note = welch_psd(os.path.join(directory, entry["psd_from_strain"]), rate,
                                               float(entry.get("welch_segment", 4.0)),
                                               float(entry.get("welch_overlap", 0.5)), entry.get("channel"))
            logger.info("%s: %s", detector.name, note)
        else:
            raise MemoryInferError(f"[data.files.{detector.name}] needs a 'psd' file, 'psd_from_strain', "
                                   "'psd_from_samples = true' or 'psd_off_source = true'")
        detector.power_spectral_density = bilby.gw.detector.PowerSpectralDensity(
            frequency_array=frequencies, psd_array=psd)
        detector.minimum_frequency = float(minimum_frequency)
        if maximum_frequency:
            detector.maximum_frequency = float(maximum_frequency)
        band = detector.power_spectral_density_array[detector.frequency_mask]
        if not np.all(np.isfinite(band)) or np.any(band <= 0):
            raise MemoryInferError(f"the PSD for {detector.name} does not cover the analysis band "
                                   f"{detector.minimum_frequency:g}-{detector.maximum_frequency:g} Hz")
    detectors.input_notes = notes  # how each file became the segment (cuts, decimation, gaps, PSD), for the result
    return detectors


def file_segment(path: str, entry: dict, rate: float, duration: float, start: float,
                 resampling: str = "fir with margin"):
    """(segment strain, (frequencies, PSD) when ``psd_off_source`` asks for one else None, notes) from a strain
    file as published: cut, decimated and gap-checked (:mod:`memory_infer.inputs.open_data`)."""
    from .open_data import off_source_psd, segment_from_file

    psd = None
    if entry.get("psd_off_source"):
        frequencies, values, note = off_source_psd(path, rate, start, duration, entry.get("psd_duration"),
                                                   entry.get("welch_segment"), float(entry.get("welch_overlap", 0.5)),
                                                   entry.get("channel"))
        psd = (frequencies, values)
    strain, notes = segment_from_file(path, rate, start, duration, entry.get("channel"), resampling=resampling)
    if psd is not None:
        notes.append(note)
    for line in notes:
        logger.info("%s", line)
    return strain, psd, notes
