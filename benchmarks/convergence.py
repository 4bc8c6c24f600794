"""Prints the memory's convergence table: final memory and network memory SNR against modes 16x finer.

The same cases, reference and measures as tests/waveform/models/test_refine.py (a convergence study:
the binary's modes at 65536 Hz on one uniform grid, no finer levels) and, for the frequency-domain models,
tests/waveform/test_frequency_source.py (the spectra taken to 16384 Hz, at 32768 Hz on one grid), but every number
printed instead of asserted, so a change to the memory can be compared before and after. Tolerance: 0.5%.
Run: ``python benchmarks/convergence.py [CASE ...]``.
"""
from __future__ import annotations

import importlib.util
import logging
import os
import sys

logging.getLogger("bilby").setLevel(logging.ERROR)

HERE = os.path.dirname(os.path.abspath(__file__))


def _test_module(path=os.path.join("models", "test_refine.py")):
    path = os.path.join(HERE, "..", "tests", "waveform", path)
    spec = importlib.util.spec_from_file_location("convergence_cases_" + os.path.basename(path)[:-3], path)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def main(cases=None):
    from memory_infer.waveform.models import generate_modes

    t = _test_module()
    chosen = cases or list(t.CASES)
    print(f"{'case':<18} {'rate':>6}  {'final memory error':>19}  {'memory SNR error':>17}")
    worst = 0.0
    for case in (c for c in chosen if c in t.CASES):
        approximant, (m1, m2, s1, s2) = t.CASES[case]
        for rate in t.rates(case):
            series = generate_modes(approximant, m1, m2, 100.0, 1 / rate, 20.0, s1, s2, 20.0)
            ours = t.direction_memory(series)
            expected = t.expected_memory(series, case)
            final = abs(ours[-1]) / abs(expected[-1]) - 1
            snr = t.network_snr(series.times, ours, rate) / t.network_snr(series.times, expected, rate) - 1
            worst = max(worst, abs(final), abs(snr))
            print(f"{case:<18} {rate:6.0f}  {final:+19.2e}  {snr:+17.2e}", flush=True)
    if not cases or any(case in _test_module("test_frequency_source.py").CONVERGENCE for case in cases):
        worst = max(worst, frequency_domain(cases))
    print(f"largest error {worst:.2e} (tolerance 5e-3)")


def frequency_domain(cases=None) -> float:
    """The frequency-domain rows: memory at the data's rate against the spectra taken to 16384 Hz (H1 + L1)."""
    import numpy as np

    from memory_infer.waveform.frequency_source import FrequencyModes, frequency_modes, memory_strain
    from memory_infer.waveform.models.fd_modes import mode_spectra, time_modes

    t = _test_module("test_frequency_source.py")
    worst = 0.0
    for case, (approximant, m1, m2, s1, s2) in t.CONVERGENCE.items():
        if cases and case not in cases:
            continue
        spectra = mode_spectra(approximant, m1, m2, 1.0, 20.0, s1, s2, 20.0, 1.0, 0.4, 0.0, maximum_frequency=16384.0)
        fine = FrequencyModes(series=time_modes(spectra, 1 / 32768), spectra=spectra)
        reference = memory_strain(fine, 1.0, 0.4, early_inspiral=False)
        for rate in (1024.0, 2048.0, 4096.0):
            modes = frequency_modes(approximant, m1, m2, 1 / rate, 20.0, s1, s2, 20.0, 1.0, 0.4, 0.0)
            ours = memory_strain(modes, 1.0, 0.4, early_inspiral=False)
            times = modes.series.times
            expected = (np.interp(times, fine.series.times, reference.real)
                        + 1j * np.interp(times, fine.series.times, reference.imag))
            expected -= expected[0]
            final = abs(ours[-1]) / abs(expected[-1]) - 1
            snr = t.layout_snr(times, ours, rate) / t.layout_snr(times, expected, rate) - 1
            worst = max(worst, abs(final), abs(snr))
            print(f"{case:<31} {rate:6.0f}  {final:+19.2e}  {snr:+17.2e}", flush=True)
    return worst


if __name__ == "__main__":
    main(sys.argv[1:] or None)
