import json

import numpy as np
import pytest
from scipy.stats import norm

from memory_infer.catalog.combine import combine
from memory_infer.common.errors import MemoryInferError

from helpers import event_config

GRID = np.linspace(-5, 5, 2001)
SETTINGS = {"amplitude_grid": GRID.tolist(), "early_inspiral_memory": True, "free_amplitude_limits": [-5.0, 5.0]}


def record(label, plus, minus, plus_err=0.2, minus_err=0.3, curve=None, settings=None, method="nested sampling"):
    methods = [
        {"method": f"{method} (dynesty through bilby)", "numerator": "memory", "denominator": "none", "ln_bf": plus,
         "ln_bf_err": plus_err, "reliable": True, "effective_sample_size": None},
        {"method": f"{method} (dynesty through bilby)", "numerator": "flipped", "denominator": "none", "ln_bf": minus,
         "ln_bf_err": minus_err, "reliable": True, "effective_sample_size": None},
    ]
    return {"event": label, "methods": methods, "amplitude_curve": curve, "settings": settings or SETTINGS,
            "memory_snr": {"value": 1.0}, "_source": f"{label}.json"}


def gaussian_curve(centre, width):
    ln = -0.5 * ((GRID - centre) / width) ** 2 + 0.5 * (centre / width) ** 2
    return {"amplitudes": GRID.tolist(), "ln_mean_ratio": ln.tolist(), "ln_mean_ratio_err": [0.0] * GRID.size,
            "effective_sample_size": [1000.0] * GRID.size, "base_amplitude": 0.0, "number_of_samples": 1000}


def test_catalog_posterior_is_the_inverse_variance_weighted_gaussian():
    # textbook result: a product of Gaussians in A is a Gaussian with inverse-variance weights
    centres, widths = np.array([0.4, 1.5, 1.1]), np.array([0.8, 1.2, 0.6])
    records = [record(f"e{i}", 0.1, -0.1, curve=gaussian_curve(c, w)) for i, (c, w) in enumerate(zip(centres, widths))]
    result = combine(records).to_json()["amplitude"]
    precision = np.sum(1 / widths ** 2)
    mean, sigma = np.sum(centres / widths ** 2) / precision, precision ** -0.5
    assert result["median"] == pytest.approx(mean, abs=1e-3)
    assert result["lower_90"] == pytest.approx(mean - norm.ppf(0.95) * sigma, abs=1e-3)
    assert result["upper_90"] == pytest.approx(mean + norm.ppf(0.95) * sigma, abs=1e-3)
    expected_ratio = norm.pdf(0, mean, sigma) / (norm.cdf(5, mean, sigma) - norm.cdf(-5, mean, sigma)) * 10
    assert result["density_ratio_at_zero"] == pytest.approx(expected_ratio, rel=1e-3)


def test_three_sums_and_quadrature_errors():
    plus, minus = np.array([1.2, -0.3, 0.8]), np.array([-0.5, 0.4, -1.1])
    errors_p, errors_m = np.array([0.2, 0.1, 0.3]), np.array([0.25, 0.15, 0.05])
    records = [record(f"e{i}", p, m, ep, em) for i, (p, m, ep, em) in enumerate(zip(plus, minus, errors_p, errors_m))]
    result = combine(records).to_json()
    assert result["consistent_sign"]["ln_bf"] == pytest.approx(plus.sum(), abs=1e-12)
    assert result["wrong_sign"]["ln_bf"] == pytest.approx(minus.sum(), abs=1e-12)
    agnostic = np.log((np.exp(plus) + np.exp(minus)) / 2).sum()
    assert result["sign_agnostic"]["ln_bf"] == pytest.approx(agnostic, abs=1e-12)
    assert result["consistent_sign"]["ln_bf_err"] == pytest.approx(np.sqrt(np.sum(errors_p ** 2)), abs=1e-12)
    assert result["wrong_sign"]["ln_bf_err"] == pytest.approx(np.sqrt(np.sum(errors_m ** 2)), abs=1e-12)
    assert result["ranking"] == ["e0", "e2", "e1"]
    assert result["cumulative_ln_bf_plus"] == pytest.approx([1.2, 2.0, 1.7])


def test_duplicates_and_mixed_settings_are_dropped_with_reasons():
    other = dict(SETTINGS, early_inspiral_memory=False)
    records = [record("a", 1.0, -1.0), record("b", 0.5, -0.5), record("a", 3.0, -3.0), record("c", 2.0, 0.0, settings=other)]
    result = combine(records).to_json()
    dropped = {d["label"]: d["reason"] for d in result["dropped"]}
    assert dropped["a"].startswith("duplicated event label 'a'")
    assert dropped["c"] == "settings differ from the rest of the catalog: early_inspiral_memory"
    assert result["consistent_sign"]["ln_bf"] == pytest.approx(1.5)
    assert result["n_events"] == 2


