from memory_infer.reports.campaign import campaign_page, count_text
from memory_infer.results.campaign import CampaignSummary


def summary(**changes):
    values = dict(label="c", n_injections=3, n_failed=0, n_detected=2, detection_snr=12.0,
                  ln_bf={"mean": 0.1, "mean_err": 0.01, "median": 0.1, "lower_90": 0.0, "upper_90": 0.2,
                         "count": 2, "method": "ln_bf_plus_fast"},
                  memory_snr={"mean": 0.3}, events_to_threshold={"threshold": 8.0, "median": 80.0,
                                                                 "lower_90": 60.0, "upper_90": None,
                                                                 "reached_fraction": 0.9, "bootstrap": 10},
                  cumulative={"events": [1, 2], "median": [0.1, 0.2], "lower_90": [0.0, 0.1],
                              "upper_90": [0.2, 0.3]},
                  pp={"ks_pvalue": None, "count": 0, "quantiles": [], "method": "not run: A was fixed at 1.0"},
                  calibration={"full_method": None, "count": 0}, ln_bf_values=[0.05, 0.15])
    values.update(changes)
    return CampaignSummary(**values)


def test_campaign_page_from_its_file_alone(tmp_path):
    path = str(tmp_path / "campaign.json")
    summary().save(path)
    page = campaign_page(CampaignSummary.load(path))
    assert page == campaign_page(summary().reloaded())
    assert "80 (60 to not reached)" in page
    assert count_text(None) == "not reached" and count_text(12.4) == "12"


def test_pp_and_calibration_figures_only_with_data():
    page = campaign_page(summary())
    assert "PP test of the memory amplitude" not in page and "Fast against full recovery" not in page
    assert "not run: A was fixed at 1.0" in page and "no injection has a full recovery" in page
    full = summary(pp={"ks_pvalue": 0.4, "count": 3, "quantiles": [0.2, 0.5, 0.9], "method": "nested sampling"},
                   calibration={"full_method": "nested", "count": 2, "slope": 1.0, "intercept": 0.0,
                                "rms_difference": 0.1, "pairs": [[0.1, 0.2], [0.3, 0.25]]},
                   warnings=["40.0% of the detected events lie within 10% of redshift_max"])
    page = campaign_page(full)
    assert "PP test of the memory amplitude" in page and "Fast against full recovery" in page
    assert "40.0% of the detected events" in page


def test_the_page_says_what_the_forecast_is_and_that_it_can_be_negative():
    forecast = {"expected": {"mean": 0.02, "mean_err": 0.01, "lower_90": -0.013, "upper_90": 0.3},
                "known_sign": {"mean": 0.2}, "zero_noise": {"mean": 0.01}, "spread": {"mean": 0.4},
                "events_from_mean": {"median": 400.0}, "events_known_sign": {"median": 40.0}}
    page = campaign_page(summary(forecast=forecast))
    assert "at the injection&#x27;s true parameters, held fixed" in page and "Kullback-Leibler divergence" in page
    assert "at least 5% of the detected injections have a negative expected ln BF₊" in page
    positive = dict(forecast, expected=dict(forecast["expected"], lower_90=0.001))
    assert "have a negative expected" not in campaign_page(summary(forecast=positive))


def test_the_page_says_what_was_simulated():
    configuration = {"campaign": {"network": "hlv-design", "noise": "zero", "injections": "/a_private_folder/bbh_population.toml",
                                  "injected_amplitude": 1.0, "method": "fast"},
                     "model": {"approximant": "IMRPhenomTHM", "reference_frequency": 20.0},
                     "data": {"duration": 8.0, "sampling_rate": 2048.0, "minimum_frequency": 20.0}}
    page = campaign_page(summary(provenance={"configuration": configuration, "versions": {}, "seed": 1,
                                             "command": []}))
    assert "What was simulated" in page and "hlv-design" in page and "noise-free simulated data" in page
    assert "bbh_population.toml" in page and "a_private_folder" not in page and "IMRPhenomTHM" in page
    assert "What was simulated" not in campaign_page(summary())  # an old summary without its configuration
