import numpy as np
import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.inputs.detectors import NETWORKS, network, optimal_snr, psd_values


def test_optimal_snr_is_the_noise_weighted_norm():
    # closed form: a flat |h| = 1e-23 over 20-100 Hz in white noise S = 1e-46 has rho^2 = 4 * 80 Hz * 1e-46 / 1e-46
    frequencies = np.arange(0, 200.25, 0.25)
    strain = np.where((frequencies >= 20) & (frequencies <= 100), 1e-23, 0.0)
    rho = optimal_snr(strain, np.full(frequencies.size, 1e-46), frequencies, 20.0)
    assert rho == pytest.approx(np.sqrt(4 * 0.25 * 321), rel=1e-12)


def test_named_curves_and_networks():
    values = psd_values("ligo-design", np.array([10.0, 100.0, 1000.0]))
    assert np.all(values > 0) and values[1] < values[0]
    assert network("hlv-design") == NETWORKS["hlv-design"]
    with pytest.raises(MemoryInferError, match="unknown network"):
        network("nowhere")
