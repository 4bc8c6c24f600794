"""Invented catalog events made with the trade's own tools: Gaussian noise from bilby's noise curves with the
signal injected (memory included), written in the open-data archive's layout (32 s at 4096 Hz, named in the
archive's pattern but with our own tag, ``INVENTED_DEMO``, never the archive's); a short bilby run (dynesty through ``bilby.run_sampler``) on the 4 s, 1024 Hz segment cut
from those files, without memory; and its posterior written by pesummary's own writer as a catalog release with
the run's configuration, PSDs and metadata. Everything here is invented (demo data only)."""
from __future__ import annotations

import os
import shutil
import tempfile

import numpy as np

from ..common.errors import MemoryInferError
from ..common.writing import read_json, write_json

# label, masses (detector frame, solar masses), distance (Mpc), inclination, memory amplitude injected
DEMO_EVENTS = [
    ("gannet-01", (38.0, 31.0), 260.0, 0.5, 1.0),
    ("gannet-02", (44.0, 36.0), 330.0, 0.9, 1.0),
    ("skua-03", (33.0, 27.0), 210.0, 1.1, 1.0),
    ("skua-04", (50.0, 40.0), 420.0, 0.7, 1.0),
    ("fulmar-05", (36.0, 30.0), 300.0, 1.3, 0.0),
]
FILE_RATE, FILE_SECONDS, RATE, DURATION, POST_TRIGGER = 4096.0, 32, 1024.0, 4.0, 2.0
DEMO_LIVE_POINTS = 100  # short bilby runs (chirp mass and distance free): some 110-130 posterior samples each
SKY = {"ra": 1.3, "dec": -0.2, "psi": 0.5, "phase": 0.8}
RUN_CONFIG = """[config]
trigger-time = {trigger}
duration = {duration:g}
post-trigger-duration = {post:g}
sampling-frequency = {rate:g}
minimum-frequency = {{ {minimum} }}
maximum-frequency = {{ {maximum} }}
reference-frequency = 20
waveform-approximant = IMRPhenomTHM
detectors = {detectors}
"""


def _arguments():
    return {"waveform_approximant": "IMRPhenomTHM", "reference_frequency": 20.0, "minimum_frequency": 20.0,
            "early_inspiral_memory": True, "memory_taper_duration": 1.0, "catch_waveform_errors": True}


def strain_files(folder: str, trigger: float, injection: dict, seed: int, detectors=("H1", "L1"),
                 curve: str = "ligo-design") -> dict:
    """Open-data-layout files (32 s at 4096 Hz around ``trigger``) of Gaussian noise with the injection, named with
    our own tag (:func:`memory_infer.inputs.open_data.invented_data_name`)."""
    import bilby

    from ..inputs.detectors import noise_curve_path
    from ..inputs.open_data import invented_data_name, write_open_data
    from ..waveform.generator import waveform_generator

    start = int(trigger) - FILE_SECONDS // 2
    interferometers = bilby.gw.detector.InterferometerList(list(detectors))
    for detector in interferometers:
        detector.power_spectral_density = bilby.gw.detector.PowerSpectralDensity(asd_file=noise_curve_path(curve))
        detector.minimum_frequency = 20.0
    bilby.core.utils.random.seed(seed)
    interferometers.set_strain_data_from_power_spectral_densities(FILE_RATE, FILE_SECONDS, start)
    generator = waveform_generator(float(FILE_SECONDS), FILE_RATE, float(start), _arguments())
    interferometers.inject_signal(waveform_generator=generator, parameters=injection, raise_error=True)
    files = {}
    for detector in interferometers:
        name = invented_data_name(detector.name, start, FILE_SECONDS, FILE_RATE)
        write_open_data(os.path.join(folder, name), detector.strain_data.time_domain_strain, FILE_RATE, start,
                        detector.name)
        files[detector.name] = name
    return files


def _segment_config(label, folder, files, trigger, priors_text, live_points):
    start = trigger + POST_TRIGGER - DURATION
    entries = "\n".join(f"[data.files.{d}]\nstrain = \"{f}\"\npsd_off_source = true\n" for d, f in files.items())
    return f"""[event]
label = "{label}"
[data]
kind = "files"
duration = {DURATION}
sampling_rate = {RATE}
start_time = {start}
minimum_frequency = 20.0
maximum_frequency = 448.0
{entries}
[priors]
{priors_text}
[sampler]
live_points = {live_points}
accepted_walks = 5
progress = false
"""


