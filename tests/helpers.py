"""Small configurations and data for tests (short segments, few parameters)."""
import json
import os
import sqlite3

FIXED_SKY_AND_TIME = """theta_jn = 1.0
phase = 0.5
ra = 1.0
dec = 0.2
psi = 0.3
geocent_time = 1000000002.0"""  # file-data tests: everything but the masses and distance fixed

BASE_EVENT = """
[event]
label = "{label}"

[data]
kind = "simulated"
detectors = {detectors}
noise_curve = "{noise_curve}"
noise = "{noise}"
seed = {seed}
duration = 4.0
sampling_rate = {sampling_rate}
start_time = 1000000000.0
minimum_frequency = 20.0

[injection]
mass_1 = 36.0
mass_2 = 29.0
luminosity_distance = {distance}
theta_jn = 1.2
phase = 0.6
ra = 1.1
dec = 0.3
psi = 0.4
geocent_time = 1000000002.0
memory_amplitude = {amplitude}

[model]
approximant = "IMRPhenomTHM"

[priors]
{priors}

[likelihood]
{likelihood}

[sampler]
live_points = {live_points}
accepted_walks = 10
seed = 3
checkpoint_seconds = {checkpoint_seconds}
progress = false

[evidence]
methods = {methods}
nested_hypotheses = {hypotheses}
reweight_from = ["none"]
amplitude_grid = [-3.0, 3.0, 61]
{evidence_extra}
"""


def event_config(directory, name="event.toml", label="test-event", detectors='["CE"]', noise_curve="ce",
                 noise="zero", seed=1, distance=3000.0, amplitude=1.0,
                 priors='phase = { kind = "periodic", minimum = 0.0, maximum = 6.283185307179586 }',
                 likelihood="", live_points=40, methods='["nested", "reweighting", "fast"]',
                 hypotheses='["memory", "none"]', evidence_extra="", sampling_rate=1024.0, checkpoint_seconds=600.0):
    """A small simulated event's configuration. ``checkpoint_seconds``: tests are short and a checkpoint (a dill
    pickle of the sampler) costs about a second, so by default a run writes none before it ends; tests of
    checkpointing pass a short interval."""
    text = BASE_EVENT.format(label=label, detectors=detectors, noise_curve=noise_curve, noise=noise, seed=seed,
                             distance=distance, amplitude=amplitude, priors=priors, likelihood=likelihood,
                             live_points=live_points, methods=methods, hypotheses=hypotheses,
                             evidence_extra=evidence_extra, sampling_rate=sampling_rate,
                             checkpoint_seconds=checkpoint_seconds)
    path = os.path.join(str(directory), name)
    with open(path, "w") as handle:
        handle.write(text)
    return path


# ---------------------------------------------------------------- campaigns

HERE = os.path.dirname(os.path.abspath(__file__))
INJECTIONS = os.path.join(os.path.dirname(HERE), "injections")


def campaign_config(tmp_path, name="campaign.toml", count=40, network="ce", noise="gaussian", amplitude="1.0",
                    method="fast", injections="bbh_population.toml", detection_snr=8.0, extra="", sampling_rate=1024.0):
    text = f"""
[campaign]
label = "test-campaign"
injections = "{os.path.join(INJECTIONS, injections)}"
count = {count}
seed = 5
network = "{network}"
noise = "{noise}"
injected_amplitude = {amplitude}
method = "{method}"
detection_snr = {detection_snr}
bootstrap = 200
[data]
duration = 4.0
sampling_rate = {sampling_rate}
minimum_frequency = 20.0
{extra}
"""
    path = tmp_path / name
    path.write_text(text)
    return str(path)


def stored(outdir):
    with sqlite3.connect(os.path.join(outdir, "records.sqlite")) as connection:
        rows = connection.execute("SELECT id, record FROM records ORDER BY id").fetchall()
    return {i: {k: v for k, v in json.loads(r).items() if k != "seconds"} for i, r in rows}


def run_store(config_path, outdir, executor, window):
    from memory_infer.campaign.config import fingerprint, load_campaign_settings, plan
    from memory_infer.campaign.injection import execute
    from memory_infer.campaign.store import RecordStore

    tasks = plan(load_campaign_settings(config_path), str(outdir))
    os.makedirs(outdir, exist_ok=True)
    store = RecordStore(os.path.join(outdir, "records.sqlite"), fingerprint(tasks))
    try:
        execute(tasks, store, executor, progress=False, window=window)
    finally:
        executor.close()
        store.close()
    return stored(outdir)


# ---------------------------------------------------------------- processes

def session_processes(session: int) -> list:
    """Live processes (zombies excluded: they have ended) of one session, from /proc (Linux)."""
    out = []
    for entry in os.listdir("/proc"):
        if entry.isdigit():
            try:
                with open(f"/proc/{entry}/stat") as handle:
                    fields = handle.read().rsplit(")", 1)[1].split()
            except OSError:
                continue
            if int(fields[3]) == session and fields[0] not in ("Z", "X"):  # fields: state, ppid, pgrp, session
                out.append(int(entry))
    return out


# ---------------------------------------------------------------- references

