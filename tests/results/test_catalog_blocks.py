import json

import numpy as np
import pytest

from memory_infer.catalog.combine import combine
from memory_infer.common.errors import MemoryInferError
from memory_infer.common.writing import JSONEncoder
from memory_infer.reports.catalog import catalog_page
from memory_infer.results.base import ABSENT
from memory_infer.results.catalog import CatalogResult
from memory_infer.results.catalog_blocks import AmplitudePosterior, CatalogSum, Consistency

GRID = np.linspace(-4, 4, 161)
SETTINGS = {"amplitude_grid": GRID.tolist(), "early_inspiral_memory": True, "free_amplitude_limits": [-4.0, 4.0]}


def record(label, centre, ess=1000.0):
    ln = -0.5 * ((GRID - centre) / 0.6) ** 2 + 0.5 * (centre / 0.6) ** 2
    curve = {"amplitudes": GRID.tolist(), "ln_mean_ratio": ln.tolist(), "ln_mean_ratio_err": [0.01] * GRID.size,
             "effective_sample_size": [ess] * GRID.size, "base_amplitude": 0.0, "number_of_samples": 1000}
    methods = [{"method": "nested sampling (dynesty through bilby)", "numerator": numerator, "denominator": "none",
                "ln_bf": value, "ln_bf_err": 0.1, "reliable": True, "effective_sample_size": None}
               for numerator, value in (("memory", float(np.interp(1, GRID, ln))),
                                        ("flipped", float(np.interp(-1, GRID, ln))))]
    return {"event": label, "methods": methods, "amplitude_curve": curve, "settings": SETTINGS,
            "memory_snr": {"value": 1.2}}


def text(mapping) -> str:
    return json.dumps(mapping, cls=JSONEncoder, allow_nan=True)


@pytest.fixture(scope="module")
def written():
    """A catalog's JSON as combine writes it: every block typed, one event with too few effective samples."""
    result = combine([record("a", 0.8), record("b", 1.3), record("c", 1.1, ess=10.0)])
    assert isinstance(result.amplitude, AmplitudePosterior) and isinstance(result.consistency, Consistency)
    return json.loads(text(result.to_json()))


def test_every_block_is_read_back_and_written_key_for_key_in_order(written):
    again = CatalogResult.from_json(written)
    assert text(again.to_json()) == text(written)
    assert again.amplitude.effective_samples.flagged[0].label == "c"
    assert set(again.consistency.events) == {"a", "b", "c"} and again.consistency.events["a"].p_value <= 1.0
    assert again.shared_unknown_sign.weight_plus is not ABSENT and again.consistent_sign.weight_plus is ABSENT


def test_an_older_catalog_without_later_keys_still_loads_and_draws(written):
    older = json.loads(text(written))
    for key in ("shared_unknown_sign", "consistency", "population"):
        older.pop(key)
    older["expected_vs_observed"].pop("expected_spread")
    older["amplitude"].pop("effective_samples")
    again = CatalogResult.from_json(older)
    assert not again.shared_unknown_sign and again.to_json()["shared_unknown_sign"] == {}
    page = catalog_page(again)
    assert "spread not recorded" in page and "not computed" in page and "shared unknown sign" not in page


def test_a_block_with_an_unknown_key_is_refused(written):
    changed = json.loads(text(written))
    changed["consistent_sign"]["odds"] = 1.0
    with pytest.raises(MemoryInferError, match="CatalogSum block holds the unknown key 'odds'"):
        CatalogResult.from_json(changed)
    assert CatalogSum.from_dict({}).to_dict() == {}
