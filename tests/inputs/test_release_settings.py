"""Settings from a release written by pesummary's own writer: values, origins, and the user's keys kept."""
import numpy as np
import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.inputs.config import evidence_settings
from memory_infer.inputs.release_settings import apply_release_settings, read_release_settings

CONFIG = """[config]
trigger-time = 1000000016.0
duration = 8
post-trigger-duration = 2.0
sampling-frequency = 2048
minimum-frequency = { 'H1': 20, 'L1': 25 }
maximum-frequency = { 'H1': 896, 'L1': 800 }
reference-frequency = 50
waveform-approximant = IMRPhenomTPHM
detectors = ['H1', 'L1']
"""


@pytest.fixture(scope="module")
def release(tmp_path_factory):
    """A release by pesummary 1.8's writer (the trade's tool) with the run's configuration file, PSDs and
    calibration envelopes (7 columns as releases hold them); invented values."""
    pytest.importorskip("pesummary")
    from pesummary.gw.file.formats.pesummary import write_pesummary

    folder = tmp_path_factory.mktemp("release")
    (folder / "config.ini").write_text(CONFIG)
    frequencies = np.linspace(10, 1024, 50)
    envelope = np.column_stack([frequencies, np.ones(50), np.zeros(50), 0.95 * np.ones(50), -0.02 * np.ones(50),
                                1.05 * np.ones(50), 0.02 * np.ones(50)])
    rng = np.random.default_rng(2)
    samples = np.column_stack([rng.uniform(30, 40, 10), rng.uniform(20, 30, 10), rng.normal(size=10)])
    write_pesummary(["mass_1", "mass_2", "log_likelihood"], samples, outdir=str(folder), label="C01:IMRPhenomTPHM",
                    config=[str(folder / "config.ini")], hdf5=True, filename="release.h5",
                    calibration={"C01:IMRPhenomTPHM": {"H1": envelope, "L1": envelope}},
                    psd={"C01:IMRPhenomTPHM": {"H1": np.column_stack([frequencies, np.full(50, 1e-46)])}},
                    file_kwargs={"C01:IMRPhenomTPHM": {"sampler": {}, "meta_data": {"f_ref": 50.0}}})
    return str(folder / "release.h5")


def _config(raw):
    base = {"event": {"label": "x"}, "data": {"kind": "files", "files": {"H1": {"strain": "a"}, "L1": {"strain": "b"}}}}
    for section, values in raw.items():
        base.setdefault(section, {}).update(values)
    return evidence_settings(base, "test", ".")


def test_every_setting_left_out_comes_from_the_release_with_its_origin(release):
    found = read_release_settings(release)
    assert found["trigger_time"][0] == 1000000016.0 and found["duration"][0] == 8.0
    assert found["minimum_frequency"][0] == {"H1": 20.0, "L1": 25.0}
    assert found["detectors"][0] == ["H1", "L1"] and found["waveform_model"][0] == "IMRPhenomTPHM"
    assert sorted(found["calibration_envelopes"][0]) == ["H1", "L1"]
    given = _config({})
    settings, origins = apply_release_settings(given, found)
    data = settings.data
    assert (data.duration, data.sampling_rate, data.start_time) == (8.0, 2048.0, 1000000010.0)
    # one band for the network: the highest lower edge and the lowest upper edge of the detectors
    assert (data.minimum_frequency, data.maximum_frequency) == (25.0, 800.0)
    assert settings.model.reference_frequency == 50.0 and settings.model.approximant == "IMRPhenomTPHM"
    assert settings.calibration.kind == "envelope" and sorted(settings.calibration.envelopes) == ["H1", "L1"]
    assert given.data.duration == 4.0 and given.model.reference_frequency is None  # new values, not changed ones
    assert origins["duration"] == "release.h5: C01:IMRPhenomTPHM/config_file/config/duration"
    assert origins["reference_frequency"] == "release.h5: C01:IMRPhenomTPHM/meta_data/meta_data/f_ref"
    assert origins["start_time"].startswith("trigger time (release.h5: C01:IMRPhenomTPHM/config_file/config/"
                                            "trigger-time) + post-trigger duration")


def test_the_users_settings_are_kept(release):
    settings, origins = apply_release_settings(_config({"data": {"duration": 4.0, "start_time": 1000000013.0},
                                                        "model": {"approximant": "IMRPhenomTHM"}}),
                                               read_release_settings(release))
    assert settings.data.duration == 4.0 and settings.data.start_time == 1000000013.0
    assert settings.model.approximant == "IMRPhenomTHM"
    assert origins["duration"] == origins["start_time"] == origins["waveform_model"] == "configuration"
    assert settings.data.sampling_rate == 2048.0  # still from the release


