import logging

import pytest

logging.getLogger("bilby").setLevel(logging.WARNING)


@pytest.fixture(scope="session")
def thm_modes():
    """IMRPhenomTHM modes of a 45 + 15 solar-mass binary (q = 3), geometric units."""
    from memory_infer.models import generate_modes

    series = generate_modes("IMRPhenomTHM", 45.0, 15.0, 100.0, 1 / 4096, 20.0)
    return series.geometric()
