"""The data behind an event's figures, computed once at run time and stored in the result, so a report
can be redrawn from the result file alone."""
from __future__ import annotations

import numpy as np

from ..results.estimates import grid_index
from ..waveform.source import combined

WINDOW = (-0.25, 0.1)  # s around the merger at the geocentre
SPECTRUM_POINTS = 600  # log-spaced frequencies kept for the spectrum figure


def _polarizations(generator, point):
    oscillatory, memory = generator.parts(point, raise_errors=True)
    with_memory = combined(oscillatory, memory, 1.0)
    return oscillatory, memory, with_memory


def whitened_series(detectors, generator, point) -> dict:
    """Whitened data and the model with (A = 1) and without memory per detector, around the merger."""
    oscillatory, _, with_memory = _polarizations(generator, point)
    out = {}
    for detector in detectors:
        mask = detector.frequency_mask
        asd = np.sqrt(detector.power_spectral_density_array)
        times = detector.time_array - point["geocent_time"]

        def whiten(series):
            white = np.zeros_like(series)
            white[mask] = series[mask] / asd[mask]
            return np.fft.irfft(white, n=len(times)) * np.sqrt(2 / detector.sampling_frequency) * detector.sampling_frequency

        keep = (times > WINDOW[0]) & (times < WINDOW[1])
        out[detector.name] = {
            "time": times[keep].tolist(),
            "data": whiten(detector.frequency_domain_strain)[keep].tolist(),
            "model_without_memory": whiten(detector.get_detector_response(oscillatory, point))[keep].tolist(),
            "model_with_memory": whiten(detector.get_detector_response(with_memory, point))[keep].tolist(),
        }
    return out


def memory_spectrum(detectors, generator, point, minimum_frequency: float) -> dict:
    """Each detector's memory response 2 sqrt(f) |h(f)| and noise ASD (both strain per root hertz, comparable on
    one axis; e.g. CQG 32, 015014 (2015)) on log-spaced frequencies of the analysis band
    (outside it the response is masked to zero and there is nothing to draw)."""
    _, memory, _ = _polarizations(generator, point)
    out = {"minimum_frequency": float(minimum_frequency), "detectors": {}}
    for detector in detectors:
        f = detector.frequency_array
        positive = np.flatnonzero((f > 0) & (f >= minimum_frequency) & detector.frequency_mask)
        pick = positive[np.unique(np.geomspace(1, positive.size, SPECTRUM_POINTS).astype(int) - 1)]
        response = detector.get_detector_response(memory, point)[pick]
        psd = detector.power_spectral_density_array[pick]
        asd = np.where(np.isfinite(psd), np.sqrt(np.abs(psd)), np.nan)
        out["detectors"][detector.name] = {"frequency": f[pick].tolist(),
                                           "memory": (2 * np.sqrt(f[pick]) * np.abs(response)).tolist(),
                                           "asd": [None if not np.isfinite(a) else float(a) for a in asd]}
    return out


def importance_weights(grid, tables: dict) -> dict:
    """Per sample set, each sample's log importance weight ``ln L(A_1) - ln L(a0)`` from its ``(a0, table)``
    (``table``: ``ln L`` on ``grid``, rows samples), with ``A_1`` = 1 for samples drawn under A = 0 and 0 for any
    other ``a0``: the weight of the Bayes factor the samples estimate directly."""
    out = {}
    for name, (base, table) in tables.items():
        table = np.asarray(table)
        target = grid_index(grid, 1.0 if base == 0 else 0.0, exact=False)
        out[name] = (table[:, target] - table[:, grid_index(grid, base, exact=False)]).tolist()
    return out
