"""Each compiled loop against the numpy expression it replaced (consistency), and the interpolation weights
against a closed form."""
import numpy as np
import pytest
from numpy.lib.stride_tricks import sliding_window_view

from memory_infer.waveform import compiled
from memory_infer.waveform.flux import contract, differences, flux_tables, pair_rates, pair_tables, rates, stack_rows
from memory_infer.waveform.flux import weights_on_pairs
from memory_infer.waveform.models.refine import _lagrange_weights
from memory_infer.waveform.sphere import HarmonicSet


@pytest.fixture(scope="module")
def modes():
    rng = np.random.default_rng(3)
    t = np.linspace(0, 40, 400)
    out = {}
    for l, m in ((2, 1), (2, 2), (3, 3), (4, 4)):
        h = (1 + 0.1 * rng.normal()) * np.exp(-1j * m * (0.3 * t + 0.002 * t ** 2)) * (1 + 0.01 * t)
        out[(l, m)], out[(l, -m)] = h, (-1) ** l * np.conj(h)
    return out


def numpy_stencil(v):
    out = np.empty_like(v)
    out[..., 2:-2] = (v[..., :-4] - v[..., 4:]) + 8 * (v[..., 3:-1] - v[..., 1:-3])
    ends = (np.array([[-25, 48, -36, 16, -3], [-3, -10, 18, -6, 1]], dtype=float).T,
            np.array([[-1, 6, -18, 10, 3], [3, -16, 36, -48, 25]], dtype=float).T)
    out[..., :2], out[..., -2:] = v[..., :5] @ ends[0], v[..., -5:] @ ends[1]
    return out