def test_a_model_this_tool_does_not_run_is_one_sentence(release, tmp_path):
    found = read_release_settings(release)
    found["waveform_model"] = ("NRSur7dq4", "release.h5: C01/approximant")
    with pytest.raises(MemoryInferError, match="the release's model 'NRSur7dq4' .* is not one this tool runs"):
        apply_release_settings(_config({}), found)


def _release_with(folder, extra: str) -> str:
    """A one-analysis release by pesummary's writer whose run configuration adds ``extra`` lines."""
    from pesummary.gw.file.formats.pesummary import write_pesummary

    (folder / "config.ini").write_text(CONFIG + extra)
    samples = np.column_stack([np.full(5, 36.0), np.full(5, 29.0), np.zeros(5)])
    write_pesummary(["mass_1", "mass_2", "log_likelihood"], samples, outdir=str(folder), label="C01:IMRPhenomTPHM",
                    config=[str(folder / "config.ini")], hdf5=True, filename="extra.h5",
                    file_kwargs={"C01:IMRPhenomTPHM": {"sampler": {}, "meta_data": {"f_ref": 50.0}}})
    return str(folder / "extra.h5")


def test_the_releases_window_and_mode_array_are_followed_and_recorded(tmp_path):
    # reference library: pesummary's writer stores the run's configuration (bilby_pipe's keys tukey-roll-off, mode-array)
    path = _release_with(tmp_path, "tukey-roll-off = 0.4\nmode-array = [[2, 2], [2, -2], [3, 3], [3, -3]]\n")
    settings, origins = apply_release_settings(_config({}), read_release_settings(path))
    assert settings.data.window_roll_off == 0.4
    assert settings.model.modes == ((2, 2), (2, -2), (3, 3), (3, -3))
    assert origins["tukey_roll_off"].endswith("config_file/config/tukey-roll-off")
    assert origins["mode_array"].endswith("config_file/config/mode-array")
    assert origins["analysis"].startswith("C01:IMRPhenomTPHM (extra.h5: the release's only analysis")
    arguments = settings.model.waveform_arguments(settings.data)  # the band's upper edge reaches bilby's model too
    assert arguments["mode_list"] == [(2, 2), (2, -2), (3, 3), (3, -3)] and arguments["maximum_frequency"] == 800.0


def test_waveform_arguments_the_tool_cannot_pass_on_refuse_the_release(tmp_path):
    path = _release_with(tmp_path, "waveform-arguments-dict = {'PhenomXPrecVersion': 320}\n")
    with pytest.raises(MemoryInferError, match="waveform arguments .*PhenomXPrecVersion.* refused"):
        apply_release_settings(_config({}), read_release_settings(path))
    empty = _release_with(tmp_path, "waveform-arguments-dict = None\n")  # bilby_pipe's default: nothing to pass on
    apply_release_settings(_config({}), read_release_settings(empty))


def test_the_releases_resampling_method_is_followed(tmp_path):
    # reference library: bilby_pipe's resampling-method key (lal or gwpy), as pesummary stores the run's configuration
    path = _release_with(tmp_path, "resampling-method = lal\n")
    settings, origins = apply_release_settings(_config({}), read_release_settings(path))
    assert settings.data.resampling == "lal" and origins["resampling_method"].endswith("resampling-method")
    kept, origins = apply_release_settings(_config({"data": {"resampling": "gwpy"}}), read_release_settings(path))
    assert kept.data.resampling == "gwpy" and origins["resampling_method"] == "configuration"
    odd = _release_with(tmp_path, "resampling-method = cubic\n")
    with pytest.raises(MemoryInferError, match="resampling method 'cubic'"):
        apply_release_settings(_config({}), read_release_settings(odd))


def test_a_marginalized_release_does_not_lend_its_log_likelihood_column(tmp_path):
    # reference library: bilby_pipe's distance-marginalization key as pesummary stores the run's configuration; bilby's
    # generate_posterior_samples_from_marginalized_likelihood reconstructs the marginalized parameters and leaves the
    # sampler's (marginalized) log_likelihood column as it was
    path = _release_with(tmp_path, "distance-marginalization = True\ntime-marginalization = False\n")
    settings, origins = apply_release_settings(_config({}), read_release_settings(path))
    assert settings.evidence.samples_log_likelihood == ""
    assert origins["samples_log_likelihood"].startswith("not used: the release marginalized over distance")
    kept, origins = apply_release_settings(_config({"evidence": {"samples_log_likelihood": "log_likelihood"}}),
                                           read_release_settings(path))
    assert kept.evidence.samples_log_likelihood == "log_likelihood" and origins["samples_log_likelihood"] == "configuration"
    plain = _release_with(tmp_path, "distance-marginalization = False\n")
    assert apply_release_settings(_config({}), read_release_settings(plain))[0].evidence.samples_log_likelihood == \
        "log_likelihood"
