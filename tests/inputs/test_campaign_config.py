import dataclasses

import pytest

from memory_infer.common.errors import MemoryInferError
from memory_infer.inputs.campaign_config import CAMPAIGN_SCHEMA, load_campaign_settings
from memory_infer.inputs.settings import CampaignSettings, RecoverySettings

from helpers import campaign_config


def test_campaign_settings_from_the_file_with_the_dataclasses_defaults(tmp_path):
    settings = load_campaign_settings(campaign_config(tmp_path, count=7, network="ce"))
    assert (settings.count, settings.network, settings.seed) == (7, "ce", 5)
    assert (settings.data.duration, settings.data.sampling_rate, settings.data.minimum_frequency) == (4.0, 1024.0, 20.0)
    # every injection's model: the reference frequency is the band's lower edge
    assert settings.model.reference_frequency == settings.data.minimum_frequency
    assert settings.recovery == RecoverySettings() and settings.directory == str(tmp_path)
    assert CAMPAIGN_SCHEMA["model"]["approximant"][1] == CampaignSettings().model.approximant == "IMRPhenomTHM"
    with pytest.raises(dataclasses.FrozenInstanceError):
        settings.count = 3  # noqa: B003


@pytest.mark.parametrize("extra, message", [
    ('[cluster]\nkind = "cloud"', "must be local, address, slurm or htcondor"),
    ('[recovery]\nfree_parameters = ["mass_1"]', "is not one of"),
    ('[model]\napproximant = 3', "key 'approximant' in \\[model\\] of campaign.toml must be a string"),
])
def test_bad_campaign_settings_are_one_sentence(tmp_path, extra, message):
    with pytest.raises(MemoryInferError, match=message):
        load_campaign_settings(campaign_config(tmp_path, extra=extra))
