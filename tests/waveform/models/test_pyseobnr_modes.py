"""SEOBNRv5PHM and SEOBNRv5HM through pyseobnr: the oscillatory part is bilby's own model, the memory's sign holds."""
import os

import bilby
import numpy as np
import pytest

from memory_infer.common.errors import WaveformError
from memory_infer.waveform.source_model import signal_parts
from memory_infer.waveform.models import pyseobnr_modes

needs_pyseobnr = pytest.mark.skipif(not pyseobnr_modes.available() and not os.environ.get("MEMORY_INFER_REQUIRE_PYSEOBNR"),
                                    reason="pyseobnr (the optional seobnr extra) is not installed")
ALIGNED = dict(mass_1=36.0, mass_2=29.0, luminosity_distance=400.0, a_1=0.3, a_2=0.2, tilt_1=0.0, tilt_2=np.pi,
               phi_12=0.0, phi_jl=0.0, theta_jn=0.9, phase=1.3)
PRECESSING = dict(ALIGNED, a_1=0.6, tilt_1=1.0, phi_12=0.5, phi_jl=1.0, tilt_2=2.0)


@needs_pyseobnr
@pytest.mark.parametrize("approximant, source", [("SEOBNRv5PHM", ALIGNED), ("SEOBNRv5PHM", PRECESSING),
                                                 ("SEOBNRv5HM", ALIGNED)])
def test_oscillatory_part_is_bilbys_gwsignal_model(approximant, source):
    # reference library: bilby's gwsignal_binary_black_hole (lalsimulation's gwsignal calling pyseobnr's own
    # frequency-domain polarizations); measured 4e-9 (aligned) and 3e-10 (precessing) relative in the band
    frequencies = np.arange(int(4 * 2048) // 2 + 1) / 4.0
    arguments = dict(waveform_approximant=approximant, minimum_frequency=20.0, reference_frequency=20.0)
    theirs = bilby.gw.source.gwsignal_binary_black_hole(frequencies, **source, **arguments)
    ours = signal_parts(frequencies, **source, **arguments)
    band = frequencies >= 20.0
    for key in ("plus", "cross"):
        assert np.linalg.norm((ours[key] - theirs[key])[band]) < 1e-7 * np.linalg.norm(theirs[key][band])


@needs_pyseobnr
def test_memory_sign_and_size_agree_with_the_other_models():
    # reference: the memory of lalsimulation's IMRPhenomTHM for the same binary (a model we did not write; the sign
    # of the memory relative to the oscillatory modes is lalsimulation's convention in both). Noise-weighted overlap
    # measured 0.991; SEOBNRv5HM's memory SNR is 1.23 x IMRPhenomTHM's, mostly from the (3, 2) mode's cross term with
    # (2, 2) (IMRPhenomTHM has no (3, 2) mode): without it SEOBNRv5HM's final (2, 0) memory is 2% above IMRPhenomTHM's
    frequencies = np.arange(int(8 * 2048) // 2 + 1) / 8.0
    psd = bilby.gw.detector.PowerSpectralDensity.from_aligo().power_spectral_density_interpolated(frequencies)
    band = (frequencies >= 20) & np.isfinite(psd)

    def product(a, b):
        return 4 / 8.0 * np.real(np.sum(np.conj(a[band]) * b[band] / psd[band]))

    memories = {}
    for approximant in ("SEOBNRv5HM", "IMRPhenomTHM"):
        parts = signal_parts(frequencies, waveform_approximant=approximant, minimum_frequency=20.0,
                             reference_frequency=20.0, **ALIGNED)
        memories[approximant] = parts["memory_plus"]
    ours, theirs = memories["SEOBNRv5HM"], memories["IMRPhenomTHM"]
    overlap = product(ours, theirs) / np.sqrt(product(ours, ours) * product(theirs, theirs))
    assert overlap > 0.95  # same sign and shape
    assert 1.0 < np.sqrt(product(ours, ours) / product(theirs, theirs)) < 1.4


def test_a_missing_pyseobnr_is_one_sentence(monkeypatch):
    monkeypatch.setattr(pyseobnr_modes, "available", lambda: False)
    with pytest.raises(WaveformError, match="needs the pyseobnr package.*install_seobnr.sh"):
        pyseobnr_modes.seobnr_modes("SEOBNRv5PHM", 36.0, 29.0, 1.0, 1 / 2048, 20.0, (0, 0, 0), (0, 0, 0), 20.0)


@needs_pyseobnr
def test_in_plane_spins_for_the_aligned_model_are_one_sentence():
    with pytest.raises(WaveformError, match="takes aligned spins only"):
        pyseobnr_modes.seobnr_modes("SEOBNRv5HM", 36.0, 29.0, 1.0, 1 / 2048, 20.0, (0.3, 0, 0), (0, 0, 0), 20.0)


@needs_pyseobnr
def test_rotation_of_the_coprecessing_modes_is_pyseobnrs_own():
    # reference library: pyseobnr's own inertial modes (its rotation of the same co-precessing modes by scri);
    # measured 2e-15 of the (2, 2) peak
    series, frame = pyseobnr_modes.seobnr_modes("SEOBNRv5PHM", 36.0, 29.0, 100.0, 1 / 2048, 20.0, (0.4, 0.2, 0.3),
                                                (-0.1, 0.3, 0.2), 20.0, keep_frame=True)
    twisted = frame.inertial(frame.coprecessing.modes, frame.rotation)
    peak = np.max(np.abs(series.modes[(2, 2)]))
    assert set(twisted) == set(series.modes)
    for key, mode in series.modes.items():
        assert np.max(np.abs(twisted[key] - mode)) < 1e-11 * peak, key


@needs_pyseobnr
def test_precessing_finer_levels_need_no_second_call(monkeypatch):
    from memory_infer.waveform.models import generate_modes

    calls = []
    original = pyseobnr_modes._generator()

    def counted(parameters):
        calls.append(1)
        return original(parameters)

    monkeypatch.setattr(pyseobnr_modes, "_generator", lambda: counted)
    series = generate_modes("SEOBNRv5PHM", 36.0, 29.0, 100.0, 1 / 2048, 20.0, (0.4, 0.2, 0.3), (-0.1, 0.3, 0.2), 20.0)
    assert len(calls) == 1 and series.finer and not series.finer[0].aligned_spins
    level = series.finer[-1]
    assert level.delta_t < 0.4 * series.mass_seconds and level.times[-1] <= series.times[-1]
    assert set(level.modes) == set(series.modes)
