"""The speed goals (README, Performance), each measured against its anchor in the same run.

Every row is the median of ``repeats`` rounds; in each round the anchor and the subject are timed one
after the other in this one process, so load from other programs on a shared machine reaches both.
``--quick``: fewer calls and rounds, a smaller campaign, no Slurm row (a first look, not a record).
"""
from __future__ import annotations

import argparse
import logging
import time

import numpy as np

logging.getLogger("bilby").setLevel(logging.ERROR)

DURATION, RATE, START = 4.0, 2048.0, 1e9
MEMORY_DURATION = 8.0  # s, segment of the memory-cost rows (HL, 2048 Hz)
POINT = dict(mass_1=36.0, mass_2=29.0, luminosity_distance=440.0, a_1=0.3, a_2=0.1, tilt_1=0.0, tilt_2=0.0,
             phi_12=0.0, phi_jl=0.0, theta_jn=1.0, phase=0.4, ra=1.2, dec=-0.4, psi=0.7, geocent_time=START + 2.0)


def timed(function, calls: int, offset: int = 0) -> float:
    """Mean seconds per call of ``calls`` calls ``function(offset + i)``."""
    start = time.perf_counter()
    for i in range(calls):
        function(offset + i)
    return (time.perf_counter() - start) / calls


def interleaved(subject, anchor, calls: int, repeats: int, warm: bool = True):
    """Median (subject, anchor) seconds per call and the median of their ratio, from ``repeats`` rounds
    that each time the anchor and then the subject (so both see the same load on a shared machine)."""
    if warm:
        subject(0), anchor(0)
    rows = []
    for r in range(repeats):
        t_anchor = timed(anchor, calls, r * calls)
        t_subject = timed(subject, calls, r * calls)
        rows.append((t_subject, t_anchor, t_subject / t_anchor))
    rows = np.array(rows)
    return np.median(rows[:, 0]), np.median(rows[:, 1]), np.median(rows[:, 2]), (rows[:, 2].min(), rows[:, 2].max())


LIGHT, HEAVY = (10.0, 8.0), (36.0, 29.0)  # 18 and 65 solar masses, detector frame
SETTINGS = {"repeats": 5, "calls": 1.0, "injections": 400}


def calls(n: int) -> int:
    return max(2, int(round(n * SETTINGS["calls"])))


def memory_vs_modes(masses):
    """Memory computation (finer samplings of the merger plus the flux integral towards one direction) over mode
    generation alone. Both are timed around their own calls in the same iteration, the memory right after the
    modes it is computed from (as the source model does); each round's ratio is that of the medians over its
    calls. (Earlier tables took the difference of two separately timed loops, with and without the memory: the
    same quantity, but it carried the modes' own scatter, about 10% of the modes' cost, into the difference.)"""
    from memory_infer.waveform.memory import memory_at_direction
    from memory_infer.waveform.models import generate_modes
    from memory_infer.waveform.models.refine import finer_levels

    def generate(mass_1, step=1 / RATE, start=20.0, reference=20.0):
        return generate_modes("IMRPhenomTHM", mass_1, masses[1], 100.0, step, start, reference_frequency=reference,
                              finer_for_memory=False)

    def one(i):
        mass_1 = masses[0] + 1e-4 * (i % 50)
        began = time.perf_counter()
        series = generate(mass_1)
        between = time.perf_counter()
        series.finer = finer_levels(series, lambda step, start, reference: generate(mass_1, step, start, reference),
                                    20.0, 20.0)
        times, modes = series.geometric(scaled=False)  # as the source model calls it: SI modes, times in M
        memory_at_direction(modes, times, 1.0, 0.5, finer=series.geometric_finer(scaled=False),
                            mode_scale=series.strain_scale)
        return between - began, time.perf_counter() - between, series

    for i in range(5):
        one(i)
    rounds = []
    for r in range(SETTINGS["repeats"]):
        timings = np.array([one(r * 1000 + i)[:2] for i in range(calls(40))])
        modes_time, memory_time = np.median(timings, axis=0)
        rounds.append((memory_time / modes_time, modes_time, memory_time))
    rounds = np.array(rounds)
    ratio, t_modes, t_memory = np.median(rounds, axis=0)
    series = one(0)[2]
    levels = ", ".join(f"{1 / level.delta_t:.0f}" for level in series.finer) or "none"
    finer = sum(level.times.size for level in series.finer)
    return ratio, t_modes, (f"memory {t_memory * 1e3:.2f} ms, rounds {rounds[:, 0].min():.2f}-{rounds[:, 0].max():.2f}; "
                            f"{series.times.size} samples at {RATE:g} Hz, finer levels at {levels} Hz ({finer} samples)")


