import numpy as np

from memory_infer.inference.figures import memory_spectrum, whitened_series
from memory_infer.inference.setup import prepare
from memory_infer.inputs.config import load_evidence_settings

from helpers import event_config


def test_figure_data_in_zero_noise_shows_the_injected_model(tmp_path):
    # zero noise with A = 1 injected: the whitened data are the whitened model with memory
    setup = prepare(load_evidence_settings(event_config(tmp_path, detectors='["H1", "L1"]', noise_curve="ligo-design",
                                                      distance=400.0)))
    point = {k: v for k, v in setup.injection.items() if k != "memory_amplitude"}
    whitened = whitened_series(setup.detectors, setup.generator, point)
    for series in whitened.values():
        data, model = np.asarray(series["data"]), np.asarray(series["model_with_memory"])
        assert np.max(np.abs(data - model)) < 1e-9 * np.max(np.abs(model))
        assert min(series["time"]) > -0.25 and max(series["time"]) < 0.1
    spectrum = memory_spectrum(setup.detectors, setup.generator, point, 20.0)
    h1 = spectrum["detectors"]["H1"]
    assert len(h1["frequency"]) <= 600 and np.all(np.diff(h1["frequency"]) > 0)
    frequency, memory = np.asarray(h1["frequency"]), np.asarray(h1["memory"])
    assert frequency.min() >= 20.0 and np.all(memory > 0)  # the band only: no masked zeros at its edge
    low, high = np.interp([25.0, 400.0], frequency, memory)
    assert low > 10 * high  # the memory is a low-frequency signal


def test_importance_weights_are_the_ratio_the_samples_estimate_directly():
    # samples drawn under A = 0 estimate BF(+1 vs 0) with weights L(1)/L(0); samples drawn under A = 1 estimate
    # BF(0 vs 1) with weights L(0)/L(1) (importance sampling: target over proposal, common practice, no source)
    from memory_infer.inference.figures import importance_weights

    grid = np.linspace(-2, 2, 5)
    table = np.arange(15, dtype=float).reshape(3, 5) ** 2  # ln L per sample (rows) and amplitude (columns)
    weights = importance_weights(grid, {"none": (0.0, table), "memory": (1.0, table)})
    assert weights["none"] == (table[:, 3] - table[:, 2]).tolist()
    assert weights["memory"] == (table[:, 2] - table[:, 3]).tolist()
