import json
import os

import bilby
import numpy as np
import pytest

from memory_infer.inference.methods.fast import fast_estimates, sign_partner
from memory_infer.inference.methods.nested import run_nested
from memory_infer.inference.methods.reweighting import (amplitude_curve, mean_ratio as _mean_ratio, reweighting_estimate,
                                                        sign_from_curve)
from memory_infer import MemoryTransient, waveform_generator

from helpers import event_config

DURATION, RATE, START = 4.0, 1024.0, 1e9
SOURCE = dict(mass_1=45.0, mass_2=15.0, luminosity_distance=800.0, a_1=0.0, a_2=0.0, tilt_1=0.0, tilt_2=0.0,
              phi_12=0.0, phi_jl=0.0, theta_jn=1.3, phase=0.7, ra=1.1, dec=0.3, psi=0.4, geocent_time=START + 2.0)


def zero_noise_likelihood(mode_list=None):
    arguments = dict(waveform_approximant="IMRPhenomTHM", minimum_frequency=20.0, reference_frequency=20.0)
    if mode_list:
        arguments["mode_list"] = mode_list
    generator = waveform_generator(DURATION, RATE, START, arguments)
    detectors = bilby.gw.detector.InterferometerList(["CE"])
    detectors[0].minimum_frequency = 20.0
    detectors.set_strain_data_from_zero_noise(RATE, DURATION, START)
    detectors.inject_signal(waveform_generator=generator, parameters=dict(SOURCE, memory_amplitude=1.0))
    return MemoryTransient(detectors, generator)


def test_quadrupole_only_signal_cannot_tell_the_sign():
    # common practice, no source: with only (2, +-2) modes, phase + pi/2 and psi + pi/2 keep the oscillatory
    # strain and flip the memory, so the sign Bayes factor vanishes
    likelihood = zero_noise_likelihood([(2, 2), (2, -2)])
    here, there = likelihood.inner_products(SOURCE), likelihood.inner_products(sign_partner(SOURCE))
    assert abs(here.osc_osc - there.osc_osc) < 1e-9 * here.osc_osc
    assert abs(here.d_osc - there.d_osc) < 1e-9 * abs(here.d_osc)
    assert abs(here.d_mem + there.d_mem) < 1e-9 * abs(here.d_mem)
    estimates, snr = fast_estimates(likelihood, SOURCE)
    two_plus, two_minus = [e.ln_bf for e in estimates if e.method.startswith("two-point")]
    assert snr > 0.5
    assert abs(two_plus - two_minus) < 1e-9


def test_higher_modes_resolve_the_sign():
    # an unequal-mass (q = 3), inclined, loud source with higher modes: the partner point no longer
    # fits the oscillatory signal, so the two-point sign Bayes factor is large
    likelihood = zero_noise_likelihood()
    estimates, snr = fast_estimates(likelihood, SOURCE)
    two_plus, two_minus = [e.ln_bf for e in estimates if e.method.startswith("two-point")]
    assert two_plus - two_minus > 4.0  # zero noise: 2 rho^2 when the partner does not fit
    assert two_plus == pytest.approx(snr ** 2 / 2, rel=1e-6)  # zero noise: rho^2 / 2 (PRD 46, 5236 (1992), mean value)


# ---- the two-point estimator over Gaussian noise -------------------------------------------------------------

def noisy_likelihood(seed, mode_list=None, distance=None, names=("CE",)):
    """Detectors with Gaussian noise and the injection; also the noise alone, per detector."""
    arguments = dict(waveform_approximant="IMRPhenomTHM", minimum_frequency=20.0, reference_frequency=20.0)
    if mode_list:
        arguments["mode_list"] = mode_list
    source = dict(SOURCE, luminosity_distance=distance or SOURCE["luminosity_distance"])
    generator = waveform_generator(DURATION, RATE, START, arguments)
    bilby.core.utils.random.seed(seed)
    detectors = bilby.gw.detector.InterferometerList(list(names))
    for detector in detectors:
        detector.minimum_frequency = 20.0
    detectors.set_strain_data_from_power_spectral_densities(RATE, DURATION, START)
    noise = [detector.frequency_domain_strain.copy() for detector in detectors]
    detectors.inject_signal(waveform_generator=generator, parameters=dict(source, memory_amplitude=1.0))
    return MemoryTransient(detectors, generator), noise, source