def _detectors(duration=DURATION):
    import bilby

    detectors = bilby.gw.detector.InterferometerList(["H1", "L1"])
    detectors.set_strain_data_from_power_spectral_densities(RATE, duration, START)
    for detector in detectors:
        detector.minimum_frequency = 20.0
    return detectors


def _likelihood(detectors, model, arguments, duration=DURATION):
    import bilby

    from memory_infer.waveform.generator import waveform_generator
    from memory_infer.waveform.source_model import memory_binary_black_hole

    if model is memory_binary_black_hole:  # our generator, with its own caches, as the likelihood uses it
        generator = waveform_generator(duration, RATE, START, arguments)
    else:
        generator = bilby.gw.WaveformGenerator(duration=duration, sampling_frequency=RATE, start_time=START,
                                               frequency_domain_source_model=model, waveform_arguments=arguments)
    return bilby.gw.GravitationalWaveTransient(detectors, generator)


def memory_likelihood_cost(masses):
    """Memory likelihood over the same likelihood without memory (HL, 8 s, 2048 Hz)."""
    from memory_infer.waveform.source_model import memory_binary_black_hole

    detectors = _detectors(MEMORY_DURATION)
    base = dict(waveform_approximant="IMRPhenomTHM", minimum_frequency=20.0, reference_frequency=20.0)
    with_memory = _likelihood(detectors, memory_binary_black_hole, base, MEMORY_DURATION)
    without = _likelihood(detectors, memory_binary_black_hole, dict(base, include_memory=False), MEMORY_DURATION)
    point = dict(POINT, mass_1=masses[0], mass_2=masses[1], a_1=0.0, a_2=0.0, geocent_time=START + 6.0)

    def call(likelihood):
        return lambda i: likelihood.log_likelihood_ratio(dict(point, mass_1=masses[0] + 1e-4 * i, memory_amplitude=1.0))

    t_memory, t_without, ratio, spread = interleaved(call(with_memory), call(without), calls(30), SETTINGS["repeats"])
    return ratio, t_without, f"memory likelihood {t_memory * 1e3:.2f} ms; 8 s, H1+L1"


def bilby_comparison():
    """Memory likelihood over bilby's standard frequency-domain likelihood with IMRPhenomXHM (4 s, HL)."""
    import bilby

    from memory_infer.waveform.source_model import memory_binary_black_hole

    detectors = _detectors()
    base = dict(waveform_approximant="IMRPhenomTHM", minimum_frequency=20.0, reference_frequency=20.0)
    with_memory = _likelihood(detectors, memory_binary_black_hole, base)
    standard = _likelihood(detectors, bilby.gw.source.lal_binary_black_hole,
                           dict(waveform_approximant="IMRPhenomXHM", minimum_frequency=20.0, reference_frequency=20.0))

    def call(likelihood, extra):
        return lambda i: likelihood.log_likelihood_ratio(dict(POINT, mass_1=36.0 + 1e-4 * i, **extra))

    t_memory, t_standard, ratio, spread = interleaved(call(with_memory, {"memory_amplitude": 1.0}), call(standard, {}),
                                                      calls(60), SETTINGS["repeats"])
    return ratio, t_standard, f"memory likelihood {t_memory * 1e3:.2f} ms (4 s, H1+L1)"


