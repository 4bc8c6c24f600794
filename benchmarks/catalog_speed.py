"""Catalog speed row: events per hour on 2 cores at 5,000 posterior samples per event, through the catalog
machinery (open-data strain cut and decimated, the release read, reweighting on the 81-point amplitude grid,
each event committed to the store), and from it the wall time of a 200-event catalog on 2 and on 64 cores.

Run: ``OMP_NUM_THREADS=1 python3 benchmarks/catalog_speed.py [EVENTS]`` (one thread per process).
"""
from __future__ import annotations

import math
import os
import sys
import tempfile
import time

import numpy as np


def catalog_rate(events: int = 4, samples: int = 5000, workers: int = 2):
    """(events per hour, its standard error, detail, per-event wall times) on ``workers`` local processes."""
    from memory_infer.catalog.release_runs import STORE, execute_events, plan_events
    from memory_infer.catalog.release_store import EventStore
    from memory_infer.common.executors import ProcessExecutor
    from memory_infer.commands.campaign import quiet_worker  # the command's worker log levels
    from memory_infer.commands.catalog_demo import DEMO_EVENTS, invented_event
    from memory_infer.inputs.release_list import load_release_list

    with tempfile.TemporaryDirectory() as folder:
        lines = ["[defaults.evidence]", f"max_reweight_samples = {samples}", ""]
        for number in range(events):
            label, masses, distance, inclination, amplitude = DEMO_EVENTS[number % len(DEMO_EVENTS)]
            made = invented_event(folder, f"{label}-{number}", masses, distance, inclination, amplitude,
                                  seed=300 + number, trigger=1_000_000_016.0 + 1000.0 * number, live_points=None,
                                  stand_in=samples)
            strain = ", ".join(f'{d} = "{f}"' for d, f in made["strain"].items())
            lines += ["[[events]]", f'label = "{made["label"]}"', f'release = "{made["release"]}"',
                      f"strain = {{ {strain} }}", ""]
        path = os.path.join(folder, "catalog.toml")
        with open(path, "w") as handle:
            handle.write("\n".join(lines))
        tasks = plan_events(load_release_list(path).entries, os.path.join(folder, "out"))
        os.makedirs(os.path.join(folder, "out"), exist_ok=True)
        store = EventStore(os.path.join(folder, "out", STORE))
        executor = ProcessExecutor(workers, setup=quiet_worker)
        start = time.perf_counter()
        records = execute_events(tasks, store, executor, progress=False, window=2 * workers)
        elapsed = time.perf_counter() - start
        executor.close()
        store.close()
    statuses = sorted({r["status"] for r in records})
    if statuses != ["done"]:
        raise RuntimeError(f"benchmark events did not all finish: {[(r['label'], r['reason']) for r in records]}")
    walls = np.array([r["wall_seconds"] for r in records])
    cpus = np.array([r["cpu_seconds"] for r in records])
    rate = events / elapsed * 3600.0
    # error from the scatter of per-event wall times (standard error of their mean, carried to the rate)
    error = rate * (walls.std(ddof=1) / math.sqrt(walls.size) / walls.mean()) if walls.size > 1 else None
    detail = (f"{events} invented events, {samples} samples each, two detectors, 32 s 4096 Hz open-data files "
              f"cut and decimated to 4 s at 1024 Hz, reweighting on 81 amplitudes, {workers} local processes; "
              f"per-event wall time {walls.mean():.1f} +- {walls.std(ddof=1):.1f} s, CPU time "
              f"{cpus.mean():.1f} +- {cpus.std(ddof=1):.1f} s; load average {os.getloadavg()[0]:.1f} at the end")
    return rate, error, detail, walls, cpus


def catalog_wall_times(rate: float, error: float | None, walls, count: int = 200, workers: int = 2) -> dict:
    """Wall time of a ``count``-event catalog on 2 and on 64 cores from the measured rate: 2 cores directly;
    64 cores as whole rounds of one event per core (ceil(count / 64) rounds of the per-event time measured with
    two cores busy), which assumes events are independent and the store keeps up (it commits one row per event)."""
    hours_two = count / rate
    per_event = float(np.mean(walls))
    rounds = math.ceil(count / 64)
    out = {"2 cores (hours)": (hours_two, None if error is None else hours_two * error / rate),
           "64 cores (hours)": (rounds * per_event / 3600.0,
                                None if len(walls) < 2 else rounds * float(np.std(walls, ddof=1)) /
                                math.sqrt(len(walls)) / 3600.0)}
    return out


def main():
    events = int(sys.argv[1]) if len(sys.argv) > 1 else 4
    rate, error, detail, walls, cpus = catalog_rate(events)
    err = "" if error is None else f" +- {error:.2g}"
    print(f"catalog events per hour on 2 cores at 5,000 samples per event, measured: {rate:.3g}{err}  ({detail})")
    for name, (value, spread) in catalog_wall_times(rate, error, walls).items():
        print(f"  200-event catalog wall time, {name}: {value:.3g}" + ("" if spread is None else f" +- {spread:.2g}"))
    # on a machine shared with other work the wall time overstates the cost; each event's own CPU time gives the
    # rate two idle cores would reach (events are independent single-threaded processes)
    idle = 2 * 3600.0 / cpus.mean()
    idle_error = idle * cpus.std(ddof=1) / math.sqrt(cpus.size) / cpus.mean() if cpus.size > 1 else None
    print(f"events per hour on 2 idle cores, from per-event CPU time: {idle:.3g}"
          + ("" if idle_error is None else f" +- {idle_error:.2g}"))
    for name, (value, spread) in catalog_wall_times(idle, idle_error, cpus).items():
        print(f"  200-event catalog wall time, {name}: {value:.3g}" + ("" if spread is None else f" +- {spread:.2g}"))


if __name__ == "__main__":
    main()
