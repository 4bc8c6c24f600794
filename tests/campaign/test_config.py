import pytest

from memory_infer.campaign.config import fingerprint, load_campaign_settings, plan
from memory_infer.common.errors import MemoryInferError

from helpers import campaign_config


def test_plan_is_seeded_and_identical_on_every_call(tmp_path):
    config = load_campaign_settings(campaign_config(tmp_path, count=30, amplitude='"prior"'))
    first, second = plan(config), plan(config)
    assert fingerprint(first) == fingerprint(second) and len(first) == 30
    amplitudes = [t.amplitude for t in first]
    assert min(amplitudes) >= -5 and max(amplitudes) <= 5 and len(set(amplitudes)) == 30


@pytest.mark.parametrize("extra, message", [
    ('[cluster]\nkind = "cloud"', "must be local, address, slurm or htcondor"),
    ('[recovery]\nfree_parameters = ["mass_1"]', "is not one of"),
])
def test_bad_campaign_settings_are_one_sentence(tmp_path, extra, message):
    with pytest.raises(MemoryInferError, match=message):
        load_campaign_settings(campaign_config(tmp_path, extra=extra))