def reweighting_throughput():
    """Reweighting rate (samples/s, one core) and its cost per sample over one bilby likelihood call of the
    same model (bilby's own time-domain IMRPhenomTHM through its frequency-domain wrapper), interleaved."""
    import bilby
    import pandas as pd

    from memory_infer.inference.methods.reweighting import log_likelihood_grid
    from memory_infer.inputs.config import grid_with_hypotheses
    from memory_infer import MemoryTransient, waveform_generator

    detectors = _detectors()
    arguments = dict(waveform_approximant="IMRPhenomTHM", minimum_frequency=20.0, reference_frequency=20.0)
    likelihood = MemoryTransient(detectors, waveform_generator(DURATION, RATE, START, arguments))
    standard = _likelihood(detectors, bilby.gw.source.lal_binary_black_hole, arguments)
    rng = np.random.default_rng(1)
    n = calls(100)
    samples = pd.DataFrame([dict(POINT, mass_1=36.0 + rng.normal(0, 0.5), mass_2=29.0 + rng.normal(0, 0.5),
                                 phase=rng.uniform(0, 6.28), luminosity_distance=rng.uniform(300, 600))
                            for _ in range(n * SETTINGS["repeats"] + 5)])
    grid = grid_with_hypotheses(-4.0, 4.0, 81)
    log_likelihood_grid(likelihood, samples.iloc[-5:], grid)  # warm-up on samples no round uses
    standard.log_likelihood_ratio(dict(samples.iloc[-1].to_dict()))

    def batch(i):  # i counts calls; one call is one sample
        if i % n == 0:
            log_likelihood_grid(likelihood, samples.iloc[i:i + n], grid)

    def bilby_call(i):
        standard.log_likelihood_ratio(dict(samples.iloc[i].to_dict()))

    t_sample, t_bilby, ratio, _ = interleaved(batch, bilby_call, n, SETTINGS["repeats"], warm=False)
    return 1 / t_sample, ratio, t_bilby, f"{n} samples per round, one core, {len(grid)} amplitudes each, 4 s, H1+L1"


def campaign_rates():
    """Campaign injections per second on 2 local processes: the steady rate (once the workers are running) and
    the rate including the workers' start-up, medians of the rounds, and the start-up alone (seconds to the
    first stored record: two fresh interpreters importing bilby, then one injection each)."""
    rounds = np.array([campaign_rate(SETTINGS["injections"]) for _ in range(SETTINGS["repeats"])])
    steady, overall, startup, cpu = np.median(rounds, axis=0)
    return float(steady), float(overall), float(startup), float(cpu), (rounds[:, 0].min(), rounds[:, 0].max())


