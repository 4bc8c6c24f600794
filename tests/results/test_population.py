import json

import numpy as np
import pytest

from memory_infer.catalog.population import EventCurves, PopulationSettings
from memory_infer.catalog.population_models import compare_models
from memory_infer.common.errors import MemoryInferError
from memory_infer.common.writing import JSONEncoder
from memory_infer.results.base import ABSENT
from memory_infer.results.catalog import CatalogResult
from memory_infer.results.population import PopulationModels

SUMS = {"ln_bf": 1.0, "ln_bf_err": 0.1, "formula": "f", "note": "n"}


def computed():
    grid = np.linspace(-4, 4, 81)
    ln = -0.5 * ((grid[None, :] - np.array([0.5, 1.0, 1.8])[:, None]) / 0.4) ** 2
    found = compare_models(EventCurves(grid, ln, 0.02, ("a", "b", "c")), PopulationSettings(replicas=5))
    return dict(found, resolution_note="")


def text(mapping) -> str:
    return json.dumps(mapping, cls=JSONEncoder, allow_nan=True)


def test_the_typed_block_writes_the_computed_mapping_key_for_key_in_order():
    found = computed()
    block = PopulationModels.from_dict(found)
    assert text(block.to_dict()) == text(found)  # same keys, same order, same values
    spread = block.model("gaussian")
    assert spread.summary("sigma").zero_in_highest_density_90 in (True, False)
    assert spread.summary("mu").upper_bound_90 is ABSENT  # the mean has no upper bound written
    assert block.model("shared").figure is ABSENT and block.model("none") is None


def test_a_catalog_result_reads_its_population_back_from_json_unchanged():
    result = CatalogResult(consistent_sign=SUMS, wrong_sign=SUMS, sign_agnostic=SUMS, amplitude={}, population=computed())
    assert isinstance(result.population, PopulationModels)
    written = json.loads(text(result.to_json()))
    again = CatalogResult.from_json(written)
    assert text(again.to_json()) == text(written)
    older = dict(written)
    older.pop("population")  # a catalog.json written before population models: an empty block, written as {}
    assert CatalogResult.from_json(older).to_json()["population"] == {}
    assert PopulationModels.from_dict({"models": [], "note": "none"}).to_dict() == {"models": [], "note": "none"}


def test_an_unknown_key_is_refused_in_one_sentence():
    found = computed()
    found["gaussian"]["sigma"]["mode"] = 0.3
    with pytest.raises(MemoryInferError, match="ParameterSummary block holds the unknown key 'mode'"):
        PopulationModels.from_dict(found)
    with pytest.raises(MemoryInferError, match="unknown key 'extra'"):
        PopulationModels.from_dict(dict(computed(), extra=1))
