import numpy as np
import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.inputs.config import load_evidence_settings
from memory_infer.inputs.event_data import build_priors, detectors_from_files, injection_parameters

from helpers import event_config


def test_priors_fix_what_is_not_sampled_at_the_injection(tmp_path):
    settings = load_evidence_settings(event_config(tmp_path))
    injection = injection_parameters(settings.data, settings.injection)
    priors = build_priors(settings.priors, injection)
    assert not priors["phase"].is_fixed
    assert priors["mass_1"].peak == injection["mass_1"] and priors["a_1"].peak == 0.0
    # the model's start is the band's lower edge when [model] leaves it out
    assert settings.model.waveform_arguments(settings.data)["minimum_frequency"] == 20.0


def test_detectors_from_files_check_the_segment(tmp_path):
    rate, duration, start = 256.0, 4.0, 1e9
    times = start + np.arange(int(rate * duration)) / rate
    np.savetxt(tmp_path / "H1.txt", np.column_stack([times, np.zeros(times.size)]))
    np.savetxt(tmp_path / "H1_psd.txt", np.column_stack([np.linspace(1, 200, 400), np.full(400, 1e-46)]))
    files = {"H1": {"strain": "H1.txt", "psd": "H1_psd.txt"}}
    detectors = detectors_from_files(files, rate, duration, start, 20.0, directory=str(tmp_path))
    assert detectors[0].name == "H1" and detectors[0].strain_data.duration == duration
    with pytest.raises(MemoryInferError, match="covers 1000000000.000 to 1000000004.000, not the stretch 1000000000.000 to 1000000008.000"):
        detectors_from_files(files, rate, 8.0, start, 20.0, directory=str(tmp_path))


def et_config(tmp_path, curves='{ ET = "et-d" }'):
    path = event_config(tmp_path, detectors='["ET"]', noise_curve="ligo-design", distance=900.0)
    text = open(path).read().replace('noise_curve = "ligo-design"', f'noise_curve = "ligo-design"\nnoise_curves = {curves}')
    open(path, "w").write(text)
    return path


@pytest.mark.slow
def test_einstein_telescope_event_uses_et_d_on_each_interferometer(tmp_path):
    """The configuration's ``noise_curves = { ET = "et-d" }`` reaches ET1, ET2 and ET3 (bilby's ET), and the memory
    SNR equals bilby's with ET-D on all three (reference: bilby's objects only; measured 2.3314 for this source,
    0.2194 with LIGO design noise in its place)."""
    import os

    import bilby

    from memory_infer.inference.likelihood import MemoryTransient, memory_snr
    from memory_infer.inference.setup import prepare

    from helpers import bilby_memory_snr

    setup = prepare(load_evidence_settings(et_config(tmp_path)))
    et_d = os.path.join(os.path.dirname(bilby.__file__), "gw", "detector", "noise_curves", "ET_D_asd.txt")
    assert [d.name for d in setup.detectors] == ["ET1", "ET2", "ET3"]
    assert all(d.power_spectral_density.asd_file == et_d and d.minimum_frequency == 20.0 for d in setup.detectors)
    source = dict(setup.injection)
    ours = memory_snr(MemoryTransient(setup.detectors, setup.generator).inner_products(source))
    reference, count = bilby_memory_snr(setup.generator, source, ["ET"], et_d, 20.0, 1024.0, 4.0, 1e9)
    assert count == 3 and ours == pytest.approx(reference, rel=1e-9)


def test_per_detector_tables_refuse_unknown_keys(tmp_path):
    with pytest.raises(MemoryInferError, match=r"noise_curves in \[data\] names 'XX', which is not a detector of "
                                               r"this analysis \(ET\)"):
        load_evidence_settings(et_config(tmp_path, '{ XX = "ce" }'))
    with pytest.raises(MemoryInferError, match="unknown noise curve 'ce-d' for ET2"):
        load_evidence_settings(et_config(tmp_path, '{ ET = "et-d", ET2 = "ce-d" }'))


def test_einstein_telescope_files_per_interferometer(tmp_path):
    rate, duration, start = 256.0, 4.0, 1e9
    times = start + np.arange(int(rate * duration)) / rate
    np.savetxt(tmp_path / "psd.txt", np.column_stack([np.linspace(1, 200, 400), np.full(400, 1e-46)]))
    files = {"ET": {"psd": "psd.txt"}}
    for k in (1, 2, 3):
        np.savetxt(tmp_path / f"ET{k}.txt", np.column_stack([times, np.full(times.size, k * 1e-23)]))
        files[f"ET{k}"] = {"strain": f"ET{k}.txt"}
    detectors = detectors_from_files(files, rate, duration, start, 20.0, directory=str(tmp_path))
    assert [d.name for d in detectors] == ["ET1", "ET2", "ET3"]
    for k, detector in enumerate(detectors, 1):  # each interferometer its own strain, the shared PSD on each
        assert detector.strain_data.time_domain_strain[10] == pytest.approx(k * 1e-23)
        assert detector.power_spectral_density.psd_array[5] == 1e-46 and detector.minimum_frequency == 20.0
    with pytest.raises(MemoryInferError, match=r"\[data.files.ET\] gives one strain file to the 3 interferometers"):
        detectors_from_files({"ET": {"strain": "ET1.txt", "psd": "psd.txt"}}, rate, duration, start, 20.0,
                             directory=str(tmp_path))
    with pytest.raises(MemoryInferError, match=r"\[data.files.ET3\] needs a 'strain' file"):
        detectors_from_files({k: v for k, v in files.items() if k != "ET3"}, rate, duration, start, 20.0,
                             directory=str(tmp_path))
