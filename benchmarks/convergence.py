"""Prints the memory's convergence table: final memory and network memory SNR against modes 16x finer.

The same cases, reference and measures as tests/waveform/models/test_refine.py (a convergence study:
the binary's modes at 65536 Hz on one uniform grid, no finer levels), but every number printed
instead of asserted, so a change to the memory can be compared before and after. Tolerance: 0.5%.
"""
from __future__ import annotations

import importlib.util
import logging
import os
import sys

logging.getLogger("bilby").setLevel(logging.ERROR)

HERE = os.path.dirname(os.path.abspath(__file__))


def _test_module():
    path = os.path.join(HERE, "..", "tests", "waveform", "models", "test_refine.py")
    spec = importlib.util.spec_from_file_location("convergence_cases", path)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def main(cases=None):
    from memory_infer.waveform.models import generate_modes

    t = _test_module()
    cases = cases or list(t.CASES)
    print(f"{'case':<18} {'rate':>6}  {'final memory error':>19}  {'memory SNR error':>17}")
    worst = 0.0
    for case in cases:
        approximant, (m1, m2, s1, s2) = t.CASES[case]
        for rate in t.rates(case):
            series = generate_modes(approximant, m1, m2, 100.0, 1 / rate, 20.0, s1, s2, 20.0)
            ours = t.direction_memory(series)
            expected = t.expected_memory(series, case)
            final = abs(ours[-1]) / abs(expected[-1]) - 1
            snr = t.network_snr(series.times, ours, rate) / t.network_snr(series.times, expected, rate) - 1
            worst = max(worst, abs(final), abs(snr))
            print(f"{case:<18} {rate:6.0f}  {final:+19.2e}  {snr:+17.2e}", flush=True)
    print(f"largest error {worst:.2e} (tolerance 5e-3)")


if __name__ == "__main__":
    main(sys.argv[1:] or None)
