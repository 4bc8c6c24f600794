import numpy as np
import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.inputs.detectors import NETWORKS, NOISE_CURVES, network, optimal_snr, psd_values


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


def bilby_psd_file(curve):
    """The ASD file bilby bundles for one of our noise-curve names (bilby's gw/detector/noise_curves folder)."""
    import os

    import bilby

    return os.path.join(os.path.dirname(bilby.__file__), "gw", "detector", "noise_curves", NOISE_CURVES[curve][0])


def test_every_network_sets_each_interferometer_curve_and_band():
    import bilby

    from memory_infer.inputs.detectors import network_detectors

    for name, members in NETWORKS.items():
        detectors = network_detectors(name, 20.0)
        # reference: bilby's own detector definitions (ET is its three interferometers ET1, ET2, ET3)
        reference = bilby.gw.detector.InterferometerList([detector for detector, _ in members])
        assert [d.name for d in detectors] == [d.name for d in reference], name
        asked = dict(members)
        for detector, plain in zip(detectors, reference):
            curve = asked[detector.name[:2]]  # bilby names: H1, L1, V1, CE, ET1-ET3
            assert detector.power_spectral_density.asd_file == bilby_psd_file(curve), (name, detector.name)
            assert detector.minimum_frequency == 20.0, (name, detector.name)
            assert detector.maximum_frequency == plain.maximum_frequency  # bilby's default top of the band
    assert len(network_detectors("et", 20.0)) == 3 and len(network_detectors("ce-et", 20.0)) == 4


def test_every_noise_curve_reaches_every_interferometer():
    from memory_infer.inputs.detectors import configured_detectors, power_spectral_density

    frequencies = np.array([30.0, 100.0, 500.0])
    for curve in NOISE_CURVES:
        # reference values: bilby's PowerSpectralDensity read straight from its bundled ASD file
        expected = bilby_psd(curve).power_spectral_density_interpolated(frequencies)
        assert np.allclose(power_spectral_density(curve).power_spectral_density_interpolated(frequencies), expected)
        for name, members in NETWORKS.items():
            names = [detector for detector, _ in members]
            detectors = configured_detectors(names, {detector: curve for detector in names}, "ligo-design", 15.0)
            assert len(detectors) == sum(3 if n == "ET" else 1 for n in names)
            for detector in detectors:
                assert detector.power_spectral_density.asd_file == bilby_psd_file(curve), (curve, name)
                assert np.allclose(detector.power_spectral_density.power_spectral_density_interpolated(frequencies),
                                   expected)
                assert detector.minimum_frequency == 15.0


def bilby_psd(curve):
    import bilby

    return bilby.gw.detector.PowerSpectralDensity.from_amplitude_spectral_density_file(bilby_psd_file(curve))


def test_one_interferometer_can_differ_and_unknown_keys_are_refused():
    from memory_infer.inputs.detectors import configured_detectors

    detectors = configured_detectors(["ET", "H1"], {"ET": "et-d", "ET2": "ce"}, "aplus", 20.0, 512.0)
    files = {d.name: d.power_spectral_density.asd_file for d in detectors}
    assert files == {"ET1": bilby_psd_file("et-d"), "ET2": bilby_psd_file("ce"), "ET3": bilby_psd_file("et-d"),
                     "H1": bilby_psd_file("aplus")}
    assert all(d.maximum_frequency == 512.0 for d in detectors)
    with pytest.raises(MemoryInferError, match="noise_curves names 'XX', which is not a detector of this analysis"):
        configured_detectors(["H1", "L1"], {"XX": "ce"}, "ligo-design", 20.0)
    with pytest.raises(MemoryInferError, match="did you mean 'ET'"):
        configured_detectors(["ET"], {"et": "et-d"}, "ligo-design", 20.0)
    with pytest.raises(MemoryInferError, match="unknown noise curve 'etd' for ET1"):
        configured_detectors(["ET"], {"ET": "etd"}, "ligo-design", 20.0)
    with pytest.raises(MemoryInferError, match="unknown detector 'G2'"):
        configured_detectors(["G2"], {}, "ligo-design", 20.0)
