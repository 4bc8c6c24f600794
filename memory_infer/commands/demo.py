"""``memory-infer demo``: the built-in invented scenario, run end to end on this machine."""
from __future__ import annotations

import argparse
import os

from . import waveform


def add_arguments(parser):
    parser.add_argument("--outdir", default="demo-out", help="folder for the demo's reports")


def run(args) -> int:
    os.makedirs(args.outdir, exist_ok=True)
    # invented event "heron-01": an unequal-mass binary seen edge-on, the memory at its largest
    event = argparse.Namespace(mass_1=48.0, mass_2=31.0, spin_1=0.2, spin_2=-0.1, distance=380.0,
                               inclination=1.4, phase=0.6, model="IMRPhenomTHM", start_frequency=20.0,
                               sampling_rate=4096.0, segment=8.0, noise="ligo-design", no_early_inspiral=False,
                               outdir=os.path.join(args.outdir, "heron-01"))
    print("demo: invented event heron-01, waveform and memory")
    waveform.run(event)
    print(f"demo: reports are in {os.path.abspath(args.outdir)}")
    return 0
