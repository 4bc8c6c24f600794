"""``memory-infer rank TABLE.csv --network NAME``: events by memory-only SNR, to choose what to analyse first."""
from __future__ import annotations

import os


def add_arguments(parser):
    parser.add_argument("table", help="CSV of events: a 'label' column and bilby parameter names (spins default 0)")
    parser.add_argument("--network", default="hlv-design", help="network name (see memory_infer/inputs/detectors.py)")
    parser.add_argument("--duration", type=float, default=8.0, help="segment length, s")
    parser.add_argument("--minimum-frequency", type=float, default=20.0, help="band start, Hz")
    parser.add_argument("--output", default=None, help="write the ranking to this CSV as well")


def ranking_network(network: str, duration: float, minimum_frequency: float):
    """The generator and detectors ranking uses: IMRPhenomTHM from ``minimum_frequency`` (also its reference
    frequency), 2048 Hz, zero noise; built once for every event."""
    import dataclasses

    from ..campaign.injection import build_network
    from ..inputs.settings import CampaignSettings

    base = CampaignSettings()
    data = dataclasses.replace(base.data, duration=float(duration), sampling_rate=2048.0,
                               minimum_frequency=float(minimum_frequency))
    model = dataclasses.replace(base.model, reference_frequency=float(minimum_frequency))
    return build_network(dataclasses.replace(base, network=network, data=data, model=model))


def memory_snr(source: dict, network) -> float:
    """Optimal network SNR of the memory alone, zero noise (noise-weighted inner product), on ``network``
    (:func:`ranking_network`)."""
    from ..inference.likelihood import MemoryTransient, memory_snr as snr_of

    generator, detectors = network.generator, network.detectors
    duration, rate = generator.duration, generator.sampling_frequency
    start = source["geocent_time"] - duration + 2.0
    detectors.set_strain_data_from_zero_noise(rate, duration, start)
    generator.start_time = start
    products = MemoryTransient(detectors, generator).inner_products(source)
    if products is None:
        return float("nan")
    return snr_of(products)


def run(args) -> int:
    import pandas as pd

    from ..common.writing import atomic_path
    from ..inputs.detectors import network
    from ..inputs.population import read_table

    network(args.network)
    sources = read_table(args.table, 1_000_000_002.0, "event table")
    labels = pd.read_csv(args.table).get("label", pd.Series(range(len(sources)))).astype(str).tolist()
    built = ranking_network(args.network, args.duration, args.minimum_frequency)
    rows = [{"label": label, "memory_snr": memory_snr({k: v for k, v in s.items() if k != "label"}, built)}
            for label, s in zip(labels, sources)]
    frame = pd.DataFrame(rows).sort_values("memory_snr", ascending=False)
    print(f"events by memory-only SNR in '{args.network}' (zero noise, optimal, IMRPhenomTHM from "
          f"{args.minimum_frequency:g} Hz):")
    for rank, row in enumerate(frame.itertuples(), 1):
        print(f"{rank:4d}  {row.label:<20s} {row.memory_snr:.4f}")
    if args.output:
        with atomic_path(os.path.abspath(args.output)) as temporary:
            frame.to_csv(temporary, index=False)
    return 0
