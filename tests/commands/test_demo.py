import json

from memory_infer.commands.demo import EVENT_TEMPLATE, EVENTS
from memory_infer.inference.setup import prepare
from memory_infer.inputs.config import load_evidence_config
from memory_infer.inputs.detectors import noise_curve_path


def test_every_demo_event_is_a_valid_configuration(tmp_path):
    for index, (label, detectors, curves, distance, masses, inclination, amplitude, hypotheses) in enumerate(EVENTS):
        text = EVENT_TEMPLATE.format(
            label=label, network="+".join(detectors), detectors=json.dumps(detectors),
            curves=", ".join(f'{k} = "{v}"' for k, v in curves.items()), seed=100 + index, mass_1=masses[0],
            mass_2=masses[1], distance=distance, inclination=inclination, amplitude=amplitude, live_points=20,
            hypotheses=json.dumps(hypotheses))
        path = tmp_path / f"{label}.toml"
        path.write_text(text)
        setup = prepare(load_evidence_config(str(path)))
        assert setup.injection["memory_amplitude"] == amplitude
        assert {d.name[:2] for d in setup.detectors} == {d[:2] for d in detectors}  # ET is three interferometers
        for detector in setup.detectors:  # each interferometer has its detector's noise curve (ET: all three)
            assert detector.power_spectral_density.asd_file == noise_curve_path(curves[detector.name[:2]])
            assert detector.minimum_frequency == 20.0