def release_samples(folder: str, label: str, files: dict, trigger: float, injection: dict, live_points: int,
                    seed: int):
    """(posterior table, PSDs per detector) of a short bilby run without memory on the segment cut from the files."""
    import bilby

    from ..inference.setup import prepare
    import tomllib

    from ..inputs.config import evidence_settings

    chirp = bilby.gw.conversion.component_masses_to_chirp_mass(injection["mass_1"], injection["mass_2"])
    ratio = injection["mass_2"] / injection["mass_1"]
    fixed = "\n".join(f"{k} = {injection[k]}" for k in ("theta_jn", "ra", "dec", "psi", "geocent_time"))
    distance = injection["luminosity_distance"]
    priors_text = (f"chirp_mass = {{ kind = \"uniform\", minimum = {chirp * 0.96:.4f}, maximum = {chirp * 1.04:.4f} }}\n"
                   f"mass_ratio = {ratio!r}\nphase = {injection['phase']!r}\n"
                   f"luminosity_distance = {{ kind = \"power_law\", alpha = 2, minimum = {0.4 * distance:.1f}, "
                   f"maximum = {1.8 * distance:.1f} }}\n{fixed}")
    raw = tomllib.loads(_segment_config(label, folder, files, trigger, priors_text, live_points))
    setup = prepare(evidence_settings(raw, f"the demo run of {label}", folder))
    likelihood, priors = setup.likelihood("none")
    with tempfile.TemporaryDirectory() as work:
        result = bilby.run_sampler(likelihood=likelihood, priors=priors, sampler="dynesty", nlive=int(live_points),
                                   sample="acceptance-walk", naccept=2, dlogz=1.0, outdir=work, label=label,
                                   rstate=np.random.default_rng(seed), print_progress=False, save=False, plot=False,
                                   check_point_plot=False, check_point_delta_t=3600)
    posterior = result.posterior.drop(columns=[c for c in ("memory_amplitude",) if c in result.posterior])
    psds = {d.name: np.column_stack([d.power_spectral_density.frequency_array,
                                     d.power_spectral_density.psd_array]) for d in setup.detectors}
    return posterior, psds


def stand_in_samples(injection: dict, count: int, seed: int):
    """Samples scattered narrowly around the injection (for small tests only, not the demo): no log-likelihood."""
    import pandas as pd

    rng = np.random.default_rng(seed)
    table = {k: np.full(count, float(v)) for k, v in injection.items() if k != "memory_amplitude"}
    table["mass_1"] = injection["mass_1"] * (1 + 0.001 * rng.standard_normal(count))
    table["mass_2"] = injection["mass_2"] * (1 + 0.001 * rng.standard_normal(count))
    table["luminosity_distance"] = injection["luminosity_distance"] * (1 + 0.01 * rng.standard_normal(count))
    table["phase"] = (injection["phase"] + 0.01 * rng.standard_normal(count)) % (2 * np.pi)
    return pd.DataFrame(table)


def write_release(path: str, analysis: str, posterior, psds: dict, trigger: float, detectors) -> None:
    """The posterior as a catalog release, by pesummary's own writer, with the run's configuration."""
    import logging

    logging.getLogger("PESummary").setLevel(logging.ERROR)
    from pesummary.gw.file.formats.pesummary import write_pesummary

    folder, name = os.path.split(os.path.abspath(path))
    columns = [c for c in posterior.columns if np.issubdtype(posterior[c].dtype, np.number)]
    with tempfile.TemporaryDirectory() as work:
        ini = os.path.join(work, "config.ini")
        with open(ini, "w") as handle:
            handle.write(RUN_CONFIG.format(trigger=trigger, duration=DURATION, post=POST_TRIGGER, rate=RATE,
                                           minimum=", ".join(f"'{d}': 20" for d in detectors),
                                           maximum=", ".join(f"'{d}': 448" for d in detectors),
                                           detectors=str(list(detectors))))
        write_pesummary(columns, posterior[columns].to_numpy(float), outdir=folder, label=analysis, config=[ini],
                        psd={analysis: psds} if psds else None, approximant={analysis: "IMRPhenomTHM"}, hdf5=True,
                        filename=name, file_kwargs={analysis: {"sampler": {}, "meta_data": {
                            "f_ref": 20.0, "approximant": "IMRPhenomTHM"}}})


def invented_event(folder: str, label: str, masses, distance: float, inclination: float, amplitude: float,
                   seed: int, trigger: float, live_points: int | None = DEMO_LIVE_POINTS, stand_in: int = 120) -> dict:
    """Strain files and a release for one invented event; ``live_points=None`` skips the bilby run and writes
    ``stand_in`` samples scattered around the injection instead (small tests only)."""
    injection = dict(mass_1=float(masses[0]), mass_2=float(masses[1]), luminosity_distance=float(distance),
                     theta_jn=float(inclination), geocent_time=float(trigger), memory_amplitude=float(amplitude),
                     a_1=0.0, a_2=0.0, tilt_1=0.0, tilt_2=0.0, phi_12=0.0, phi_jl=0.0, **SKY)
    files = strain_files(folder, trigger, injection, seed)
    if live_points is None:
        posterior, psds = stand_in_samples(injection, stand_in, seed), {}
    else:
        posterior, psds = release_samples(folder, label, files, trigger, injection, live_points, seed)
    release = f"{label}_release.h5"
    write_release(os.path.join(folder, release), "C01:IMRPhenomTHM", posterior, psds, trigger, list(files))
    return {"label": label, "release": release, "strain": files, "injection": injection}