def reweighting_vs_bilby(approximant, point_changes=None, samples_per_round: int = 20):
    """Reweighting cost per sample (81 amplitudes, memory included) over one bilby likelihood evaluation of the
    same model on the same data (bilby's own lal_binary_black_hole; 4 s, H1+L1, 2048 Hz): median of
    ``SETTINGS["repeats"]`` rounds, each timing bilby and then the reweighting on the same fresh samples."""
    import bilby
    import pandas as pd

    from memory_infer import MemoryTransient, waveform_generator
    from memory_infer.inference.methods.reweighting import log_likelihood_grid
    from memory_infer.inputs.config import grid_with_hypotheses

    detectors = _detectors()
    arguments = dict(waveform_approximant=approximant, minimum_frequency=20.0, reference_frequency=20.0)
    point = dict(POINT, **(point_changes or {}))
    likelihood = MemoryTransient(detectors, waveform_generator(DURATION, RATE, START, arguments))
    # bilby's own source model: SimInspiralChooseFDWaveform, or SimInspiralFD for a time-domain approximant, or
    # gwsignal's route (pyseobnr) for SEOBNRv5PHM
    from memory_infer.waveform.conditioning import GWSIGNAL_MODELS

    model = (bilby.gw.source.gwsignal_binary_black_hole if approximant in GWSIGNAL_MODELS
             else bilby.gw.source.lal_binary_black_hole)
    standard = _likelihood(detectors, model, arguments)
    rng = np.random.default_rng(1)
    n = samples_per_round
    samples = pd.DataFrame([dict(point, mass_1=point["mass_1"] + rng.normal(0, 0.5),
                                 phase=rng.uniform(0, 6.28), luminosity_distance=rng.uniform(300, 600))
                            for _ in range(n * SETTINGS["repeats"] + 2)])
    grid = grid_with_hypotheses(-4.0, 4.0, 81)
    log_likelihood_grid(likelihood, samples.iloc[-2:], grid)  # warm-up on samples no round uses
    standard.log_likelihood_ratio(dict(samples.iloc[-1]))

    def batch(i):  # i counts calls; one call is one sample
        if i % n == 0:
            log_likelihood_grid(likelihood, samples.iloc[i:i + n], grid)

    def bilby_call(i):
        standard.log_likelihood_ratio(dict(samples.iloc[i]))

    t_sample, t_bilby, ratio, (low, high) = interleaved(batch, bilby_call, n, SETTINGS["repeats"], warm=False)
    LAST_SAMPLE_SECONDS[approximant] = t_sample
    return ratio, (f"{t_sample * 1e3:.1f} ms per sample vs {t_bilby * 1e3:.1f} ms per bilby likelihood "
                   f"({approximant}, 4 s, H1+L1; rounds {low:.2f}-{high:.2f}, {n} samples each)")


LAST_SAMPLE_SECONDS = {}  # approximant -> the last measured reweighting cost per sample (s)


def catalog_projection(seconds_per_sample: float, events: int = 200, samples: int = 5000) -> str:
    """A catalog of ``events`` events of ``samples`` posterior samples each, reweighted: core-hours and wall time on
    2 and on 64 cores, projected from the measured cost per sample (events independent, one per core; reading,
    set-up and the combination not included)."""
    per_event = seconds_per_sample * samples
    core_seconds = per_event * events
    on = {cores: np.ceil(events / cores) * per_event for cores in (2, 64)}
    return (f"{events}-event catalog, {samples:,} samples each, from {seconds_per_sample * 1e3:.1f} ms per sample: "
            f"{per_event:.0f} s per event, {core_seconds / 3600:.2f} core-hours, {on[2] / 3600:.2f} h on 2 cores, "
            f"{on[64] / 60:.1f} min on 64 (whole events per core; reading, set-up and combination not included)")


def table(rows):
    width = max(len(r[0]) for r in rows)
    lines = [f"{'goal':<{width}}  {'measured / goal':>17}  met  {'anchor (same run)':<28}  detail", "-" * (width + 100)]
    for name, value, target, better, anchor, detail in rows:
        met = value >= target if better == "higher" else value <= target
        sign = ">=" if better == "higher" else "<="
        lines.append(f"{name:<{width}}  {value:8.2f} / {sign}{target:<5g}  {'yes' if met else 'NO ':3}  "
                     f"{anchor:<28}  {detail}")
    return "\n".join(lines)


