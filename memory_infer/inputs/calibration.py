"""Detector calibration uncertainty: bilby's cubic-spline calibration model per detector.

The model multiplies each detector's response by ``(1 + dA(f)) (2 + i dphi(f)) / (2 - i dphi(f))``, with dA and
dphi cubic splines through ``spline_nodes`` nodes spaced evenly in log frequency (bilby's ``CubicSpline``). The
node values are parameters ``recalib_<detector>_amplitude_<k>`` and ``recalib_<detector>_phase_<k>`` with
Gaussian priors:

- ``kind = "constant"``: mean 0 and the same ``amplitude_sigma`` (fraction) and ``phase_sigma`` (radians) at every
  node (bilby's ``CalibrationPriorDict.constant_uncertainty_spline``); a zero sigma fixes the nodes at 0, so the
  factor is exactly 1 and every number equals the run without calibration;
- ``kind = "envelope"``: mean and sigma from a calibration envelope file per detector (bilby's
  ``CalibrationPriorDict.from_envelope_file``: columns frequency, median amplitude, median phase, amplitude and
  phase at -1 sigma, at +1 sigma), with ``correction_type`` "data" or "template" as bilby defines it.

A point that carries no calibration parameters (an injection, a reference point, samples without them) is
evaluated at the prior mean of every node: :class:`NominalDefaultSpline` resets to it on every call, where bilby's
own model would silently keep the values of the previous call.
"""
from __future__ import annotations

import os

import numpy as np
from bilby.gw.detector.calibration import CubicSpline

from ..common.errors import MemoryInferError

PREFIX = "recalib_{}_"


class NominalDefaultSpline(CubicSpline):
    """bilby's ``CubicSpline`` whose node values not given in a call fall back to the prior means."""

    def __init__(self, prefix, minimum_frequency, maximum_frequency, n_points, nominal):
        super().__init__(prefix, minimum_frequency, maximum_frequency, n_points)
        self.nominal = dict(nominal)

    def set_calibration_parameters(self, **params):
        self.params = dict(self.nominal)
        self.params.update({key[len(self.prefix):]: params[key] for key in params if key.startswith(self.prefix)})


def calibration_priors(settings, detector: str, minimum_frequency: float, maximum_frequency: float,
                       directory: str = ".", envelope_file: str | None = None):
    """bilby priors of one interferometer's spline nodes (fixed at 0 where a sigma is 0); an envelope's also
    carry bilby's fixed node frequencies, which the model holds instead. ``envelope_file`` defaults to the
    interferometer's entry in ``envelope_files``."""
    import bilby

    nodes = int(settings.spline_nodes)
    label = detector
    if settings.kind == "constant":
        amplitude, phase = float(settings.amplitude_sigma), float(settings.phase_sigma)
        priors = bilby.gw.prior.CalibrationPriorDict()
        for kind, sigma in (("amplitude", amplitude), ("phase", phase)):
            for k in range(nodes):  # as bilby's constant_uncertainty_spline, but a zero sigma fixes the node
                name = f"recalib_{label}_{kind}_{k}"
                priors[name] = (bilby.core.prior.Gaussian(0.0, sigma, name=name) if sigma > 0
                                else bilby.core.prior.DeltaFunction(0.0, name=name))
        return priors
    file_name = envelope_file or settings.envelope_files.get(detector)
    if file_name is None:
        raise MemoryInferError(f"[calibration] has kind 'envelope' but no file for {detector} in envelope_files")
    path = os.path.join(directory, file_name)
    if not os.path.isfile(path):
        raise MemoryInferError(f"calibration envelope file '{file_name}' for {detector} does not exist")
    try:
        table = np.genfromtxt(path)
    except ValueError:
        table = None
    if table is None or table.ndim != 2 or table.shape[1] != 7 or not np.all(np.isfinite(table)):
        raise MemoryInferError(f"calibration envelope file '{file_name}' must have 7 numeric columns: "
                               "frequency, median amplitude, median phase, amplitude and phase at -1 sigma, at "
                               "+1 sigma")
    if table[0, 0] > minimum_frequency or table[-1, 0] < maximum_frequency:
        raise MemoryInferError(f"calibration envelope file '{file_name}' covers {table[0, 0]:g}-"
                               f"{table[-1, 0]:g} Hz, not the spline's {minimum_frequency:g}-{maximum_frequency:g} Hz")
    return bilby.gw.prior.CalibrationPriorDict.from_envelope_file(
        path, minimum_frequency, maximum_frequency, nodes, label, correction_type=settings.correction_type)


