"""Where a catalog posterior release keeps each thing, defined once: an HDF5 file with one group per analysis
(the layout pesummary writes; older releases keep the LALInference run's settings under ``config_file/engine``)."""
from __future__ import annotations

SAMPLES = "posterior_samples"  # an analysis group's table of samples (a structured dataset or a group of columns)
PSDS = "psds"  # a group of two-column (frequency, PSD) arrays, one per detector
CALIBRATION_ENVELOPES = "calibration_envelope"  # a group of 7-column envelope tables, one per detector
CONFIG = "config_file/config/"  # the run's configuration as pesummary stores it
META = "meta_data/meta_data/"  # the run's metadata
ENGINE = "config_file/engine/"  # an older (LALInference) release's settings

# setting -> places in one analysis group, first found wins
PLACES = {
    "trigger_time": (CONFIG + "trigger-time", CONFIG + "trigger_time", META + "trigger_time"),
    "duration": (CONFIG + "duration", META + "duration"),
    "post_trigger_duration": (CONFIG + "post-trigger-duration", CONFIG + "post_trigger_duration"),
    "sampling_rate": (CONFIG + "sampling-frequency", CONFIG + "sampling_frequency", META + "sampling_frequency"),
    "minimum_frequency": (CONFIG + "minimum-frequency", CONFIG + "minimum_frequency", META + "f_low"),
    "maximum_frequency": (CONFIG + "maximum-frequency", CONFIG + "maximum_frequency", META + "f_final"),
    "reference_frequency": (META + "f_ref", "meta_data/f_ref", CONFIG + "reference-frequency",
                            CONFIG + "reference_frequency", ENGINE + "fref"),
    "waveform_model": ("approximant", META + "approximant", CONFIG + "waveform-approximant",
                       CONFIG + "waveform_approximant", ENGINE + "approx"),
    "detectors": (CONFIG + "detectors",),
    "tukey_roll_off": (CONFIG + "tukey-roll-off", CONFIG + "tukey_roll_off"),
    "resampling_method": (CONFIG + "resampling-method", CONFIG + "resampling_method"),
    "mode_array": (CONFIG + "mode-array", CONFIG + "mode_array"),
    "waveform_arguments": (CONFIG + "waveform-arguments-dict", CONFIG + "waveform_arguments_dict"),
    "distance_marginalization": (CONFIG + "distance-marginalization", CONFIG + "distance_marginalization"),
    "time_marginalization": (CONFIG + "time-marginalization", CONFIG + "time_marginalization"),
    "phase_marginalization": (CONFIG + "phase-marginalization", CONFIG + "phase_marginalization"),
}
