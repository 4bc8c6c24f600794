"""``memory-infer rank TABLE.csv --network NAME``: events by memory-only SNR, to choose what to analyse first."""
from __future__ import annotations

import os

import numpy as np


def add_arguments(parser):
    parser.add_argument("table", help="CSV of events: a 'label' column and bilby parameter names (spins default 0)")
    parser.add_argument("--network", default="hlv-design", help="network name (see memory_infer/inputs/detectors.py)")
    parser.add_argument("--duration", type=float, default=8.0, help="segment length, s")
    parser.add_argument("--minimum-frequency", type=float, default=20.0, help="band start, Hz")
    parser.add_argument("--output", default=None, help="write the ranking to this CSV as well")


def memory_snr(source: dict, network: str, duration: float, minimum_frequency: float) -> float:
    """Optimal network SNR of the memory alone, zero noise (noise-weighted inner product)."""
    from ..campaign.injection import cached_detectors, cached_generator
    from ..inference.likelihood import MemoryTransient, memory_snr as snr_of

    generator = cached_generator(duration, 2048.0, "IMRPhenomTHM", minimum_frequency)
    detectors = cached_detectors(network, minimum_frequency, duration, 2048.0)
    start = source["geocent_time"] - duration + 2.0
    detectors.set_strain_data_from_zero_noise(2048.0, duration, start)
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
    rows = [{"label": label, "memory_snr": memory_snr({k: v for k, v in s.items() if k != "label"}, args.network,
                                                      args.duration, args.minimum_frequency)}
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
