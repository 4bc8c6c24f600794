"""CPU seconds of one process that builds a small invented event and evaluates the memory likelihood on the amplitude
grid and the waveform, for an aligned-spin (IMRPhenomTHM) and a precessing (IMRPhenomTPHM) model: run it twice with
the same empty ``NUMBA_CACHE_DIR``; the first run compiles the loops, the second loads them, and the difference is
numba's compilation.

    d=$(mktemp -d); for run in 1 2; do NUMBA_CACHE_DIR=$d python scripts/compile_time.py; done
"""
import os
import resource
import sys
import tempfile
import time

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
sys.path.insert(0, ROOT)
sys.path.insert(0, os.path.join(ROOT, "tests"))

import numpy as np  # noqa: E402

from helpers import event_config  # noqa: E402
from memory_infer.inference.setup import prepare  # noqa: E402
from memory_infer.inputs.config import load_evidence_settings  # noqa: E402


def main():
    began = time.time()
    folder = tempfile.mkdtemp()
    for approximant in ("IMRPhenomTHM", "IMRPhenomTPHM"):
        path = event_config(folder, name=f"{approximant}.toml", methods='["fast"]')
        with open(path) as handle:
            text = handle.read().replace('approximant = "IMRPhenomTHM"', f'approximant = "{approximant}"')
        with open(path, "w") as handle:
            handle.write(text)
        setup = prepare(load_evidence_settings(path))
        likelihood, _ = setup.likelihood("none", marginalize=False)
        point = {k: v for k, v in setup.injection.items() if k != "memory_amplitude"}
        likelihood.log_likelihood_ratio_curve(point, np.linspace(-3, 3, 61))
        setup.generator.frequency_domain_strain(dict(point, memory_amplitude=1.0))
    usage = resource.getrusage(resource.RUSAGE_SELF)
    print(f"CPU {usage.ru_utime + usage.ru_stime:.2f} s (user {usage.ru_utime:.2f}, system {usage.ru_stime:.2f}); "
          f"wall {time.time() - began:.1f} s")


if __name__ == "__main__":
    main()