def test_unreliable_reweighting_is_dropped_and_nothing_usable_is_an_error():
    bad = {"event": "z", "settings": SETTINGS, "methods": [
        {"method": "importance reweighting from the A = 0 posterior", "numerator": "memory", "denominator": "none",
         "ln_bf": 5.0, "ln_bf_err": 3.0, "reliable": False, "effective_sample_size": 2.0}]}
    with pytest.raises(MemoryInferError, match="too few effective samples"):
        combine([bad])
    result = combine([bad, record("ok", 0.3, -0.3)]).to_json()
    assert result["dropped"][0]["reason"] == "too few effective samples (2.0)"


def test_controls_are_shown_apart_and_kept_out_of_every_sum():
    control = dict(record("null", -0.4, -0.5, curve=gaussian_curve(0.0, 0.5)), control="injected without memory (A = 0)",
                   injection={"memory_amplitude": 0.0, "mass_1": 30.0})
    flagged = dict(record("flag", 2.0, -2.0), control="marked as a control in its configuration ([event] control = true)")
    result = combine([record("a", 1.0, -1.0, curve=gaussian_curve(1.0, 0.5)), control, flagged]).to_json()
    assert result["consistent_sign"]["ln_bf"] == pytest.approx(1.0) and result["n_events"] == 1
    assert [c["label"] for c in result["controls"]] == ["null", "flag"] and result["dropped"] == []
    assert result["controls"][0]["injected_amplitude"] == 0.0 and result["amplitude"]["events"] == 1
    assert [e["label"] for e in result["events"]] == ["a"]


@pytest.mark.slow
def test_end_to_end_catalog_from_evidence_runs(tmp_path):
    from memory_infer.cli import main

    folders = []
    for index, (distance, amplitude) in enumerate([(1500.0, 1.0), (2500.0, 1.0), (2000.0, 0.0)]):
        # small runs (20 live points, 512 Hz): this test checks the catalog's bookkeeping, not the evidences
        config = event_config(tmp_path, name=f"e{index}.toml", label=f"event-{index}", distance=distance,
                              amplitude=amplitude, hypotheses='["none"]', live_points=20, noise="gaussian",
                              seed=20 + index, evidence_extra="minimum_effective_samples = 10", sampling_rate=512.0)
        outdir = tmp_path / f"event-{index}"
        assert main(["evidence", config, "--outdir", str(outdir), "--quiet"]) == 0
        folders.append(str(outdir))
    assert main(["combine", *folders, "--outdir", str(tmp_path / "catalog")]) == 0
    result = json.loads((tmp_path / "catalog" / "catalog.json").read_text())
    assert result["n_events"] == 2 and not result["dropped"]  # event-2, injected without memory, is a control
    assert [c["label"] for c in result["controls"]] == ["event-2"] and result["controls"][0]["injected_amplitude"] == 0
    # the sums are over each summed event's own ln BF+- as its evidence.json states them (sign table), errors in
    # quadrature (independent events multiply evidences: common practice, no source)
    signs = [json.loads((tmp_path / f"event-{i}" / "evidence.json").read_text())["sign"] for i in range(2)]
    plus = np.array([s["ln_bf_plus"] for s in signs])
    minus = np.array([s["ln_bf_minus"] for s in signs])
    assert result["consistent_sign"]["ln_bf"] == pytest.approx(plus.sum(), abs=1e-12)
    assert result["wrong_sign"]["ln_bf"] == pytest.approx(minus.sum(), abs=1e-12)
    assert result["sign_agnostic"]["ln_bf"] == pytest.approx(np.sum(np.logaddexp(plus, minus) - np.log(2)), abs=1e-12)
    assert result["consistent_sign"]["ln_bf_err"] == pytest.approx(
        np.sqrt(np.sum([s["ln_bf_plus_err"] ** 2 for s in signs])), rel=1e-12)
    assert {"median", "lower_90", "upper_90", "density_ratio_at_zero"} <= set(result["amplitude"])
    assert result["amplitude"]["events"] == 2
    shown = result["events"] + result["controls"]
    assert all(e["method"].startswith("importance reweighting from the A = 0 posterior") for e in shown)
    for folder, entry in zip(folders, shown):  # the catalog shows each event's own headline pair
        evidence = json.loads(open(f"{folder}/evidence.json").read())
        assert (entry["ln_bf_plus"], entry["ln_bf_minus"]) == (evidence["headline"]["ln_bf"],
                                                               evidence["headline"]["ln_bf_minus"])
        assert (evidence["sign"]["ln_bf_plus"], evidence["sign"]["ln_bf_minus"]) == (entry["ln_bf_plus"],
                                                                                     entry["ln_bf_minus"])
    assert (tmp_path / "catalog" / "events.csv").exists() and (tmp_path / "catalog" / "report.html").exists()