def bilby_memory_snr(generator, source, detectors, asd_file, minimum_frequency, rate, duration, start):
    """Optimal network SNR of the memory alone computed with bilby's own objects only: bilby's interferometers
    for ``detectors`` (ET as its three), each with ``asd_file`` read by bilby and the band from
    ``minimum_frequency``, bilby's detector response and ``optimal_snr_squared``; the memory is the generator's
    strain at A = 1 minus that at A = 0."""
    import bilby
    import numpy as np

    generator.start_time = start
    with_memory = {k: v.copy() for k, v in generator.frequency_domain_strain(dict(source, memory_amplitude=1.0)).items()}
    without = generator.frequency_domain_strain(dict(source, memory_amplitude=0.0))
    memory = {k: with_memory[k] - without[k] for k in with_memory}
    interferometers = bilby.gw.detector.InterferometerList(list(detectors))
    for interferometer in interferometers:
        interferometer.power_spectral_density = \
            bilby.gw.detector.PowerSpectralDensity.from_amplitude_spectral_density_file(asd_file)
        interferometer.minimum_frequency = minimum_frequency
    interferometers.set_strain_data_from_zero_noise(rate, duration, start)
    total = sum(np.real(i.optimal_snr_squared(i.get_detector_response(memory, source))) for i in interferometers)
    return float(np.sqrt(total)), len(interferometers)


# ---------------------------------------------------------------- catalogs

def small_catalog(folder, count=5, extra=""):
    """``count`` invented events (open-data-layout strain, pesummary-written releases with samples scattered
    around the injection: bookkeeping tests only) and one whose strain has a data gap inside its segment (refused);
    returns the catalog file's path."""
    from memory_infer.commands.catalog_demo import DEMO_EVENTS, invented_event
    from memory_infer.inputs.open_data import write_open_data

    folder = str(folder)
    os.makedirs(folder, exist_ok=True)
    lines = ["[catalog]", 'name = "small test catalog"', "", "[defaults.evidence]",
             "minimum_effective_samples = 20.0", extra, ""]
    for number in range(count):
        label, masses, distance, inclination, amplitude = DEMO_EVENTS[number % len(DEMO_EVENTS)]
        label = f"{label}-{number}"
        event = invented_event(folder, label, masses, distance, inclination, amplitude, seed=200 + number,
                               trigger=1_000_000_016.0 + 1000.0 * number, live_points=None, stand_in=60)
        strain = ", ".join(f'{d} = "{f}"' for d, f in event["strain"].items())
        lines += ["[[events]]", f'label = "{label}"', f'release = "{event["release"]}"', f"strain = {{ {strain} }}",
                  ""]
    import h5py
    import numpy as np

    gappy = os.path.join(folder, "H-H1_INVENTED_DEMO_4KHZ-1000000000-32-gap.hdf5")
    with h5py.File(os.path.join(folder, event["strain"]["H1"]), "r") as handle:
        strain, start = handle["strain/Strain"][()], handle["strain/Strain"].attrs["Xstart"]
    mask = np.full(32, 127)
    mask[15] = 0  # no data in the analysis segment
    write_open_data(gappy, strain, 4096.0, start, "H1", mask)
    lines += ["[[events]]", 'label = "gap-inside"', f'release = "{event["release"]}"',
              f'strain = {{ H1 = "{os.path.basename(gappy)}" }}', ""]
    path = os.path.join(folder, "catalog.toml")
    with open(path, "w") as handle:
        handle.write("\n".join(lines))
    return path


def without_wall_times(value):
    """A catalog.json's content without wall times (the only part that may differ between runs)."""
    if isinstance(value, dict):
        return {k: without_wall_times(v) for k, v in value.items() if k != "wall_seconds"}
    if isinstance(value, list):
        return [without_wall_times(v) for v in value]
    return value


def equal_to_rounding(first, second, relative=1e-10, path="", absolute=1e-10) -> None:
    """Assert two JSON-like values equal, floats to ``relative`` or ``absolute`` (small ln BF from cancelling
    terms keep only absolute digits; a process elsewhere, such as a batch job, may round
    the last bits of vectorized sums differently: numpy's summation order follows memory alignment)."""
    import math

    if isinstance(first, dict) and isinstance(second, dict):
        assert set(first) == set(second), f"{path}: keys {sorted(set(first) ^ set(second))} differ"
        for key in first:
            equal_to_rounding(first[key], second[key], relative, f"{path}/{key}", absolute)
    elif isinstance(first, (list, tuple)) and isinstance(second, (list, tuple)):
        assert len(first) == len(second), f"{path}: lengths {len(first)} and {len(second)}"
        for index, (a, b) in enumerate(zip(first, second)):
            equal_to_rounding(a, b, relative, f"{path}[{index}]", absolute)
    elif isinstance(first, float) and isinstance(second, (float, int)) and not isinstance(second, bool):
        assert (math.isnan(first) and math.isnan(second)) or math.isclose(first, second, rel_tol=relative,
                                                                          abs_tol=absolute), f"{path}: {first} != {second}"
    else:
        assert first == second, f"{path}: {first!r} != {second!r}"
