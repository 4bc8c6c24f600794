"""Accuracy of the distance-marginalized ln BF(A) = ln Z(A) - ln Z(0): bilby's lookup table and our direct
quadrature, each against adaptive quadrature (scipy.integrate.quad), printed as a table.

A synthetic event at network SNR rho (oscillatory part) with a memory part of SNR 0.05 rho and overlap
<h_osc, h_mem> = 0.1 rho rho_mem, observed at its true distance with zero noise; prior p(D) ∝ D^2 on
[100, 5000] Mpc. Run: python scripts/distance_accuracy.py [--table-file PATH]
"""
from __future__ import annotations

import argparse
import os
import sys
import tempfile

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.dirname(os.path.abspath(__file__))))


def products(snr, amplitude, true_distance, reference):
    """(Re<d,h(A)>, <h(A),h(A)>) at the reference distance for data = h_osc + h_mem at the true distance."""
    memory = 0.05 * snr
    overlap = 0.1 * snr * memory
    scale = true_distance / reference
    d_osc, d_mem = snr ** 2 + overlap, overlap + memory ** 2
    h_oo, h_om, h_mm = snr ** 2, overlap, memory ** 2
    dh = scale * (d_osc + amplitude * d_mem)
    hh = scale ** 2 * (h_oo + 2 * amplitude * h_om + amplitude ** 2 * h_mm)
    return dh, hh


def adaptive(prior, reference, dh, hh):
    """ln of the normalized marginal by scipy.integrate.quad, split at the likelihood's peak."""
    from scipy.integrate import quad

    peak_s = dh / hh
    exponent_max = dh * peak_s - hh * peak_s ** 2 / 2
    integrand = lambda d: prior.prob(d) * np.exp(dh * reference / d - hh * (reference / d) ** 2 / 2 - exponent_max)
    peak = reference / peak_s
    points = [p for p in (peak * (1 - 4 / np.sqrt(hh)), peak, peak * (1 + 4 / np.sqrt(hh)))
              if prior.minimum < p < prior.maximum]
    value, _ = quad(integrand, prior.minimum, prior.maximum, points=points or None, limit=500, epsabs=0,
                    epsrel=1e-13)
    return np.log(value) + exponent_max


def measure(table_file):
    import bilby

    from memory_infer.inference.likelihood import DistanceQuadrature

    prior = bilby.core.prior.PowerLaw(2, 100, 5000, name="luminosity_distance")
    detectors = bilby.gw.detector.InterferometerList(["H1"])
    detectors.set_strain_data_from_zero_noise(1024, 4, 0)
    generator = bilby.gw.WaveformGenerator(duration=4, sampling_frequency=1024,
                                           frequency_domain_source_model=bilby.gw.source.lal_binary_black_hole)
    bilby_likelihood = bilby.gw.GravitationalWaveTransient(
        detectors, generator, priors=bilby.core.prior.PriorDict({"luminosity_distance": prior}),
        distance_marginalization=True, distance_marginalization_lookup_table=table_file)
    reference = float(bilby_likelihood._ref_dist)
    quadrature = DistanceQuadrature(prior, reference)
    rows = []
    for snr in (10, 20, 30, 50):
        for true_distance in (400.0, 2000.0):
            base = products(snr, 0.0, true_distance, reference)
            exact0, table0, ours0 = (adaptive(prior, reference, *base), bilby_likelihood._interp_dist_margd_loglikelihood(
                *base, grid=False), quadrature(*base))
            for amplitude in (-4, -2, -1, 1, 2, 4):
                pair = products(snr, amplitude, true_distance, reference)
                exact = adaptive(prior, reference, *pair) - exact0
                table = float(bilby_likelihood._interp_dist_margd_loglikelihood(*pair, grid=False)) - float(table0)
                ours = float(quadrature(*pair)) - float(ours0)
                rows.append((snr, true_distance, amplitude, exact, table - exact, ours - exact))
    return rows


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--table-file", default=None, help="bilby lookup-table cache (default: a temporary file)")
    args = parser.parse_args(argv)
    with tempfile.TemporaryDirectory() as folder:
        rows = measure(args.table_file or os.path.join(folder, "table.npz"))
    print("| SNR | true D (Mpc) | A | ln BF(A) (adaptive quadrature) | bilby table error | our quadrature error |")
    print("|---|---|---|---|---|---|")
    for snr, distance, amplitude, exact, table, ours in rows:
        print(f"| {snr} | {distance:.0f} | {amplitude:+d} | {exact:.6f} | {table:+.1e} | {ours:+.1e} |")
    worst_table = max(abs(r[4]) for r in rows)
    worst_ours = max(abs(r[5]) for r in rows)
    print(f"worst error: bilby table {worst_table:.1e}, our quadrature {worst_ours:.1e}")


if __name__ == "__main__":
    main()
