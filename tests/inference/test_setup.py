import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.inference.setup import prepare, sampled_columns
from memory_infer.inputs.config import load_evidence_settings

from helpers import event_config


def test_prepare_builds_a_checked_setup(tmp_path):
    setup = prepare(load_evidence_settings(event_config(tmp_path)))
    assert setup.injection["mass_1"] == 36.0 and setup.external_samples is None
    assert sampled_columns(setup.priors) == ["phase"]
    likelihood, priors = setup.likelihood("free")
    assert not priors["memory_amplitude"].is_fixed and not likelihood.priors["memory_amplitude"].is_fixed
    assert setup.settings_fingerprint()["amplitude_grid"][0] == -3.0


def test_unknown_method_and_fixed_distance_with_marginalization_are_refused(tmp_path):
    config = load_evidence_settings(event_config(tmp_path, methods='["nested", "guessing"]'))
    with pytest.raises(MemoryInferError, match="unknown method 'guessing'"):
        prepare(config)
    config = load_evidence_settings(event_config(tmp_path, name="b.toml", likelihood="distance_marginalization = true"))
    with pytest.raises(MemoryInferError, match="distance marginalization needs a distance prior"):
        prepare(config).likelihood("none")


def test_model_from_configuration_then_the_samples_file_then_default():
    from memory_infer.inputs.event_inputs import resolve_model
    from memory_infer.inputs.settings import ModelSettings

    cases = [({"approximant": "IMRPhenomTPHM"}, {"waveform_model": "IMRPhenomXPHM"}, {}, "IMRPhenomTPHM", "configuration"),
             ({"approximant": None}, {"waveform_model": "IMRPhenomXPHM"}, {"waveform_approximant": "IMRPhenomXHM"},
              "IMRPhenomXPHM", "the samples file's metadata"),
             ({"approximant": None}, {}, {"waveform_approximant": "IMRPhenomXHM"}, "IMRPhenomXHM",
              "the samples file's columns"),
             ({"approximant": None}, {}, {}, "IMRPhenomTHM", "default")]
    for model, metadata, columns, expected, origin in cases:
        given = ModelSettings(**model)
        resolved = resolve_model(given, metadata, columns)
        assert resolved.approximant == expected and resolved.approximant_from == origin
        assert given.approximant == model["approximant"]  # a new value: the given settings are left as they were


def test_file_data_with_chirp_mass_priors_prepares_for_nested_sampling(tmp_path):
    """bilby counts Constraint priors (mass_1, mass_2 added for chirp_mass and mass_ratio) as fixed; the light-binary
    check must not take them for fixed masses."""
    import os
    import shutil

    releases = os.path.join(os.path.dirname(__file__), "..", "releases")
    for name in ("H1.hdf5", "L1.hdf5"):
        shutil.copy(os.path.join(releases, name), tmp_path / name)
    (tmp_path / "psd.txt").write_text("".join(f"{f:g} 1e-46\n" for f in range(0, 1025, 8)))  # flat, invented
    (tmp_path / "event.toml").write_text(FILE_EVENT.format(priors=RELEASE_PRIORS))
    setup = prepare(load_evidence_settings(str(tmp_path / "event.toml")))
    assert type(setup.priors["mass_1"]).__name__ == "Constraint" and setup.notes == []
    assert sampled_columns(setup.priors) == ["chirp_mass", "mass_ratio"]


def test_fixed_chirp_mass_and_mass_ratio_of_a_light_binary_get_the_caution(tmp_path):
    """Chirp mass 1.2 and mass ratio 0.8, fixed: both component masses below the neutron-star limit."""
    from memory_infer.inference.setup import binary_caution
    from memory_infer.inputs.event_data import build_priors

    fixed = {name: 0.0 for name in ("luminosity_distance", "theta_jn", "phase", "ra", "dec", "psi", "geocent_time")}
    priors = build_priors(dict(fixed, luminosity_distance=40.0, chirp_mass=1.2, mass_ratio=0.8), None)
    caution = binary_caution("IMRPhenomTHM", None, priors, None)
    # closed form: m1 = Mc (1 + q)^(1/5) / q^(3/5) = 1.543, m2 = q m1 = 1.234
    assert caution is not None and "(1.54 + 1.23)" in caution


FILE_EVENT = """
[event]
label = "file-event"
[data]
kind = "files"
duration = 4.0
sampling_rate = 1024.0
start_time = 1000000000.0
[data.files.H1]
strain = "H1.hdf5"
psd = "psd.txt"
[data.files.L1]
strain = "L1.hdf5"
psd = "psd.txt"
[priors]
{priors}
[evidence]
methods = ["nested"]
nested_hypotheses = ["none"]
"""
RELEASE_PRIORS = """chirp_mass = { kind = "uniform", minimum = 25.0, maximum = 32.0 }
mass_ratio = { kind = "uniform", minimum = 0.5, maximum = 1.0 }
luminosity_distance = 800.0
phase = 0.3
theta_jn = 0.6
ra = 1.0
dec = 0.2
psi = 0.3
geocent_time = 1000000002.0"""
