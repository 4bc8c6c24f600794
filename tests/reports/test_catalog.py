import numpy as np

from memory_infer.catalog.combine import combine
from memory_infer.reports.catalog import catalog_page
from memory_infer.results.catalog import CatalogResult
from memory_infer.results.estimates import EvidenceEstimate
from memory_infer.results.event import EventResult


def event(label, plus, minus):
    grid = np.linspace(-4, 4, 81)
    ln = plus * grid - 0.5 * grid ** 2
    curve = {"amplitudes": grid.tolist(), "ln_mean_ratio": ln.tolist(), "ln_mean_ratio_err": [0.01] * 81,
             "effective_sample_size": [500.0] * 81, "base_amplitude": 0.0, "number_of_samples": 800}
    methods = [EvidenceEstimate(method="importance reweighting from the A = 0 posterior [none]", ln_bf=v, ln_bf_err=0.02,
                                numerator=n, effective_sample_size=500.0, sample_set="none")
               for n, v in (("memory", plus), ("flipped", minus))]
    return EventResult.from_json({"event": label, "methods": [m.to_dict() for m in methods], "amplitude_curve": curve,
                                  "settings": {"amplitude_grid": grid.tolist(), "free_amplitude_limits": [-4, 4]},
                                  "memory_snr": {"value": 1.0}})


def test_catalog_page_is_the_same_from_the_result_and_from_its_json():
    result = combine([event("a", 0.3, -0.4), event("b", 0.1, -0.2)]).reloaded()
    again = CatalogResult.from_json(result.to_json())
    assert catalog_page(again) == catalog_page(result)
    assert "Memory evidence for a catalog of 2 events" in catalog_page(result)
