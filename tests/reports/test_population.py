import numpy as np

from memory_infer.catalog.population import EventCurves, PopulationSettings
from memory_infer.catalog.population_models import compare_models
from memory_infer.reports.population import CAUTION, population_text
from memory_infer.results.population import PopulationModels


def population(centres, error=0.02):
    grid = np.linspace(-4, 4, 81)
    ln = -0.5 * ((grid[None, :] - np.asarray(centres)[:, None]) / 0.3) ** 2
    return compare_models(EventCurves(grid, ln, error, tuple(f"e{i}" for i in range(len(centres)))),
                          PopulationSettings(replicas=10))


def test_every_model_is_listed_with_its_evidence_and_the_spread_figure():
    found = population([0.2, 1.0, 2.4])
    text = population_text(PopulationModels.from_dict(found))
    for name in found["models"]:
        assert found[name]["title"] in text
    spread = found["gaussian"]
    assert f"{spread['ln_bf_vs_shared']:.1f}" in text and "ln BF against one shared amplitude" in text
    assert "joint posterior of the mean and spread" in text and "<img" in text
    assert CAUTION in text.replace("&#x27;", "'")


def test_an_older_catalog_without_population_models_says_so():
    assert "not computed" in population_text(PopulationModels.from_dict({}))
    empty = PopulationModels.from_dict({"models": [], "note": "no event has an amplitude curve"})
    assert "no event has an amplitude curve" in population_text(empty)


def test_the_grid_resolution_note_is_shown_as_a_warning():
    found = population([1.0, 1.1])
    found["resolution_note"] = "the shared-A 90% interval spans fewer than 4 grid spacings"
    assert "class='warn'>the shared-A 90% interval spans fewer" in population_text(PopulationModels.from_dict(found))