def main(argv=None):
    from memory_infer.common.performance import tune_allocator

    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="fewer calls and rounds; a first look, not a record")
    parser.add_argument("--repeats", type=int, default=None, help="rounds per row (default 5, quick 3)")
    parser.add_argument("--runs", action="store_true",
                        help="also time the demo and configs/example_event.toml end to end (minutes each; idle cores)")
    parser.add_argument("--run-repeats", type=int, default=None,
                        help="runs of each end-to-end command (default: the rounds of the other rows)")
    options = parser.parse_args(argv)
    if options.quick:
        SETTINGS.update(repeats=3, calls=0.3, injections=100)
    if options.repeats:
        SETTINGS["repeats"] = max(1, options.repeats)
    import bilby  # noqa: F401  (imported first: it sets its own logger's level on import)

    logging.getLogger("bilby").setLevel(logging.ERROR)
    tuned = tune_allocator()
    print(f"allocator tuned for reuse of large temporaries: {tuned} (applies to every row alike); "
          f"medians of {SETTINGS['repeats']} interleaved rounds", flush=True)
    rows = []
    for label, masses in (("18 Msun", LIGHT), ("65 Msun", HEAVY)):
        ratio, anchor, detail = memory_vs_modes(masses)
        rows.append((f"memory computation / mode generation, {label}", ratio, 0.25, "lower",
                     f"modes {anchor * 1e3:.2f} ms", detail))
    for label, masses in (("18 Msun", LIGHT), ("65 Msun", HEAVY)):
        ratio, anchor, detail = memory_likelihood_cost(masses)
        rows.append((f"memory likelihood / without memory, {label}", ratio, 1.25, "lower",
                     f"without memory {anchor * 1e3:.2f} ms", detail))
    ratio, anchor, detail = bilby_comparison()
    rows.append(("memory likelihood / bilby IMRPhenomXHM likelihood", ratio, 2.0, "lower",
                 f"bilby XHM {anchor * 1e3:.2f} ms", detail))
    rate, ratio, anchor, note = reweighting_throughput()
    rows.append(("reweighting, samples per second per core", rate, 250, "higher", f"bilby THM {anchor * 1e3:.2f} ms",
                 note))
    rows.append(("reweighting per sample / bilby IMRPhenomTHM likelihood", ratio, 1.4, "lower",
                 f"bilby THM {anchor * 1e3:.2f} ms", "same samples, interleaved"))
    ratio, note = reweighting_vs_bilby("IMRPhenomXPHM", dict(tilt_1=0.6, tilt_2=1.9, phi_12=0.8))
    rows.append(("reweighting per sample / bilby IMRPhenomXPHM likelihood", ratio, 1.5, "lower", "bilby XPHM, same run",
                 note))
    from memory_infer.waveform.models import pyseobnr_modes

    if pyseobnr_modes.available():
        for label, changes in (("aligned", {}), ("precessing", dict(tilt_1=0.6, tilt_2=1.9, phi_12=0.8))):
            ratio, note = reweighting_vs_bilby("SEOBNRv5PHM", changes)
            rows.append((f"reweighting per sample / bilby SEOBNRv5PHM likelihood, {label}", ratio, 1.25, "lower",
                         "bilby SEOBNRv5PHM (gwsignal), same run", note))
    else:
        print("SEOBNRv5PHM rows skipped: pyseobnr is not installed (bash scripts/install_seobnr.sh)")
    rate, overall, startup, cpu, (low, high) = campaign_rates()
    rows.append(("fast campaign, injections per second on 2 cores", rate, 40, "higher", "none (absolute rate)",
                 f"{SETTINGS['injections']} HLV-design injections, 4 s at 2048 Hz, all recovered; steady rate (after "
                 f"the first tenth), rounds {low:.1f}-{high:.1f}; with start-up {overall:.1f}/s, start-up {startup:.1f} s; "
                 f"CPU {cpu * 1e3:.1f} ms per injection, all processes and start-up ({2 / cpu:.1f}/s if CPU-bound)"))
    if options.runs:
        repeats = options.run_repeats or SETTINGS["repeats"]
        for name, arguments in end_to_end_commands():
            runs = np.array([end_to_end_seconds(arguments) for _ in range(repeats)])
            wall, cpu = np.median(runs[:, 0]), np.median(runs[:, 1])
            rows.append((f"{name}, wall time in seconds", wall, 300, "lower", "none (absolute, 2 cores)",
                         f"{' '.join(arguments[:1])}: median of {repeats} runs, CPU {cpu:.0f} s (all processes); "
                         f"load average {runs[:, 2].min():.1f}-{runs[:, 3].max():.1f} (before-after)"))
    print(table(rows), flush=True)
    if "IMRPhenomXPHM" in LAST_SAMPLE_SECONDS:
        print("IMRPhenomXPHM " + catalog_projection(LAST_SAMPLE_SECONDS["IMRPhenomXPHM"]))
    if options.quick:
        return
    print(partial_read_memory())
    ratio, note = slurm_overhead()
    # not a goal: the batch scheduler's overhead, measured the same way
    if ratio is not None:
        print(f"campaign time on one-node Slurm / local pool: {ratio:.2f}  ({note})")
    else:
        print(f"campaign on one-node Slurm: {note}")