def test_uninformative_catalog_gives_density_ratio_one_and_the_prior_interval():
    # Bayes' theorem: a flat <L(A)/L(0)> leaves the prior unchanged; the prior [-5, 5] is limited to the grid [-4, 4]
    grid = np.linspace(-4, 4, 161)
    flat = {"amplitudes": grid.tolist(), "ln_mean_ratio": [0.0] * grid.size, "ln_mean_ratio_err": [0.0] * grid.size,
            "effective_sample_size": [800.0] * grid.size, "base_amplitude": 0.0, "number_of_samples": 800}
    settings = dict(SETTINGS, amplitude_grid=grid.tolist())
    amplitude = combine([record(f"e{i}", 0.0, 0.0, curve=flat, settings=settings) for i in range(4)]).to_json()["amplitude"]
    assert amplitude["density_ratio_at_zero"] == pytest.approx(1.0, abs=1e-3)
    assert (amplitude["lower_90"], amplitude["upper_90"]) == (pytest.approx(-3.6, abs=1e-3), pytest.approx(3.6, abs=1e-3))
    assert "limited to the grid's span [-4, 4]" in amplitude["prior_note"] and amplitude["prior"] == "uniform on [-4, 4]"
    assert "scales with the prior's width" in amplitude["density_ratio_note"]
    assert amplitude["effective_samples"]["flagged"] == []


def test_shared_unknown_sign_and_low_effective_samples_are_reported():
    plus, minus = np.array([1.0, 0.5, -0.2]), np.array([-2.0, 0.7, 0.1])
    result = combine([record(f"e{i}", p, m, 0.1, 0.2) for i, (p, m) in enumerate(zip(plus, minus))]).to_json()
    shared = result["shared_unknown_sign"]
    expected = np.log((np.exp(plus.sum()) + np.exp(minus.sum())) / 2)  # one sign for all events, unknown
    assert shared["ln_bf"] == pytest.approx(expected, abs=1e-12)
    w = np.exp(plus.sum()) / (np.exp(plus.sum()) + np.exp(minus.sum()))
    assert shared["weight_plus"] == pytest.approx(w, abs=1e-12)
    assert shared["ln_bf_err"] == pytest.approx(np.hypot(w * 0.1 * np.sqrt(3), (1 - w) * 0.2 * np.sqrt(3)), abs=1e-12)
    thin = gaussian_curve(1.0, 0.5)
    thin["effective_sample_size"] = np.where(GRID > 2.0, 3.0, 500.0).tolist()
    flagged = combine([record("thin", 0.1, -0.1, curve=thin)]).to_json()["amplitude"]["effective_samples"]["flagged"]
    assert flagged[0]["label"] == "thin" and flagged[0]["below_threshold_from"] > 2.0 and flagged[0]["fewest"] == 3.0



def test_population_models_run_on_the_included_curves_and_warn_when_the_grid_is_coarse():
    # the shared model's evidence is the shared-A posterior's normalization: the same product on the same grid
    coarse = np.linspace(-4, 4, 17)
    settings = dict(SETTINGS, amplitude_grid=coarse.tolist())
    curves = []
    for centre in (0.9, 1.1, 1.0):
        ln = -0.5 * ((coarse - centre) / 0.05) ** 2
        curves.append({"amplitudes": coarse.tolist(), "ln_mean_ratio": ln.tolist(), "ln_mean_ratio_err": [0.0] * 17,
                       "effective_sample_size": [1000.0] * 17, "base_amplitude": 0.0, "number_of_samples": 1000})
    result = combine([record(f"e{i}", 0.1, -0.1, curve=c, settings=settings) for i, c in enumerate(curves)])
    population = result.population
    assert population.models == ["shared", "gaussian"] and population.events == 3
    assert "fewer than 4 grid spacings" in population.resolution_note
    assert population.model("shared").summary("A").median == pytest.approx(result.amplitude.median, abs=1e-9)
    fine = combine([record(f"e{i}", 0.1, -0.1, curve=gaussian_curve(c, 0.5)) for i, c in enumerate((0.8, 1.2))])
    assert fine.population.resolution_note == ""
