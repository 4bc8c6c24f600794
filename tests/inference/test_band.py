import bilby
import numpy as np
import pytest

from memory_infer.inference.band import band_edges, band_products, project_two


@pytest.fixture(scope="module")
def detector():
    bilby.core.utils.random.seed(4)
    detector = bilby.gw.detector.get_empty_interferometer("L1")
    detector.minimum_frequency = 20.0
    detector.set_strain_data_from_power_spectral_density(sampling_frequency=1024.0, duration=4.0, start_time=1e9)
    return detector


def polarizations(seed, size):
    rng = np.random.default_rng(seed)
    return {mode: rng.normal(size=size) + 1j * rng.normal(size=size) for mode in ("plus", "cross")}


@pytest.mark.parametrize("calibrated", [False, True])
def test_projection_equals_bilby_detector_response(detector, calibrated):
    # reference library: bilby's Interferometer.get_detector_response (antenna pattern, time shift, calibration)
    size = detector.frequency_array.size
    oscillatory, memory = polarizations(1, size), polarizations(2, size)
    parameters = dict(ra=1.3, dec=-0.4, psi=0.8, geocent_time=1e9 + 2.3)
    mask = detector.frequency_mask
    frequencies = detector.frequency_array[mask]
    calibration = np.empty(0, dtype=complex)
    if calibrated:
        calibration = 1 + 0.05 * np.exp(1j * frequencies / 100)
        detector.calibration_model = bilby.gw.detector.calibration.Recalibrate()  # ours is applied by hand below
    plus = detector.antenna_response(1.3, -0.4, parameters["geocent_time"], 0.8, "plus")
    cross = detector.antenna_response(1.3, -0.4, parameters["geocent_time"], 0.8, "cross")
    dt = (parameters["geocent_time"] - detector.strain_data.start_time) + detector.time_delay_from_geocenter(
        1.3, -0.4, parameters["geocent_time"])
    out = np.zeros((2, size), dtype=complex)
    first, _ = band_edges(mask)
    project_two(oscillatory["plus"], oscillatory["cross"], memory["plus"], memory["cross"], plus, cross, first,
                frequencies, -2 * np.pi * dt, calibration, out[0], out[1])
    for ours, given in zip(out, (oscillatory, memory)):
        theirs = detector.get_detector_response(given, parameters)
        if calibrated:
            theirs[mask] *= calibration
        assert np.max(np.abs(ours - theirs)) <= 1e-12 * np.max(np.abs(theirs))
        assert np.all(ours[~mask] == 0)


def test_band_products_equal_bilby_inner_products(detector):
    # reference library: bilby's noise_weighted_inner_product on the detector's band
    size = detector.frequency_array.size
    a, b = polarizations(3, size)["plus"], polarizations(4, size)["cross"]
    mask = detector.frequency_mask
    psd = detector.power_spectral_density_array[mask]
    data = detector.strain_data.frequency_domain_strain
    d_a, d_b, aa, ab, bb = np.array(band_products(a, b, data, psd, band_edges(mask)[0])) * 4 / detector.duration
    duration = detector.duration
    inner = bilby.gw.utils.noise_weighted_inner_product
    assert d_a == pytest.approx(inner(a[mask], data[mask], psd, duration), rel=1e-12)
    assert d_b == pytest.approx(inner(b[mask], data[mask], psd, duration), rel=1e-12)
    assert aa == pytest.approx(inner(a[mask], a[mask], psd, duration).real, rel=1e-12)
    assert ab == pytest.approx(inner(a[mask], b[mask], psd, duration).real, rel=1e-12)
    assert bb == pytest.approx(inner(b[mask], b[mask], psd, duration).real, rel=1e-12)


def test_band_edges_only_for_one_unbroken_run():
    mask = np.zeros(10, dtype=bool)
    assert band_edges(mask) is None
    mask[3:7] = True
    assert band_edges(mask) == (3, 7)
    mask[5] = False
    assert band_edges(mask) is None