def demo_catalog(folder: str, live_points: int | None = DEMO_LIVE_POINTS, events=DEMO_EVENTS, workers: int = 1) -> str:
    """Every demo event's files (made on ``workers`` processes) and a catalog file listing them; returns the
    catalog file's path."""
    os.makedirs(folder, exist_ok=True)
    lines = ["# invented demo catalog: releases and strain made by the demo itself", "[catalog]",
             "name = \"invented demo catalog\"", ""]
    import concurrent.futures

    with concurrent.futures.ProcessPoolExecutor(max_workers=max(1, int(workers))) as pool:
        made = [pool.submit(invented_event, folder, label, masses, distance, inclination, amplitude, 100 + number,
                            1_000_000_016.0 + 1000.0 * number, live_points)
                for number, (label, masses, distance, inclination, amplitude) in enumerate(events)]
        made = [future.result() for future in made]
    for event, (label, masses, distance, inclination, amplitude) in zip(made, events):
        strain = ", ".join(f"{d} = \"{f}\"" for d, f in event["strain"].items())
        lines += ["[[events]]", f"label = \"{label}\"", f"release = \"{event['release']}\"",
                  f"strain = {{ {strain} }}", f"# injected memory amplitude {amplitude:g}"]
        if amplitude == 0:  # injected without memory: a control, kept out of the sums and shown apart
            lines += ["overrides = { event = { control = true } }"]
        lines += [""]
    path = os.path.join(folder, "catalog.toml")
    with open(path, "w") as handle:
        handle.write("\n".join(lines))
    return path


MADE_WITH = "made_with.json"  # beside the invented inputs: what made them


def inputs_made_with() -> dict:
    """What the invented inputs depend on: this module's code (events, settings, how they are written) and the
    versions of the tools that make them."""
    import importlib.metadata as metadata

    from ..inference.digests import digest_of

    with open(__file__, encoding="utf-8") as handle:
        code = digest_of(handle.read())
    versions = {}
    for package in ("memory_infer", "bilby", "dynesty", "lalsuite", "pesummary", "numpy"):
        try:
            versions[package] = metadata.version(package)
        except metadata.PackageNotFoundError:
            versions[package] = None
    return {"code": code, "versions": versions}


def recorded_made_with(inputs: str) -> dict | None:
    """What made the inputs in ``inputs``, as recorded there (None when nothing was recorded)."""
    try:
        return read_json(os.path.join(inputs, MADE_WITH), "the record of what made the demo's inputs")
    except MemoryInferError:
        return None


def check_pesummary() -> None:
    """One sentence when pesummary, which writes the demo's releases, is not installed."""
    import importlib.util

    if importlib.util.find_spec("pesummary") is None:
        raise MemoryInferError("the demo catalog writes its releases with pesummary, which is not installed; "
                               "install it with pip install \".[test]\" (or pip install \"memory_infer[test]\")")


def run_demo_catalog(args) -> int:
    """``memory-infer demo --catalog``: the invented events' files, then the catalog command on them."""
    import argparse
    import time

    from . import catalog

    from ..common.writing import output_folder

    started = time.time()
    outdir = os.path.abspath(args.outdir)
    if os.path.exists(outdir) and not os.path.isdir(outdir):
        output_folder(outdir)  # one sentence: a file stands there
    inputs = os.path.join(outdir, "catalog_inputs")
    path = os.path.join(inputs, "catalog.toml")
    made_with = inputs_made_with()
    if not (os.path.isfile(path) and recorded_made_with(inputs) == made_with):  # made once; a rerun resumes
        check_pesummary()
        if os.path.isdir(inputs):
            print("the invented events in catalog_inputs were made by other code or tools: making them again")
        print(f"making {len(DEMO_EVENTS)} invented events (open-data strain, short bilby runs, pesummary releases)")
        partial = inputs + ".partial"
        shutil.rmtree(partial, ignore_errors=True)  # left by a run killed before it could clean up
        try:
            made = demo_catalog(partial, live_points=DEMO_LIVE_POINTS, workers=args.workers)
            write_json(os.path.join(partial, MADE_WITH), made_with)
        except BaseException:  # noqa: BLE001 - failed or interrupted: no half-made inputs stay behind
            shutil.rmtree(partial, ignore_errors=True)
            raise
        if os.path.isdir(inputs):  # the old inputs replaced only once the new ones are whole
            os.replace(inputs, inputs + ".old")
        os.replace(os.path.dirname(made), inputs)
        shutil.rmtree(inputs + ".old", ignore_errors=True)
    from ..catalog.population import LARGEST_SPREAD

    code = catalog.run(argparse.Namespace(catalog=path, outdir=os.path.join(outdir, "catalog"),
                                          workers=args.workers, scheduler=None, quiet=False,
                                          largest_spread=LARGEST_SPREAD))
    print(f"demo catalog finished in {time.time() - started:.0f} s; open {os.path.join(outdir, 'catalog', 'report.html')}")
    return code
