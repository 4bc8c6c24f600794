import logging
import os
import sys

import pytest

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))  # tests in subfolders share helpers.py
logging.getLogger("bilby").setLevel(logging.WARNING)


@pytest.fixture(scope="session")
def thm_modes():
    """IMRPhenomTHM modes of a 45 + 15 solar-mass binary (q = 3), geometric units."""
    from memory_infer.waveform.models import generate_modes

    series = generate_modes("IMRPhenomTHM", 45.0, 15.0, 100.0, 1 / 4096, 20.0)
    return series.geometric()
