import numpy as np
import pytest

from memory_infer.waveform.flux import (contract, differences, flux_tables, mirrored_rows, pair_rates, pair_tables, rates,
                                        stack_rows, weights_on_pairs)
from memory_infer.waveform.memory import time_derivative
from memory_infer.waveform.models import generate_modes
from memory_infer.waveform.sphere import direction_matrix


@pytest.mark.parametrize("spins", [((0, 0, 0.3), (0, 0, -0.2)), ((0.4, 0.2, 0.3), (-0.1, 0.3, 0.2))])
def test_rates_equal_the_direct_quadratic_form(spins):
    # the rate sum_ij W_ij dh_i conj(dh_j) written out over every mode with W from the couplings (the mode form
    # of PRD 44, R2945 (1991)), against the stacked form: m >= 0 rows in the real layout when
    # h_{l,-m} = (-1)^l conj(h_lm) holds (aligned spins), the complex form over every mode otherwise
    approximant = "IMRPhenomTPHM" if spins[0][0] else "IMRPhenomTHM"
    series = generate_modes(approximant, 30.0, 25.0, 100.0, 1 / 2048, 20.0, *spins, 20.0, finer_for_memory=False)
    times, modes = series.geometric()
    keys = tuple(sorted(modes))
    step = times[1] - times[0]
    derivative = time_derivative(np.array([modes[k] for k in keys]), step)
    expected = np.einsum("it,ij,jt->t", derivative, direction_matrix(keys, 1.1, 0.4), np.conj(derivative))
    symmetric = mirrored_rows(keys, modes)
    assert symmetric == (approximant == "IMRPhenomTHM")
    own, harmonics, tables, _ = flux_tables(keys, symmetric)
    weights = contract(tables, harmonics(1.1, 0.4))
    ours = rates(weights, differences(stack_rows(modes, own, symmetric))) / step ** 2
    assert np.max(np.abs(ours - expected)) < 1e-12 * np.max(np.abs(expected))
    if symmetric:  # the form the memory's compiled loops sum: the symmetric form's pairs a <= b only
        own, harmonics, pairs, _ = pair_tables(keys)
        on_pairs = pair_rates(weights_on_pairs(pairs, harmonics(1.1, 0.4)), differences(stack_rows(modes, own)))
        assert np.max(np.abs(on_pairs / step ** 2 - expected)) < 1e-12 * np.max(np.abs(expected))


def test_differences_are_twelve_steps_times_the_derivative():
    # fourth-order differences of a polynomial of degree four are exact (Fornberg, Math. Comp. 51, 699 (1988))
    t = np.linspace(-1.0, 2.0, 31)
    values = np.array([3 * t ** 4 - t ** 3 + 2 * t - 5, t ** 2])
    step = t[1] - t[0]
    assert np.allclose(differences(values) / (12 * step), [12 * t ** 3 - 3 * t ** 2 + 2, 2 * t], atol=1e-10)