def _nominal(priors, detector: str) -> dict:
    prefix = PREFIX.format(detector)
    out = {}
    for name, prior in priors.items():
        if name.startswith(prefix) and "_frequency_" not in name:
            out[name[len(prefix):]] = float(prior.peak if getattr(prior, "is_fixed", False) else prior.mu)
    return out


def attach_calibration(settings, detectors, priors, directory: str = ".") -> list:
    """Give every detector a spline calibration model and add its node priors to ``priors`` (in place); returns
    one sentence per detector saying what was attached (empty for ``kind = "none"``). ``settings`` is
    :class:`memory_infer.inputs.settings.CalibrationSettings`; a release's own envelope tables (``envelopes``)
    are written to a temporary folder for bilby's reader."""
    if settings.kind == "none":
        return []
    if not settings.envelopes:
        return _attach(settings, detectors, priors, directory)
    import dataclasses
    import tempfile

    with tempfile.TemporaryDirectory() as folder:
        files = {}
        for name, table in settings.envelopes.items():
            np.savetxt(os.path.join(folder, f"{name}.txt"), table)
            files[name] = os.path.join(folder, f"{name}.txt")
        return _attach(dataclasses.replace(settings, envelope_files=files), detectors, priors, folder)


def _attach(settings, detectors, priors, directory: str) -> list:
    from .detectors import detector_of, per_interferometer

    names = list(dict.fromkeys(detector_of(detector.name) for detector in detectors))
    files = per_interferometer(settings.envelope_files, names, "envelope_files in [calibration]")
    notes = []
    for detector in detectors:
        low = float(settings.minimum_frequency or detector.minimum_frequency)
        high = float(settings.maximum_frequency or detector.maximum_frequency)
        if not 0 < low < high:
            raise MemoryInferError("[calibration] minimum_frequency must be positive and below maximum_frequency")
        node_priors = calibration_priors(settings, detector.name, low, high, directory, files.get(detector.name))
        for name, prior in node_priors.items():
            # fixed nodes and the node frequencies stay out of the sampled priors: bilby's sampler draws a random
            # number even for a fixed prior, so they would change every seeded run; the model holds them instead
            if not prior.is_fixed:
                priors[name] = prior
        detector.calibration_model = NominalDefaultSpline(PREFIX.format(detector.name), low, high,
                                                          int(settings.spline_nodes),
                                                          _nominal(node_priors, detector.name))
        free = sum(1 for name, p in node_priors.items() if "_frequency_" not in name and not p.is_fixed)
        notes.append(f"{detector.name}: cubic-spline calibration, {settings.spline_nodes} nodes from {low:g} to "
                     f"{high:g} Hz ({settings.kind}{', ' + str(free) + ' free parameters' if free else ', fixed'})")
    return notes


def calibration_names(priors) -> list:
    """The sampled calibration parameters among ``priors`` (not the fixed node frequencies)."""
    return [name for name, prior in priors.items() if name.startswith("recalib_")
            and not getattr(prior, "is_fixed", False)]


def draw_calibration(priors, count: int, seed: int) -> dict:
    """``count`` draws of every sampled calibration parameter from its prior (a seeded generator)."""
    names = calibration_names(priors)
    generator = np.random.default_rng(seed)
    out = {}
    for name in names:
        prior = priors[name]
        out[name] = prior.rescale(generator.uniform(size=count))
    return out