def partial_read_memory(seconds: int = 4096, rate: float = 16384.0) -> str:
    """Peak memory of reading an event's stretch (8 s segment and its filter margin) from a 4096 s, 16 kHz strain
    file in the open-data layout, against reading the whole file; each in a fresh process (not a goal row)."""
    import os
    import subprocess
    import sys
    import tempfile

    import h5py

    with tempfile.TemporaryDirectory() as folder:
        path = os.path.join(folder, "long.hdf5")
        with h5py.File(path, "w") as handle:  # written in pieces: the benchmark itself never holds the whole file
            dataset = handle.create_dataset("strain/Strain", shape=(int(seconds * rate),), dtype="f8")
            dataset.attrs["Xspacing"], dataset.attrs["Xstart"] = 1.0 / rate, START
            rng = np.random.default_rng(2)
            step = int(64 * rate)
            for first in range(0, dataset.shape[0], step):
                dataset[first:first + step] = rng.normal(size=min(step, dataset.shape[0] - first))
        probe = ("import resource, sys; from memory_infer.inputs.open_data import segment_from_file; "
                 "from memory_infer.inputs.readers import read_strain; "
                 "f = segment_from_file if sys.argv[1] == 'part' else (lambda p, *a: read_strain(p)); "
                 f"f(sys.argv[2], 2048.0, {START + 2000.0}, 8.0); "
                 "print(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss)")
        peaks = {}
        for kind in ("part", "whole"):
            done = subprocess.run([sys.executable, "-c", probe, kind, path], capture_output=True, text=True)
            peaks[kind] = int(done.stdout.split()[-1]) / 1024 if done.returncode == 0 else float("nan")
    size = seconds * rate * 8 / 2 ** 20
    return (f"peak memory of one process reading an 8 s segment from a {seconds} s, {rate / 1024:g} kHz file "
            f"({size:.0f} MiB of strain): {peaks['part']:.0f} MiB read in part, {peaks['whole']:.0f} MiB read whole "
            "(maximum resident set, imports included)")


def end_to_end_commands():
    """(row name, command-line arguments) of the two end-to-end runs with a time goal."""
    import os

    here = os.path.dirname(os.path.abspath(__file__))
    return [("the demo", ["demo"]),
            ("configs/example_event.toml", ["evidence", os.path.join(here, "..", "configs", "example_event.toml")])]