def test_two_point_value_is_the_estimator_on_noisy_data():
    # reference library: bilby's own GravitationalWaveTransient (not our inner products) evaluates ln L at the point
    # and its sign partner, at A = 0, +1 and -1; the two-point ln BF is ln[(L(A, p) + L(A, p')) / (L(0, p) + L(0, p'))]
    # and the fixed-parameter one ln L(A, p) - ln L(0, p). Both our estimates (fast_estimates on the full data) and the
    # reduced form at the noise's own projections (two_point_value) must equal them, to 1e-8 nats
    from memory_infer.inference.methods.fast import two_point_terms, two_point_value

    for seed in (1, 2, 3):
        likelihood, noise, source = noisy_likelihood(seed, names=("H1", "L1"), distance=300.0)
        bilby_likelihood = bilby.gw.likelihood.GravitationalWaveTransient(likelihood.interferometers,
                                                                          likelihood.waveform_generator)
        ln_l = {}
        for name, point in (("here", source), ("there", sign_partner(source))):
            for amplitude in (0.0, 1.0, -1.0):
                bilby_likelihood.parameters.update(dict(point, memory_amplitude=amplitude))
                ln_l[name, amplitude] = bilby_likelihood.log_likelihood_ratio()
        reference = {amplitude: float(np.logaddexp(ln_l["here", amplitude], ln_l["there", amplitude])
                                      - np.logaddexp(ln_l["here", 0.0], ln_l["there", 0.0])) for amplitude in (1.0, -1.0)}
        estimates, _ = fast_estimates(likelihood, source)
        found = {(e.family, e.numerator): e.ln_bf for e in estimates}
        assert found["two-point", "memory"] == pytest.approx(reference[1.0], abs=1e-8)
        assert found["two-point", "flipped"] == pytest.approx(reference[-1.0], abs=1e-8)
        assert found["fixed-point", "memory"] == pytest.approx(ln_l["here", 1.0] - ln_l["here", 0.0], abs=1e-8)
        assert found["fixed-point", "flipped"] == pytest.approx(ln_l["here", -1.0] - ln_l["here", 0.0], abs=1e-8)
        terms = two_point_terms(likelihood, source)
        here, there = likelihood.projected_parts(source), likelihood.projected_parts(sign_partner(source))
        memory, partner = [p[1] for p in here], [p[1] for p in there]
        split = [a[0] - b[0] for a, b in zip(here, there)]
        x = [likelihood.network_product(noise, v) for v in (memory, partner, split)]
        assert two_point_value(terms, 1.0, 1.0, x) == pytest.approx(reference[1.0], abs=1e-8)
        assert two_point_value(terms, 1.0, -1.0, x) == pytest.approx(reference[-1.0], abs=1e-8)


def test_degenerate_expectation_series_is_rho_four_over_four():
    # sympy (outside library) expands E[ln cosh(rho^2 + rho z)] - rho^2/2 over z ~ N(0, 1) with the Gaussian
    # moments E[z^k] = (k-1)!!: the leading term is rho^4/4 (the issue text said rho^4/2; the derivation is in
    # memory_infer/inference/methods/fast.py)
    import sympy

    rho, z, y = sympy.symbols("rho z y", positive=True)
    series = sympy.series(sympy.log(sympy.cosh(y)), y, 0, 8).removeO().subs(y, rho ** 2 + rho * z)
    polynomial = sympy.Poly(sympy.expand(series), z)
    moment = lambda k: 0 if k % 2 else sympy.factorial2(k - 1)
    expectation = sum(c * moment(m[0]) for m, c in zip(polynomial.monoms(), polynomial.coeffs())) - rho ** 2 / 2
    leading = sympy.series(sympy.expand(expectation), rho, 0, 6).removeO()
    assert sympy.simplify(leading - rho ** 4 / 4) == 0


