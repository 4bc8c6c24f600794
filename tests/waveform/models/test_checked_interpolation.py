"""Interpolation between exact calls, bisected where a check fails: against closed forms and lalsimulation's angles."""
import numpy as np
import pytest

from memory_infer.waveform.models import precessing_twist
from memory_infer.waveform.models.checked_interpolation import checked_interpolation


class Counted:
    """A function of ``x[indices]`` that counts the abscissae it was asked for."""

    def __init__(self, x, function):
        self.x, self.function, self.asked = x, function, []

    def __call__(self, indices):
        self.asked.extend(indices.tolist())
        return self.function(self.x[indices])


def smooth_kink_jump(x):
    # a smooth part, a kink at 0.37 and a jump at 0.81 (the features a cubic between nodes cannot follow)
    return np.array([np.sin(3 * x) + 0.01 * np.abs(x - 0.37) + 1e-3 * (x > 0.81), np.exp(-x) * np.cos(7 * x)])


def test_interpolation_close_through_kinks_and_jumps():
    # closed form (common practice, no source): every value within the check's threshold of the function itself
    # (the kink and jump lie between nodes), the nodes exact, and far fewer calls than abscissae
    x = np.sort(np.random.default_rng(4).uniform(0.0, 1.2, 20000))
    counted = Counted(x, smooth_kink_jump)
    values = checked_interpolation(x, counted, 2, 0.002, 1e-7)
    exact = smooth_kink_jump(x)
    assert np.max(np.abs(values - exact)) <= 1e-7
    asked = np.array(counted.asked)
    assert np.array_equal(values[:, asked], exact[:, asked])
    assert len(set(asked)) == asked.size and asked.size < 0.2 * x.size
    near = np.abs(x[asked] - 0.37) < 0.001  # the nodes close in on the kink: denser there than on average
    assert near.mean() > 5 * 0.002 / 1.2


def test_zero_threshold_and_short_inputs_are_exact():
    # closed form (common practice, no source): threshold 0, fewer than 8 abscissae or fewer than four nodes (a step
    # as long as the range) call everything exactly
    x = np.linspace(0.0, 1.0, 50)
    for threshold, xs, step in ((0.0, x, 0.1), (1e-3, x[:5], 0.1), (1e-3, x, 0.6)):
        counted = Counted(xs, smooth_kink_jump)
        assert np.array_equal(checked_interpolation(xs, counted, 2, step, threshold), smooth_kink_jump(xs))
        assert sorted(counted.asked) == list(range(xs.size))


def test_nan_at_a_check_is_taken_exact():
    # a value the cubic cannot reproduce (not a number) fails its check: the interval is called exactly
    x = np.linspace(0.0, 1.0, 400)

    def function(values):
        out = smooth_kink_jump(values)
        out[:, np.abs(values - 0.5) < 0.003] = np.nan
        return out

    values = checked_interpolation(x, Counted(x, function), 2, 0.05, 1e-9)
    assert np.array_equal(np.isnan(values), np.isnan(function(x)))


@pytest.mark.parametrize("seed", [1, 2, 3, 4])
def test_precession_angles_interpolated_close_to_every_call(seed):
    # reference library: lalsimulation SimIMRPhenomXPMSAAngles at every frequency of the twist's grid (check 0: one
    # call at all of them) against the angles in use (nodes bisected until a middle value is within ANGLE_CHECK);
    # random precessing binaries of 8-80 solar masses, grids as the twist uses them; measured over 30 such binaries:
    # at most 6.7 ANGLE_CHECK (seed 2: a kink of the angles close to a node, 4.8 ANGLE_CHECK), median 0.16
    lal = pytest.importorskip("lal")
    rng = np.random.default_rng(seed)
    total, ratio = rng.uniform(8, 80), rng.uniform(0.15, 1.0)
    mass_1, mass_2 = total / (1 + ratio), total * ratio / (1 + ratio)
    spins = tuple(np.concatenate([a * v / np.linalg.norm(v) for a, v in
                                  zip(rng.uniform(0, 0.99, 2), rng.normal(size=(2, 3)))]))
    delta_f = 0.5 if total > 40 else 0.125
    f_max = 1.05 * 0.3 / (total * 4.925491e-6)
    lo = int(19 / delta_f)
    ends = [int(f_max / delta_f) - lo] * 4
    arguments = (lo, ends, delta_f, mass_1 * lal.MSUN_SI, mass_2 * lal.MSUN_SI, spins, 0.8, 20.0)
    exact = precessing_twist.msa_angles(*arguments, check=0.0)
    ours = precessing_twist.msa_angles(*arguments, check=precessing_twist.ANGLE_CHECK)
    assert 0.0 < np.max(np.abs(ours - exact)) <= 8 * precessing_twist.ANGLE_CHECK
