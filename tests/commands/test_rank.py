import numpy as np
import pandas as pd

from memory_infer.cli import main


def test_rank_orders_events_by_memory_snr(tmp_path, capsys):
    table = tmp_path / "events.csv"
    pd.DataFrame({"label": ["near", "far", "face-on"], "mass_1": [36.0, 36.0, 36.0], "mass_2": [29.0, 29.0, 29.0],
                  "luminosity_distance": [300.0, 1200.0, 300.0], "theta_jn": [1.4, 1.4, 0.1], "phase": [0.3] * 3,
                  "ra": [1.0] * 3, "dec": [0.2] * 3, "psi": [0.3] * 3}).to_csv(table, index=False)
    output = tmp_path / "ranking.csv"
    assert main(["rank", str(table), "--network", "hl-design", "--output", str(output)]) == 0
    ranking = pd.read_csv(output)
    assert ranking["label"].tolist()[0] == "near"
    snr = dict(zip(ranking["label"], ranking["memory_snr"]))
    # memory scales as 1/distance (like the oscillatory strain: r h is distance-independent)
    assert np.isclose(snr["near"] / snr["far"], 4.0, rtol=1e-6)
    assert snr["face-on"] < snr["near"]  # the memory is largest edge-on: sin^2(i) (Favata 2009, leading order)
