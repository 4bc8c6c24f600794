"""IMRPhenomXPHM's J-frame modes twisted up from its co-precessing modes, against lalsimulation's own."""
import numba
import numpy as np
import pytest

from memory_infer.waveform.models import precessing_twist
from memory_infer.waveform.models.precessing_twist import default_precession_version, twisted_modes, wigner_d

# (mass_1, mass_2, spin_1, spin_2, delta_f, start, f_max, phase, inclination): heavy, light, the lighter body
# first (lalsimulation swaps the bodies), unequal masses with one spin
CASES = [(36.0, 29.0, (0.2, 0.1, 0.4), (-0.1, 0.3, 0.2), 1.0, 15.0, 1024.0, 0.4, 1.0),
         (10.0, 8.0, (0.3, -0.2, 0.1), (0.1, 0.4, -0.3), 0.5, 25.0, 4096.0, 2.0, 2.5),
         (8.0, 10.0, (0.3, -0.2, 0.1), (0.1, 0.4, -0.3), 0.5, 25.0, 4096.0, 2.0, 2.5),
         (60.0, 10.0, (0.6, 0.0, 0.3), (0.0, 0.0, 0.0), 1.0, 12.0, 1024.0, 5.0, 0.3)]


def lalsimulation_modes(mass_1, mass_2, spin_1, spin_2, delta_f, start, f_max, phase, inclination):
    import lal  # a hard dependency: missing, the test fails
    import lalsimulation as lalsim
    linked = lalsim.SimInspiralChooseFDModes(mass_1 * lal.MSUN_SI, mass_2 * lal.MSUN_SI, *spin_1, *spin_2, delta_f,
                                             start, f_max, 20.0, phase, 1e24, inclination, None, lalsim.IMRPhenomXPHM)
    modes = {}
    while linked is not None:
        modes[(int(linked.l), int(linked.m))] = np.array(linked.mode.data.data)
        linked = linked.next
    return modes


@pytest.mark.parametrize("case", CASES)
def test_twist_reproduces_lalsimulation_inertial_modes(case):
    # reference library: lalsimulation SimInspiralChooseFDModes (IMRPhenomXPHM, default settings); measured <= 5e-13
    mass_1, mass_2, spin_1, spin_2, delta_f, start, f_max, phase, inclination = case
    theirs = lalsimulation_modes(*case)
    size = theirs[(2, 2)].size
    ours = twisted_modes(mass_1, mass_2, spin_1, spin_2, delta_f, start, f_max, 20.0, phase, inclination, 1e24, size,
                         quiet=0.0, angle_check=0.0)
    assert ours is not None and list(ours) == list(theirs)
    zero = size // 2  # f = 0 lies below the start: not a frequency the modes are used at
    for key, mode in theirs.items():
        difference = np.delete(ours[key] - mode, zero)
        assert np.max(np.abs(difference)) <= 1e-9 * np.max(np.abs(mode)), key


def test_default_precession_version_is_the_one_twisted():
    # reference library: lalsimulation's default PhenomXPrecVersion of IMRPhenomXPHM (300, read as 223 in 6.2)
    assert default_precession_version() in precessing_twist.MSA_VERSIONS


def test_wigner_d_against_closed_forms_and_orthogonality():
    # closed forms of the small Wigner d (textbook, from memory): d^2_{21} = -(1 + cos b) sin b / 2,
    # d^2_{20} = sqrt(3/8) sin^2 b, d^1_{10} = -sin b / sqrt 2; and sum_m d^l_{ma} d^l_{mb} = delta_ab
    beta = np.linspace(0.1, 3.0, 7)
    c, s = np.cos(beta / 2), np.sin(beta / 2)
    cos_powers, sin_powers = np.array([c ** p for p in range(9)]), np.array([s ** p for p in range(9)])
    assert np.allclose(wigner_d(2, 2, 1, cos_powers, sin_powers), -(1 + np.cos(beta)) * np.sin(beta) / 2, atol=1e-14)
    assert np.allclose(wigner_d(2, 2, 0, cos_powers, sin_powers), np.sqrt(3 / 8) * np.sin(beta) ** 2, atol=1e-14)
    assert np.allclose(wigner_d(1, 1, 0, cos_powers, sin_powers), -np.sin(beta) / np.sqrt(2), atol=1e-14)
    for l in (2, 3, 4):
        for a in range(-l, l + 1):
            for b in range(-l, l + 1):
                total = sum(wigner_d(l, m, a, cos_powers, sin_powers) * wigner_d(l, m, b, cos_powers, sin_powers)
                            for m in range(-l, l + 1))
                assert np.allclose(total, float(a == b), atol=1e-12)


def test_twist_refused_when_it_does_not_match_lalsimulation(monkeypatch):
    # reference library: lalsimulation SimIMRPhenomXPHMFrequencySequenceOneMode; wrong angles must be caught
    import lalsimulation as lalsim
    real = lalsim.SimIMRPhenomXPMSAAngles

    def shifted(*arguments):
        alpha, gamma, cos_beta = real(*arguments)
        alpha.data = alpha.data + 0.3
        return alpha, gamma, cos_beta

    monkeypatch.setattr(lalsim, "SimIMRPhenomXPMSAAngles", shifted)
    mass_1, mass_2, spin_1, spin_2, delta_f, start, f_max, phase, inclination = CASES[0]
    size = 2 * int(f_max / delta_f) + 1
    assert twisted_modes(mass_1, mass_2, spin_1, spin_2, delta_f, start, f_max, 20.0, phase, inclination, 1e24,
                         size) is None