def test_stencils_equal_the_numpy_differences(modes):
    own = ((2, 1), (2, 2), (3, 3), (4, 4))
    rows = stack_rows(modes, own)
    assert np.allclose(differences(rows), numpy_stencil(rows), rtol=0, atol=1e-13 * np.abs(rows).max())
    window = np.empty((8, 100))
    compiled.window_differences(tuple(modes[k] for k in own), 50, 150, window)
    assert np.allclose(window, numpy_stencil(rows[:, 50:150]), rtol=0, atol=1e-13 * np.abs(rows).max())
    strided = np.empty((8, 1 + 320 // 16))
    compiled.strided_differences(tuple(modes[k] for k in own), 16, 320, strided)
    assert np.allclose(strided[:, 1:], numpy_stencil(rows)[:, 16:321:16], rtol=0, atol=1e-13 * np.abs(rows).max())
    assert np.allclose(strided[:, 0], numpy_stencil(rows[:, :5])[:, 0], rtol=0, atol=1e-13 * np.abs(rows).max())


def test_pair_sums_equal_the_full_quadratic_form(modes):
    keys = tuple(sorted(modes))
    own, harmonics, tables, _ = flux_tables(keys, True)
    d = differences(stack_rows(modes, own))
    full = rates(contract(tables, harmonics(0.7, 1.9)), d)
    own_pairs, harmonics_pairs, pairs, _ = pair_tables(keys)
    assert own_pairs == own
    on_pairs = pair_rates(weights_on_pairs(pairs, harmonics_pairs(0.7, 1.9)), d)
    assert np.max(np.abs(on_pairs - full)) < 1e-13 * np.max(np.abs(full))
    cumulative = np.empty(d.shape[1], dtype=complex)
    compiled.pair_cumulative(d, 0, *weights_on_pairs(pairs, harmonics_pairs(0.7, 1.9)), 0.25, 1j, cumulative, 0)
    expected = 1j + np.concatenate([[0], np.cumsum((full[1:] + full[:-1]) * 0.25)])
    assert np.max(np.abs(cumulative - expected)) < 1e-12 * np.max(np.abs(expected))


def _whole_table_weights(values, tables):
    """``Q = sum_k values[k] Q_k`` over the whole tables ``(k, 2, pairs)``, harmonic by harmonic (numpy)."""
    real, imaginary = np.zeros(tables.shape[2]), np.zeros(tables.shape[2])
    for k in range(tables.shape[0]):
        c, s = values[k].real, values[k].imag
        real += c * tables[k, 0] - s * tables[k, 1]
        imaginary += c * tables[k, 1] + s * tables[k, 0]
    return real, imaginary


@pytest.mark.parametrize("mirrored", [True, False])
def test_weights_from_the_nonzero_entries_equal_the_whole_tables_bit_for_bit(mirrored):
    # the sparse contraction skips only terms that are exactly zero, in the same order (reference: the sum over the
    # whole tables, harmonic by harmonic, in numpy; no source)
    keys = tuple((l, m) for l in (2, 3, 4) for m in range(-l, l + 1))
    _, harmonics, pairs, same_m = pair_tables(keys, mirrored)
    for pair_set in (pairs, same_m):
        for theta, phi in ((0.7, 1.9), (1.3, 0.0), (0.0, 0.0)):
            values = harmonics(theta, phi) * 3.7e-3
            real, imaginary = _whole_table_weights(values, pair_set[2])
            _, _, sparse_real, sparse_imaginary = weights_on_pairs(pair_set, values)
            assert np.array_equal(real, sparse_real) and np.array_equal(imaginary, sparse_imaginary)


def test_pair_sums_and_weights_equal_a_pair_by_pair_numpy_loop_bit_for_bit():
    # the compiled loops take four pairs per pass and the harmonics row by row; each sum keeps numpy's order of
    # operations, so the numbers must be the same to the last bit (reference: the plain loop, no source)
    rng = np.random.default_rng(7)
    d = rng.normal(size=(10, 300))
    first, second = np.triu_indices(10)
    first, second = first[:50].astype(np.int64), second[:50].astype(np.int64)  # two left after groups of four
    harmonics = rng.normal(size=7) + 1j * rng.normal(size=7)
    tables = rng.normal(size=(7, 2, 50))
    tables *= (rng.random(size=(7, 1, 50)) < 0.5)  # about half the entries zero, as in the coupling tables
    harmonic_index, pair_index = (index.astype(np.int64) for index in np.nonzero(np.any(tables != 0, axis=1)))
    real_weights, imaginary_weights = np.empty(50), np.empty(50)
    compiled.sparse_pair_weights(harmonics, harmonic_index, pair_index, tables[harmonic_index, 0, pair_index],
                                 tables[harmonic_index, 1, pair_index], real_weights, imaginary_weights)
    expected_real, expected_imaginary = _whole_table_weights(harmonics, tables)
    assert np.array_equal(real_weights, expected_real) and np.array_equal(imaginary_weights, expected_imaginary)
    for skip in (0, 3):
        real, imaginary = compiled.pair_sums(d, skip, first, second, real_weights, imaginary_weights)
        loop_real, loop_imaginary = np.zeros(300 - skip), np.zeros(300 - skip)
        for p in range(50):
            z = d[first[p], skip:] * d[second[p], skip:]
            loop_real += real_weights[p] * z
            loop_imaginary += imaginary_weights[p] * z
        assert np.array_equal(real, loop_real) and np.array_equal(imaginary, loop_imaginary)


def test_pair_sums_with_one_weight_per_pair_equal_the_plain_loop_bit_for_bit():
    # an observer at azimuth 0 of the modes' frame (the precessing models' J-frame) gives every pair one zero weight:
    # each part is then summed over its own pairs, eight at a time; the same terms in the same order, so the same
    # numbers as the plain pair-by-pair loop (reference: the plain loop, no source)
    rng = np.random.default_rng(8)
    d = rng.normal(size=(12, 257))
    first, second = (x.astype(np.int64) for x in np.triu_indices(12))
    real_only = rng.random(first.size) < 0.55
    real_weights = np.where(real_only, rng.normal(size=first.size), 0.0)
    imaginary_weights = np.where(real_only, 0.0, rng.normal(size=first.size))
    for skip in (0, 5):
        real, imaginary = compiled.pair_sums(d, skip, first, second, real_weights, imaginary_weights)
        loop_real, loop_imaginary = np.zeros(257 - skip), np.zeros(257 - skip)
        for p in range(first.size):
            z = d[first[p], skip:] * d[second[p], skip:]
            if real_weights[p] != 0:
                loop_real += real_weights[p] * z
            if imaginary_weights[p] != 0:
                loop_imaginary += imaginary_weights[p] * z
        assert np.array_equal(real, loop_real) and np.array_equal(imaginary, loop_imaginary)


def numpy_first_fast(first, second, both, quiet, limit):  # the numpy steps the compiled scan replaced
    steps, amplitudes = [], []
    for h in (first, second) if both else (first,):
        steps.append(np.abs(np.angle(h[1:] * np.conj(h[:-1]))))
        modulus = np.abs(h)
        amplitudes.append(np.minimum(modulus[1:], modulus[:-1]))
    step, amplitude = steps[0], amplitudes[0]
    if both:
        louder = amplitudes[1] > amplitude
        step, amplitude = np.where(louder, steps[1], step), np.where(louder, amplitudes[1], amplitude)
    step = np.where(amplitude > quiet * amplitude.max(), step, 0.0)
    bad = np.nonzero(step > limit)[0]
    if not bad.size:
        return -1, 0.0
    index = max(int(bad[0]) - 1, 0)
    return index, float(step[index])


def test_first_fast_dominant_step_equals_the_numpy_steps():
    # chirps of rising frequency, one louder than the other in turns, quiet stretches, and steps set exactly at the
    # limit: the compiled scan must find the same sample as the numpy steps, and the same step to the last bit or
    # two (numpy's vectorized arctan2 and libm's may differ there) (reference: numpy, no source)
    rng = np.random.default_rng(9)
    t = np.linspace(0, 1, 4000)
    for trial in range(6):
        phase = 2 * np.pi * np.cumsum(5 + 400 * t ** rng.uniform(2, 6)) / 4000 * rng.uniform(0.5, 2.0)
        envelope = np.exp(-((t - rng.uniform(0.6, 0.95)) / 0.2) ** 2)
        first = envelope * np.exp(-1j * phase)
        second = (1 + 0.3 * np.sin(9 * t)) * envelope * np.exp(1j * phase * 1.01)
        first[:300] *= 1e-6  # quiet
        if trial == 5:  # a step exactly at the limit
            second[2001] = second[2000] * np.exp(1j * 0.3)
        for both in (True, False):
            expected = numpy_first_fast(first, second, both, 1e-3, 0.3)
            index, step = compiled.first_fast_dominant(first, second, both, 1e-3, 0.3)
            assert index == expected[0] and abs(step - expected[1]) <= 4e-16 * max(abs(expected[1]), 1e-300)


def numpy_continued_phases(modes, orders):  # the numpy steps the compiled loop replaced
    wrapped = np.angle(modes[:, 1:] * np.conj(modes[:, :-1]))
    change = np.diff(wrapped[0])
    change -= (2 * np.pi) * np.round(change / (2 * np.pi))
    dominant = wrapped[0, 0] + np.concatenate([[0.0], np.cumsum(change)])
    guide = orders[:, None] / 2 * dominant[None, :]
    steps = wrapped + 2 * np.pi * np.round((guide - wrapped) / (2 * np.pi))
    return np.angle(modes[:, :1]) + np.concatenate([np.zeros((modes.shape[0], 1)), np.cumsum(steps, axis=1)], axis=1)


def test_phases_and_interpolation_equal_the_numpy_steps(modes):
    keys = ((2, 2), (2, 1), (3, 3), (4, 4))
    stacked = np.array([modes[k][200:] for k in keys])
    orders = np.array([float(m) for _, m in keys])
    phases = compiled.continued_phases(stacked, orders)
    assert np.max(np.abs(phases - numpy_continued_phases(stacked, orders))) < 1e-12  # rad, rounding
    weights, end = _lagrange_weights(4), _lagrange_weights(4, end=True)
    amplitudes = np.abs(stacked)
    ours = compiled.lagrange_modes(amplitudes, phases, weights, end)
    both = np.concatenate([amplitudes, phases])
    values = (sliding_window_view(both, 6, axis=1) @ weights.T).reshape(8, -1)
    values = np.concatenate([values, both[:, -6:] @ end.T], axis=1)  # the end-biased stencils on the last six
    expected = values[:4] * np.exp(1j * values[4:])
    assert np.max(np.abs(ours - expected)) < 1e-13 * np.max(np.abs(expected))
    assert np.allclose(ours[:, -1], stacked[:, -1], rtol=1e-13, atol=0)  # the level ends at the last sample
    without = compiled.lagrange_modes(amplitudes, phases, weights, end[:0])  # no end stencils: the body alone
    assert np.array_equal(without, ours[:, :without.shape[1]])


def test_lagrange_weights_reproduce_quintics():
    # closed form: the six-point Lagrange polynomial is exact for polynomials of degree five
    weights = _lagrange_weights(8)
    nodes = np.arange(6) - 2.0
    polynomial = np.polynomial.Polynomial([0.3, -1.1, 0.7, 0.2, -0.05, 0.01])
    assert np.allclose(weights @ polynomial(nodes), polynomial(np.arange(8) / 8), rtol=0, atol=1e-13)
    end = _lagrange_weights(8, end=True)  # the end-biased stencils: from node 1 to the last node 3
    assert np.allclose(end @ polynomial(nodes), polynomial(1 + np.arange(17) / 8), rtol=0, atol=1e-12)


def test_interpolation_and_sums_equal_numpy():
    rng = np.random.default_rng(1)
    xp = np.sort(rng.uniform(0, 10, 300))
    fp = rng.normal(size=300) + 1j * rng.normal(size=300)
    x = np.concatenate([rng.uniform(-1, 11, 500), xp[:4], xp[-1:]])
    out = np.empty(x.size, dtype=complex)
    compiled.interpolate_complex(x, xp, fp, out)
    assert np.array_equal(out, np.interp(x, xp, fp.real) + 1j * np.interp(x, xp, fp.imag))
    arrays = tuple(rng.normal(size=(3, 50)) + 1j * rng.normal(size=(3, 50)))
    weights = rng.normal(size=3) + 1j * rng.normal(size=3)
    total = np.zeros(50, dtype=complex)
    compiled.weighted_sum(arrays, weights, total)
    expected = np.zeros(50, dtype=complex)
    for weight, array in zip(weights, arrays):
        expected += weight * array
    assert np.max(np.abs(total - expected)) < 1e-14 * np.max(np.abs(expected))  # complex products: rounding
    assert compiled.spacing_spread(xp) == np.ptp(np.diff(xp))


def test_harmonics_equal_the_numpy_goldberg_sums():
    harmonics = HarmonicSet([(l, m) for l in range(2, 9) for m in range(-l, l + 1)])
    for theta, phi in ((0.0, 0.0), (0.4, 1.0), (np.pi / 2, -2.0), (np.pi, 0.3)):
        terms = (harmonics._coefficients * np.cos(theta / 2) ** harmonics._cos_powers
                 * np.sin(theta / 2) ** harmonics._sin_powers)
        expected = np.bincount(harmonics._owners, weights=terms, minlength=len(harmonics.modes))
        # equal to rounding: the compiled loop and numpy's bincount may sum in another order (4e-16 seen)
        assert np.max(np.abs(harmonics(theta, phi) - expected * np.exp(1j * harmonics._m * phi))) <= 4e-15


def test_phase_ramp_equals_numpy_exp():
    frequencies = np.linspace(0, 1024, 4097)
    out = np.empty(frequencies.size, dtype=complex)
    for rate in (0.0, -2 * np.pi * 2.4e-4, 3.0e-3):
        compiled.phase_ramp(frequencies, rate, 0.5, out)
        assert np.max(np.abs(out - 0.5 * np.exp(1j * rate * frequencies))) < 1e-13


def test_scans_find_the_first_fast_step():
    t = np.arange(2000.0)
    h = np.exp(-1j * (1e-4 * t ** 2))  # phase step 2e-4 t: above 0.3 rad from t = 1500
    h[:100] *= 1e-6  # quiet start
    limit = np.cos(0.3)
    steps = np.abs(np.angle(h[1:] * np.conj(h[:-1])))
    assert compiled.first_fast_probe(h, 16, limit) == np.arange(0, 1999, 16)[np.argmax(steps[::16] > 0.3)]
    first, loudest = compiled.first_loud_fast_step(h, limit, 1e-3)
    assert first == np.argmax(steps > 0.3) and loudest == pytest.approx(1.0)
    assert compiled.first_fast_ordinal(h, 16, h.size, 2 * np.pi, 0.3 / (2 * np.pi)) == np.argmax(steps[::16] >= 0.3)
    assert compiled.mirror_holds((h,), (np.conj(h),), np.array([1.0]), 9, 1e-9)
    assert not compiled.mirror_holds((h,), (-np.conj(h),), np.array([1.0]), 9, 1e-9)
    index, step = compiled.first_unresolved_step(h, limit, 1e-3)
    assert index == first - 1 and step == np.abs(np.angle(h[index + 1] * np.conj(h[index])))
    assert compiled.first_unresolved_step(h[:1400], limit, 1e-3) == (-1, 0.0)
    quiet = h.copy()
    quiet[first - 1] *= 1e-6  # the step before the first fast one starts from a quiet sample: reported as zero
    assert compiled.first_unresolved_step(quiet, limit, 1e-3) == (first - 1, 0.0)


def test_joining_a_level_equals_the_numpy_interpolations():
    from memory_infer.waveform.memory import _interpolate

    rng = np.random.default_rng(4)
    times = np.linspace(0.0, 100.0, 201)
    coarse = np.cumsum(rng.normal(size=201) + 1j * rng.normal(size=201))
    level_times = np.linspace(60.2, 90.0, 300)
    level_memory = np.cumsum(rng.normal(size=300) + 1j * rng.normal(size=300)) * 0.1
    use_from = 61.3
    expected = coarse.copy()
    shifted_expected = level_memory + (_interpolate(np.array([use_from]), times, expected)
                                       - _interpolate(np.array([use_from]), level_times, level_memory))
    after = int(np.searchsorted(times, use_from))
    expected[after:] = _interpolate(times[after:], level_times, shifted_expected)
    result = coarse.copy()
    shifted = compiled.join_level(times, result, times, result, level_times, level_memory, use_from)
    assert np.array_equal(shifted, shifted_expected) and np.array_equal(result, expected)


def test_loud_end_decides_by_the_modulus_at_every_scale():
    def reference(stacked, quiet_fraction):  # the plain loop, Python's abs (libm's hypot, as the compiled abs)
        threshold = quiet_fraction * max(abs(complex(z)) for z in stacked[0])
        for t in range(stacked.shape[1] - 1, -1, -1):
            if any(abs(complex(z)) > threshold for z in stacked[:, t]):
                return t + 1
        return 0

    rng = np.random.default_rng(6)
    for trial in range(400):
        rows, n = int(rng.integers(1, 6)), int(rng.integers(5, 120))
        stacked = (rng.normal(size=(rows, n)) + 1j * rng.normal(size=(rows, n))) * 10.0 ** rng.uniform(-160, 150)
        stacked *= np.exp(-np.linspace(0, rng.uniform(1, 30), n))
        fraction = 10.0 ** rng.uniform(-6, 0)
        if trial % 3 == 0:  # one sample exactly at the threshold, at some phase
            peak = max(abs(complex(z)) for z in stacked[0])
            stacked[rows - 1, rng.integers(0, n)] = fraction * peak * np.exp(1j * rng.uniform(0, 6.3) * (trial % 2))
        if trial % 17 == 0:
            stacked[:] = 0
        assert compiled.loud_end(stacked, fraction) == reference(stacked, fraction)


@pytest.mark.parametrize("size", [256, 255])
def test_split_spectrum_equals_two_real_transforms(size):
    """The transforms of x and y from the one complex transform of z = x + i y equal numpy's real FFTs of each.

    Reference: the packing identity of two real FFTs in one complex FFT (Numerical Recipes, 3rd ed., section 12.3;
    common practice), checked against numpy.fft.rfft of each real series on its own."""
    rng = np.random.default_rng(11)
    x, y = rng.normal(size=size), rng.normal(size=size)
    bins = size // 2 + 1
    phase = np.exp(1j * rng.uniform(0, 2 * np.pi, bins)) * rng.uniform(0.5, 2.0, bins)
    plus, cross = np.empty(bins, complex), np.empty(bins, complex)
    compiled.split_spectrum(np.fft.fft(x + 1j * y), phase, plus, cross)
    x_alone, y_alone = np.fft.rfft(x) * phase, np.fft.rfft(y) * phase
    scale = np.max(np.abs(x_alone))
    assert np.max(np.abs(plus - x_alone)) < 1e-12 * scale
    assert np.max(np.abs(cross + y_alone)) < 1e-12 * scale  # cross = -Y phase, the sign of h+ - i hx
    wrong = np.empty(bins, complex)
    compiled.split_spectrum(np.fft.fft(x - 1j * y), phase, plus, wrong)  # a conjugated input changes the sign
    assert np.max(np.abs(wrong - y_alone)) < 1e-12 * scale


def test_first_loud_equals_numpys_argmax_over_the_circular_stretch():
    # the conditioned start of the time-domain modes; reference: numpy's gather, modulus and argmax (no source)
    rng = np.random.default_rng(10)
    row = rng.normal(size=64) + 1j * rng.normal(size=64)
    row[40:] *= 1e-3
    for first, count in ((-20, 50), (0, 64), (-63, 10), (5, 30)):
        index = np.arange(first, first + count)
        h = row[index % 64] * 2.5
        expected = int(np.argmax(np.abs(h) >= 0.01 * np.abs(h).max()))
        assert compiled.first_loud(row, first, count, 2.5, 0.01) == expected


def test_first_reaching_equals_numpys_first_loud_step_at_the_frequency():
    # late_modes' start: numpy's nonzero of (loud) & (phase step >= frequency); the compiled pass must give its first
    # index wherever it says the comparison is clear, and say it is not when a step lies within rounding of the
    # frequency (reference: the numpy expression it replaced, no source)
    rng = np.random.default_rng(5)
    step = 1 / 4096
    t = np.arange(3000) * step
    phase = 2 * np.pi * (20 * t + 40 * t ** 2)  # 20 Hz rising to ~260 Hz
    for trial in range(20):
        h = (1 + 0.3 * rng.normal(size=t.size)) * np.exp(1j * phase) * np.exp(-((t - 0.4) / 0.3) ** 2)
        frequency = np.abs(np.angle(h[1:] * np.conj(h[:-1]))) / (2 * np.pi * step)
        loud = np.abs(h)[1:] > 1e-3 * np.abs(h).max()
        start = rng.uniform(30, 200) if trial else frequency[loud][400]  # the first trial: exactly one step's rate
        expected = np.nonzero(loud & (frequency >= start))[0]
        index, clear = compiled.first_reaching(h, step, start, 1e-3)
        if clear:
            assert index == (expected[0] if expected.size else -1)
        else:
            assert abs(frequency[index] / start - 1) <= 1e-12 and index <= expected[0]
        assert clear or trial == 0
        assert trial or not clear  # the exact rate is not called clear
    # a modulus on the loudness threshold (numba's and numpy's moduli may differ in the last bit there): not clear,
    # or the same index as numpy
    h = np.exp(1j * phase) * np.exp(-((t - 0.4) / 0.3) ** 2)
    threshold = 1e-3 * np.abs(h).max()
    h[1500] = threshold * np.exp(1j * np.angle(h[1500]))
    h[:1500] *= 1e-4  # everything before is quiet
    frequency = np.abs(np.angle(h[1:] * np.conj(h[:-1]))) / (2 * np.pi * step)
    expected = np.nonzero((np.abs(h)[1:] > 1e-3 * np.abs(h).max()) & (frequency >= 25.0))[0]
    index, clear = compiled.first_reaching(h, step, 25.0, 1e-3)
    assert not clear and index == 1499 or clear and index == expected[0]
