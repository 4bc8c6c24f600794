import dataclasses

import numpy as np
import pandas as pd

from memory_infer.inputs.event_inputs import EventInputs, resolve_model, sample_settings
from memory_infer.inputs.settings import AnalysisSettings, EventSettings, EvidenceSettings, ModelSettings


def test_reference_frequency_from_configuration_then_samples_then_default():
    cases = [(30.0, {"reference_frequency": 50.0}, {}, None, 30.0, "configuration"),
             (None, {"reference_frequency": 50.0}, {"reference_frequency": 40.0}, None, 50.0,
              "the samples file's metadata"),
             (None, {}, {"reference_frequency": 40.0}, None, 40.0, "the samples file's columns"),
             (None, {}, {}, None, 20.0, "default"),
             (15.0, {}, {}, {"reference_frequency": "release.h5: C01/meta_data/meta_data/f_ref"}, 15.0,
              "release.h5: C01/meta_data/meta_data/f_ref")]
    for given, metadata, columns, origins, value, origin in cases:
        model = resolve_model(ModelSettings(reference_frequency=given), metadata, columns, origins)
        assert (model.reference_frequency, model.reference_frequency_from) == (value, origin)


def test_sample_settings_compare_the_samples_with_this_run():
    frame = pd.DataFrame({"mass_1": [30.0, 31.0], "log_likelihood": [1.0, np.nan]})
    settings = AnalysisSettings(EventSettings("x"), model=ModelSettings("IMRPhenomTHM", 20.0),
                                evidence=EvidenceSettings(samples_waveform_model="IMRPhenomXHM"))
    inputs = EventInputs(settings=settings, frame=frame, file_settings={"reference_frequency": 20.0})
    out = sample_settings(inputs)
    assert out["reference_frequency"] == {"samples": 20.0, "this_run": 20.0, "from": "file metadata", "differs": False}
    assert out["waveform_model"]["differs"] is True and out["waveform_model"]["from"] == "configuration"
    assert out["log_likelihood_column"] is None  # a non-finite value: no proposal correction
    finite = dataclasses.replace(inputs, frame=frame.fillna(2.0))
    assert sample_settings(finite)["log_likelihood_column"] == "log_likelihood"
