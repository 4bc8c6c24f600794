import json
import os

import numpy as np
import pytest

from memory_infer.common.errors import MemoryInferError

from helpers import INJECTIONS, campaign_config, run_store, stored
from memory_infer.campaign.config import load_campaign_settings, plan


def test_population_draws_are_seeded_and_physical(tmp_path):
    config = load_campaign_settings(campaign_config(tmp_path, count=500))
    first, second = plan(config), plan(config)
    assert first == second
    sources = [t.source for t in first]
    redshift = np.array([s["redshift"] for s in sources])
    assert np.all((redshift > 0) & (redshift <= 10.0))  # no redshift_max: Cosmic Explorer's reach, z = 10
    assert redshift.max() > 5
    assert all(s["mass_2"] <= s["mass_1"] for s in sources)
    # isotropic orientation: cos(theta_jn) uniform on [-1, 1] (common practice, no source), so its mean is ~0
    assert abs(np.mean(np.cos([s["theta_jn"] for s in sources]))) < 4 / np.sqrt(3 * 500)
    # uniform in comoving volume: at low z the count inside z grows like z^3 (common practice, no source)
    assert np.mean(redshift < 0.5) < np.mean(redshift < 1.0)


def population_file(tmp_path, **keys):
    lines = ["[population]", "alpha = 2.35", "minimum_mass = 5.0", "maximum_mass = 80.0", "mass_ratio_minimum = 0.05"]
    lines += [f"{k} = {v!r}".replace("'", '"') for k, v in keys.items()]
    path = tmp_path / "population.toml"
    path.write_text("\n".join(lines) + "\n")
    return str(path)


def test_mass_floor_and_minimum_total_mass(tmp_path):
    from memory_infer.inputs.population import draw, load_population

    population = load_population(population_file(tmp_path, minimum_total_mass=40.0, redshift_max=1.0))
    sources = draw(population, 4000, 3, 1e9)
    z = np.array([s["redshift"] for s in sources])
    m1 = np.array([s["mass_1"] for s in sources]) / (1 + z)
    m2 = np.array([s["mass_2"] for s in sources]) / (1 + z)
    assert m2.min() >= 5.0 - 1e-9 and m1.max() <= 80.0 + 1e-9
    assert (m1 + m2).min() >= 40.0 - 1e-9
    # without the floor, q = 0.05 would put a fifth of 5-25 Msun primaries' companions below 5 Msun
    assert np.mean(m2 < 6.0) < 0.2


def test_isotropic_spins(tmp_path):
    # isotropic spin directions (common practice, no source): cos(tilt) uniform on [-1, 1], phi_12 and phi_jl
    # uniform on [0, 2 pi]; KS tests at p > 1e-3
    from scipy.stats import kstest

    from memory_infer.inputs.population import draw, load_population

    population = load_population(population_file(tmp_path, spin_orientation="isotropic", redshift_max=1.0))
    sources = draw(population, 3000, 4, 1e9)
    for name in ("tilt_1", "tilt_2"):
        assert kstest(np.cos([s[name] for s in sources]), "uniform", args=(-1, 2)).pvalue > 1e-3
    for name in ("phi_12", "phi_jl"):
        assert kstest([s[name] for s in sources], "uniform", args=(0, 2 * np.pi)).pvalue > 1e-3
    aligned = draw(load_population(population_file(tmp_path, redshift_max=1.0)), 200, 4, 1e9)
    assert {s["tilt_1"] for s in aligned} <= {0.0, np.pi}


def test_isotropic_spins_need_a_precessing_model(tmp_path):
    population_file(tmp_path, spin_orientation="isotropic")
    config = load_campaign_settings(campaign_config(tmp_path, count=5, injections=str(tmp_path / "population.toml")))
    with pytest.raises(MemoryInferError, match="need a precessing waveform model such as IMRPhenomTPHM"):
        plan(config)


def test_redshift_reach_by_network_and_truncation_warning(tmp_path):
    from memory_infer.inputs.population import NETWORK_REDSHIFT, load_population, redshift_reach, truncation_warning

    population = load_population(population_file(tmp_path))
    assert redshift_reach(population, "ce") == 10.0 and redshift_reach(population, "hlv-design") == 1.5
    assert NETWORK_REDSHIFT["et"] == 10.0
    assert redshift_reach(load_population(population_file(tmp_path, redshift_max=0.5)), "ce") == 0.5
    crowded = truncation_warning([0.1, 0.47, 0.48, 0.3], 0.5)
    assert crowded.startswith("50.0% of the detected events") and "raise redshift_max" in crowded
    assert truncation_warning([0.1, 0.2, 0.3], 0.5) is None


def test_campaign_warns_when_the_range_truncates_detections(tmp_path):
    # Cosmic Explorer detects binary black holes far beyond z = 0.3: most detections crowd against it
    from memory_infer.campaign.summary import summarize

    from memory_infer.common.executors import InlineExecutor
    population_file(tmp_path, redshift_max=0.3)
    path = campaign_config(tmp_path, count=20, injections=str(tmp_path / "population.toml"))
    run_store(path, str(tmp_path / "out"), InlineExecutor(), 4)
    summary = summarize(list(stored(str(tmp_path / "out")).values()), load_campaign_settings(path))
    assert summary.warnings and "redshift_max = 0.3" in summary.warnings[0]


@pytest.mark.parametrize("keys, message", [
    (dict(spin_max=1.5), "the population's spin_max must lie in \\[0, 1\\]"),
    (dict(redshift_max=30.0), "the population's redshift_max must lie in \\(0, 20\\]"),
    (dict(spin_orientation="sideways"), "the population's spin_orientation must be 'aligned' or 'isotropic'"),
    (dict(minimum_total_mass=200.0), "the population's minimum_total_mass must lie below twice maximum_mass"),
])
def test_a_bad_population_is_refused_in_one_sentence_before_any_draw(tmp_path, keys, message):
    from memory_infer.inputs.population import Population, load_population

    with pytest.raises(MemoryInferError, match=f"^{message}$"):
        load_population(population_file(tmp_path, **keys))
    with pytest.raises(MemoryInferError, match=f"^{message}$"):  # the typed population checks itself
        Population(**keys)
    config = load_campaign_settings(campaign_config(tmp_path, count=5, injections=str(tmp_path / "population.toml")))
    with pytest.raises(MemoryInferError, match=f"^{message}$"):  # the campaign's plan, before any injection runs
        plan(config)


def test_a_population_is_frozen(tmp_path):
    import dataclasses

    from memory_infer.inputs.population import Population, load_population

    population = load_population(population_file(tmp_path))
    assert isinstance(population, Population) and population.mass_ratio_minimum == 0.05
    with pytest.raises(dataclasses.FrozenInstanceError):
        population.alpha = 3.0
    with pytest.raises(MemoryInferError, match="^the population needs 0 < minimum_mass < maximum_mass$"):
        Population(minimum_mass=90.0)