def end_to_end_seconds(arguments):
    """(wall seconds, CPU seconds of the command and every process it waited for, load average before, after) of
    one ``memory-infer`` command in a fresh process, output into a temporary folder."""
    import os
    import resource
    import subprocess
    import sys
    import tempfile

    with tempfile.TemporaryDirectory() as folder:
        load_before = os.getloadavg()[0]
        usage = resource.getrusage(resource.RUSAGE_CHILDREN)
        start = time.perf_counter()
        done = subprocess.run([sys.executable, "-m", "memory_infer.cli", *arguments, "--outdir",
                               os.path.join(folder, "out")], capture_output=True, text=True,
                              cwd=os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
        wall = time.perf_counter() - start
        after = resource.getrusage(resource.RUSAGE_CHILDREN)
        cpu = (after.ru_utime - usage.ru_utime) + (after.ru_stime - usage.ru_stime)
        if done.returncode != 0:
            print(f"memory-infer {arguments[0]} failed: {(done.stderr or done.stdout).strip()[-300:]}")
            return float("nan"), float("nan"), load_before, os.getloadavg()[0]
        return wall, cpu, load_before, os.getloadavg()[0]


class _TimedStore:
    """A record store that notes when each record is stored (all ``execute`` uses of a store)."""

    def __init__(self, store):
        self.store, self.times = store, []

    def done(self):
        return self.store.done()

    def write(self, record):
        self.store.write(record)
        self.times.append(time.perf_counter())


def campaign_rate(count: int = 400, make_executor=None):
    """Fast-method injections through the campaign machinery (every one recovered): (steady injections per
    second, injections per second including start-up, seconds to the first stored record, CPU seconds per
    injection of this process and its workers together, their start-up included).

    ``make_executor()`` builds the executor (default: two local processes); its start-up is timed too.
    """
    import os
    import tempfile

    from memory_infer.campaign.config import fingerprint, load_campaign_settings, plan
    from memory_infer.campaign.injection import execute
    from memory_infer.common.executors import ProcessExecutor
    from memory_infer.commands.campaign import quiet_worker  # the command's worker log levels
    from memory_infer.campaign.store import RecordStore

    here = os.path.dirname(os.path.abspath(__file__))
    with tempfile.TemporaryDirectory() as folder:
        path = os.path.join(folder, "campaign.toml")
        with open(path, "w") as handle:
            handle.write(f"""[campaign]
injections = "{os.path.join(here, '..', 'injections', 'bbh_population.toml')}"
count = {count}
network = "hlv-design"
detection_snr = 0.0
method = "fast"
[data]
duration = 4.0
sampling_rate = 2048.0
""")
        tasks = plan(load_campaign_settings(path), folder)
        store = _TimedStore(RecordStore(os.path.join(folder, "records.sqlite"), fingerprint(tasks)))
        cpu_before = _cpu_seconds()
        start = time.perf_counter()
        executor = make_executor(folder) if make_executor else ProcessExecutor(2, setup=quiet_worker)
        execute(tasks, store, executor, progress=False, window=16)
        elapsed = time.perf_counter() - start
        executor.close()  # waits for the workers, so their CPU time is counted
        cpu = _cpu_seconds() - cpu_before
        store.store.close()
    times = np.array(store.times)
    first = max(4, count // 10)  # steady rate: from the first tenth's last record on (the workers are warm)
    steady = (count - first) / (times[-1] - times[first - 1])
    return steady, count / elapsed, times[0] - start, cpu / count


def _cpu_seconds() -> float:
    """User + system CPU seconds of this process and of its ended child processes (local workers)."""
    import resource

    own, children = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    return own.ru_utime + own.ru_stime + children.ru_utime + children.ru_stime


def slurm_overhead(count: int = 400):
    """Local pool over one-node Slurm (two one-core worker jobs through dask-jobqueue), same workers."""
    import os
    import shutil
    import subprocess

    if shutil.which("sinfo") is None or subprocess.run(["sinfo", "-h"], capture_output=True).returncode != 0:
        return None, "not measured: no Slurm here (python3 scripts/local_slurm.py up starts one)"
    from memory_infer.common.executors import DaskExecutor
    from memory_infer.commands.campaign import quiet_worker

    from memory_infer.inputs.settings import ClusterSettings

    section = ClusterSettings(kind="slurm", jobs=2, cores=1, memory="2GB", walltime="00:30:00")
    local = campaign_rate(count)[1]
    on_slurm = campaign_rate(count, lambda folder: DaskExecutor.from_settings(
        section, None, os.path.join(folder, "logs"), setup=quiet_worker))[1]
    return local / on_slurm, (f"{on_slurm:.1f} vs {local:.1f} injections/s, {count} injections, 2 workers, "
                              "job start-up included")


if __name__ == "__main__":
    main()