def test_quadrupole_only_event_expects_rho_four_over_four():
    # (2, +-2)-only IMRPhenomTHM: delta = 0 and m' = -m (the partner's symmetry), so the expectation is the 1-D
    # integral E[ln cosh(rho^2 + rho z)] - rho^2/2 (independent Gauss-Hermite, 200 nodes, to 1e-9) and about
    # rho^4/4 at small rho (within 6% at rho = 0.3; the series' next term is negative)
    from memory_infer.inference.methods.fast import two_point_noise_average, two_point_terms

    likelihood = zero_noise_likelihood([(2, 2), (2, -2)])
    base = two_point_terms(likelihood, SOURCE)
    assert base["split"] < 1e-12 * likelihood.inner_products(SOURCE).osc_osc
    assert abs(base["memory_cross"] + base["memory"]) < 1e-9 * base["memory"]
    z, w = np.polynomial.hermite_e.hermegauss(200)
    w = w / w.sum()
    for rho in (0.15, 0.3, 1.0):
        scale = rho ** 2 / base["memory"]
        terms = {k: v * scale for k, v in base.items()}  # the same event at another distance
        average = two_point_noise_average(terms, 1.0, 1.0)
        one_dimensional = np.sum(w * np.log(np.cosh(rho ** 2 + rho * z))) - rho ** 2 / 2
        assert abs(average["mean"] - one_dimensional) < 1e-9
        if rho <= 0.3:
            assert abs(average["mean"] / (rho ** 4 / 4) - 1) < 0.06
        assert average["zero_noise"] < average["mean"]  # the noiseless value is not the expectation


def test_sign_resolving_event_expects_rho_squared_over_two():
    # PRD 46, 5236 (1992): with the sign known the expected ln BF is rho^2/2; an edge-on-ish
    # IMRPhenomTHM event in Cosmic Explorer resolves the sign (<delta, delta> ~ 1e2), so the two-point
    # expectation equals rho^2/2 to 1e-6 relative
    from memory_infer.inference.methods.fast import two_point_noise_average, two_point_terms

    likelihood = zero_noise_likelihood()
    terms = two_point_terms(likelihood, SOURCE)
    assert terms["split"] > 50
    average = two_point_noise_average(terms, 1.0, 1.0)
    assert abs(average["mean"] / (terms["memory"] / 2) - 1) < 1e-6
    assert abs(average["spread"] / np.sqrt(terms["memory"]) - 1) < 1e-6  # standard deviation rho (PRD 46, 5236 (1992))


def _terms_from_gram(gram):
    return dict(memory=gram[0, 0], partner_memory=gram[1, 1], memory_cross=gram[0, 1], split=gram[2, 2],
                memory_split=gram[0, 2], partner_split=gram[1, 2])


def test_exact_noise_average_matches_the_tensor_quadrature():
    # the 1-D (mean) and 2-D (spread) integrals against the independent tensor Gauss-Hermite quadrature over the
    # Gram matrix's non-null directions (numpy's hermegauss; 200 nodes per direction for rank 1-2, 80 for rank 3,
    # where it has converged to ~1e-8), both signs of A, to 1e-6
    from memory_infer.inference.methods.fast import hermite_noise_average, two_point_noise_average

    rng = np.random.default_rng(5)
    for rank in (1, 2, 3, 3, 3):
        basis = rng.normal(size=(3, rank)) * rng.uniform(0.2, 2.5, size=rank)
        terms = _terms_from_gram(basis @ basis.T)
        for injected, amplitude in ((1.0, 1.0), (1.0, -1.0), (0.0, 1.0)):
            exact = two_point_noise_average(terms, injected, amplitude)
            check = hermite_noise_average(terms, injected, amplitude, 200 if rank < 3 else 80)
            assert abs(exact["mean"] - check["mean"]) < 1e-6 * max(1.0, abs(check["mean"])), (rank, amplitude)
            assert abs(exact["spread"] - check["spread"]) < 1e-6 * max(1.0, check["spread"]), (rank, amplitude)
            assert exact["quadrature_error"] < 1e-6


