import json
import os

import numpy as np
import pytest

from memory_infer.common.errors import MemoryInferError

from helpers import INJECTIONS, campaign_config, run_store, stored


def test_resuming_with_other_settings_is_refused(tmp_path):
    from memory_infer.cli import main

    first = campaign_config(tmp_path, count=3)
    assert main(["campaign", first, "--outdir", str(tmp_path / "out"), "--quiet"]) == 0
    second = campaign_config(tmp_path, name="other.toml", count=4)
    assert main(["campaign", second, "--outdir", str(tmp_path / "out"), "--quiet"]) == 2
