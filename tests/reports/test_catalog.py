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


def test_page_shows_controls_the_spread_of_the_expectation_and_events_in_tension():
    grid = np.linspace(-4, 4, 81)
    near_one, near_minus = event("near-one", 2.0, -2.0), event("near-minus", -0.3, 0.2)
    for result, centre in ((near_one, 1.0), (near_minus, -0.2)):  # the two exclude each other
        result.amplitude_curve.ln_mean_ratio = (-0.5 * ((grid - centre) / 0.1) ** 2).tolist()
    near_one.memory_snr = {"value": 6.0}
    control = event("null", -0.4, -0.5)
    control.control, control.injection = "injected without memory (A = 0)", {"memory_amplitude": 0.0}
    result = combine([near_one, near_minus, control]).reloaded()
    text = catalog_page(result)
    assert "Control events (not in any sum above)" in text and "injected without memory (A = 0)" in text
    assert f"± {np.sqrt(37.0):.2f} (mean ± standard deviation of the sum)" in text  # sqrt(6^2 + 1^2)
    assert "In tension with the rest of the catalog" in text and result.consistency.in_tension
    single = combine([event("a", 0.3, -0.4)]).reloaded()
    assert "Memory evidence for a catalog of 1 event<" in catalog_page(single)