def test_noise_draws_follow_their_inputs_to_rounding():
    # consistency only: draws from terms equal to rounding are equal to rounding (eigenvector signs fixed), and a
    # rank-deficient covariance uses as many normal numbers as a full one (the generator's stream stays in step)
    from memory_infer.inference.methods.fast import two_point_draws

    rng = np.random.default_rng(8)
    basis = rng.normal(size=(3, 3))
    terms = _terms_from_gram(basis @ basis.T)
    for flip in range(4):  # the same covariance in rotated coordinates: eigh's signs vary between these
        nudged = {k: v * (1 + 3e-16 * (flip + 1)) for k, v in terms.items()}
        first = two_point_draws(terms, 1.0, 1.0, 64, np.random.default_rng(flip))
        second = two_point_draws(nudged, 1.0, 1.0, 64, np.random.default_rng(flip))
        assert np.max(np.abs(first - second)) < 1e-9 * max(1.0, np.max(np.abs(first)))
    after = []
    for rank in (1, 2, 3):
        generator = np.random.default_rng(3)
        two_point_draws(_terms_from_gram(basis[:, :rank] @ basis[:, :rank].T), 1.0, 1.0, 10, generator)
        after.append(generator.standard_normal())
    assert after[0] == after[1] == after[2]


@pytest.mark.slow
@pytest.mark.parametrize("mode_list, distance", [([(2, 2), (2, -2)], 1200.0), (None, 1500.0)])
def test_exact_noise_average_matches_bilby_noise_realizations(mode_list, distance):
    # brute force: 1500 noise realizations from bilby's own generator (set_strain_data_from_power_spectral_densities,
    # Cosmic Explorer), the two-point estimator evaluated at each realization's projections <n,m>, <n,m'>,
    # <n,delta>; a (2, +-2)-only event (sign hidden: strongly non-Gaussian ln BF) and a near-equal-mass event with
    # every mode (sign resolved). Mean and spread within 4 standard errors of the exact integrals.
    from memory_infer.inference.methods.fast import two_point_noise_average, two_point_terms, two_point_value

    likelihood = zero_noise_likelihood(mode_list)
    point = dict(SOURCE, mass_1=31.0, mass_2=29.0, luminosity_distance=distance)
    terms = two_point_terms(likelihood, point)
    assert 0.3 < terms["memory"] < 30
    here, there = likelihood.projected_parts(point), likelihood.projected_parts(sign_partner(point))
    vectors = ([p[1] for p in here], [p[1] for p in there], [a[0] - b[0] for a, b in zip(here, there)])
    detectors = bilby.gw.detector.InterferometerList(["CE"])
    detectors[0].minimum_frequency = 20.0
    bilby.core.utils.random.seed(12)
    projections = []
    for _ in range(1500):
        detectors.set_strain_data_from_power_spectral_densities(RATE, DURATION, START)
        noise = [detector.frequency_domain_strain for detector in detectors]
        projections.append([likelihood.network_product(noise, v) for v in vectors])
    values = two_point_value(terms, 1.0, 1.0, np.array(projections))
    exact = two_point_noise_average(terms, 1.0, 1.0)
    n, spread = values.size, values.std(ddof=1)
    assert abs(values.mean() - exact["mean"]) < 4 * spread / np.sqrt(n)
    spread_error = np.std((values - values.mean()) ** 2) / (2 * spread * np.sqrt(n))  # delta method
    assert abs(spread - exact["spread"]) < 4 * spread_error