def test_one_angle_call_equals_one_call_per_m_prime():
    # reference library: lalsimulation SimIMRPhenomXPMSAAngles called once per m' on the frequencies themselves;
    # the same arguments to the last bit for m' = 1, 2, 4 (measured 0 difference), 2f/3 rounded once for m' = 3
    lal = pytest.importorskip("lal")
    lalsim = pytest.importorskip("lalsimulation")
    mass_1, mass_2, spin_1, spin_2, delta_f = CASES[1][:5]
    m1, m2, spins = mass_1 * lal.MSUN_SI, mass_2 * lal.MSUN_SI, (*spin_1, *spin_2)
    lo, hi = 50, 3000
    ours = precessing_twist.msa_angles(lo, [hi - lo] * 4, delta_f, m1, m2, spins, 2.5, 20.0)
    frequencies = lal.CreateREAL8Vector(hi - lo)
    frequencies.data[:] = np.arange(lo, hi) * delta_f
    for row, m_prime in enumerate(precessing_twist.M_PRIMES):
        theirs = lalsim.SimIMRPhenomXPMSAAngles(frequencies, m1, m2, *spins, 2.5, 20.0, m_prime, None)
        for angle, their in zip(ours, theirs):
            tolerance = 0.0 if m_prime != 3 else 1e-12 * np.max(np.abs(their.data))
            assert np.max(np.abs(angle[row] - their.data)) <= tolerance, m_prime


@pytest.mark.parametrize("case", CASES[:2])
def test_twist_ends_where_the_modes_are_quiet(case):
    # convergence, common practice, no source: the twist in use (each co-precessing mode up to its last value above
    # QUIET of the loudest peak, the angles interpolated (ANGLE_CHECK)) against the whole twist (quiet = 0,
    # every angle from lalsimulation; checked against lalsimulation above); measured 1.0e-7 of the loudest J-frame
    # peak for QUIET = 1e-7
    mass_1, mass_2, spin_1, spin_2, delta_f, start, f_max, phase, inclination = case
    size = 2 * int(f_max / delta_f) + 1
    arguments = (mass_1, mass_2, spin_1, spin_2, delta_f, start, f_max, 20.0, phase, inclination, 1e24, size)
    whole, ours = twisted_modes(*arguments, quiet=0.0, angle_check=0.0), twisted_modes(*arguments)
    peak = max(np.max(np.abs(mode)) for mode in whole.values())
    worst = max(np.max(np.abs(ours[key] - mode)) for key, mode in whole.items()) / peak
    assert 0.0 < worst <= 2 * precessing_twist.QUIET


@numba.njit(cache=False)
def _plain_peak(stacked):
    """The largest modulus, compiled as the kernel's moduli were before the squared moduli."""
    peak = 0.0
    for value in stacked.ravel():
        peak = max(peak, abs(value))
    return peak


@numba.njit(cache=False)
def _plain_ends(stacked, lo, hi, quiet):
    """Each row's quiet end by moduli alone (the loop loud_stretch replaced)."""
    threshold = quiet * _plain_peak(stacked[:, lo:hi].copy())
    ends = np.zeros(stacked.shape[0], dtype=np.int64)
    for r in range(stacked.shape[0]):
        for t in range(hi - 1, lo - 1, -1):
            if abs(stacked[r, t]) > threshold:
                ends[r] = t + 1 - lo
                break
    return ends


def test_loud_stretch_equals_the_numpy_steps():
    # the co-precessing modes' nonzero stretch and each one's quiet end; reference: the numpy steps it replaced
    # (no source), and refusal of a value that is not finite
    rng = np.random.default_rng(11)
    stacked = np.zeros((5, 300), dtype=complex)
    for row, (start, stop) in enumerate(((20, 200), (10, 290), (30, 250), (25, 260), (40, 280))):
        stacked[row, start:stop] = (rng.normal(size=stop - start) + 1j * rng.normal(size=stop - start)) * np.exp(
            -np.arange(stop - start) / 20.0)
    for quiet in (0.0, 1e-7, 1e-3):
        lo, hi, ends = precessing_twist.loud_stretch(stacked, quiet)
        loud = np.nonzero(np.any(stacked != 0, axis=0))[0]
        assert (lo, hi) == (max(int(loud[0]), 1), int(loud[-1]) + 1)
        magnitudes = np.abs(stacked[:, lo:hi])
        above = magnitudes > quiet * magnitudes.max()
        assert list(ends) == [np.nonzero(r)[0][-1] + 1 if r.any() else 0 for r in above]
    # squared moduli decide only where clear: values on the threshold and one ulp either side, at scales whose
    # squares underflow or overflow (1e-160, 1e150), give the decisions of the compiled moduli it replaced
    for scale in (1.0, 1e-30, 1e-160, 1e150):
        for quiet in (0.0, 1e-7, 1e-3):
            trial = stacked * scale
            threshold = quiet * _plain_peak(trial)
            for row, nudge in ((0, 0.0), (1, 1.0), (3, -1.0)):  # late in the quiet tail: on, above, below
                trial[row, 180] = np.nextafter(threshold, threshold + nudge) if nudge else threshold
            lo, hi, ends = precessing_twist.loud_stretch(trial, quiet)
            assert list(ends) == list(_plain_ends(trial, lo, hi, quiet)), (scale, quiet)
    stacked[2, 100] = np.nan
    assert precessing_twist.loud_stretch(stacked, 1e-7)[:2] == (0, 0)
