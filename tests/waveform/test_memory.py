import numpy as np
import pytest

from memory_infer.waveform.memory import (LALSIMULATION_SIGN, cumulative_integral, early_inspiral_offset, energy_flux,
                                          memory_at_direction, memory_modes, orbital_velocity_parameter,
                                          time_derivative)
from memory_infer.waveform.models import generate_modes
from memory_infer.waveform.sphere import spin_weighted_harmonic


def memory_quadrature(modes: dict, times, theta: float, phi: float, n_theta: int = 24,
                      n_phi: int = 48) -> np.ndarray:
    """Slow reference: the flux form integrated on a sphere grid whose pole is the observer.

    With e_theta, e_phi of N as the other two axes the kernel ``(mbar.n')^2/(1 - n'.N)`` becomes
    ``(1 + cos th') e^{-2 i ph'} / 2``; Gauss-Legendre in cos th' times a uniform rule in ph'.
    Returned in lalsimulation's convention like the mode sum; the slow reference for the mode sum.
    """
    step = (times[-1] - times[0]) / (times.size - 1)
    keys = list(modes)
    stacked = np.array([modes[key] for key in keys])
    derivatives = time_derivative(stacked, step)
    north = np.array([np.sin(theta) * np.cos(phi), np.sin(theta) * np.sin(phi), np.cos(theta)])
    e_theta = np.array([np.cos(theta) * np.cos(phi), np.cos(theta) * np.sin(phi), -np.sin(theta)])
    e_phi = np.array([-np.sin(phi), np.cos(phi), 0.0])
    cos_nodes, cos_weights = np.polynomial.legendre.leggauss(n_theta)
    azimuths = np.arange(n_phi) * 2 * np.pi / n_phi
    cos_grid, azimuth_grid = np.meshgrid(cos_nodes, azimuths, indexing="ij")
    sin_grid = np.sqrt(1 - cos_grid ** 2)
    directions = (sin_grid[..., None] * np.cos(azimuth_grid)[..., None] * e_theta
                  + sin_grid[..., None] * np.sin(azimuth_grid)[..., None] * e_phi
                  + cos_grid[..., None] * north).reshape(-1, 3)
    source_theta = np.arccos(np.clip(directions[:, 2], -1, 1))
    source_phi = np.arctan2(directions[:, 1], directions[:, 0])
    kernel = ((1 + cos_grid) * np.exp(-2j * azimuth_grid) / 2).ravel()
    weights = (cos_weights[:, None] * np.full(n_phi, 2 * np.pi / n_phi)[None, :]).ravel()
    harmonics = np.array([spin_weighted_harmonic(-2, l, m, source_theta, source_phi) for l, m in keys])
    strain_rate = harmonics.T @ derivatives
    rate = (weights * kernel) @ np.abs(strain_rate) ** 2 / (4 * np.pi)
    return LALSIMULATION_SIGN * cumulative_integral(rate, step)


@pytest.fixture(scope="module")
def leading_order():
    series = generate_modes("LeadingOrderInspiral", 30.0, 30.0, 100.0, 1 / 16384, 10.0)
    times, modes = series.geometric()
    eta = series.symmetric_mass_ratio
    x = np.abs(modes[(2, 2)]) / (8 * np.sqrt(np.pi / 5) * eta)
    return times, modes, eta, x


def test_leading_order_mode_matches_closed_form(leading_order):
    times, modes, eta, x = leading_order
    memory = memory_modes(modes, times)
    i, j = len(times) // 4, int(0.9 * len(times))
    # r h_mem_20 / M = -(4/7) sqrt(5 pi / 6) eta x: PRD 80, 024002 (2009) (l = 2 projection),
    # negative in lalsimulation's basis (CQG 25, 165003 (2008))
    expected = -(4 / 7) * np.sqrt(5 * np.pi / 6) * eta * (x[j] - x[i])
    assert abs((memory[(2, 0)][j] - memory[(2, 0)][i]).real / expected - 1) < 5e-3


@pytest.mark.parametrize("inclination", [0.4, 1.1, np.pi / 2])
def test_leading_order_plus_polarization_matches_closed_form(leading_order, inclination):
    times, modes, eta, x = leading_order
    memory = memory_at_direction(modes, times, inclination, 0.3)
    i, j = len(times) // 4, int(0.9 * len(times))
    # h+_mem = -(2 eta M x / R) sin^2 i (17 + cos^2 i) / 96 for h22 = +8 sqrt(pi/5) eta x e^{-2i Phi}:
    # ApJ 696, L159 (2009) and PRD 80, 024002 (2009), in the (e_theta, e_phi) basis with the other
    # sign; lalsimulation's basis: CQG 25, 165003 (2008)
    expected = -2 * eta * (x[j] - x[i]) * np.sin(inclination) ** 2 * (17 + np.cos(inclination) ** 2) / 96
    accumulated = memory[j] - memory[i]
    assert abs(accumulated.real / expected - 1) < 5e-3
    assert abs(accumulated.imag) < 5e-3 * abs(expected)  # h_x memory vanishes (same reference)


@pytest.mark.parametrize("masses", [(30.0, 30.0), (45.0, 15.0)])
@pytest.mark.parametrize("direction", [(0.3, 0.2), (1.4, 2.0)])
def test_mode_sum_matches_quadrature(masses, direction):
    # second, independent implementation: quadrature of the flux form (PRD 44, R2945 (1991))
    series = generate_modes("IMRPhenomTHM", *masses, 100.0, 1 / 4096, 20.0)
    times, modes = series.geometric()
    fast = memory_at_direction(modes, times, *direction)
    slow = memory_quadrature(modes, times, *direction)
    assert np.max(np.abs(fast - slow)) < 5e-3 * np.max(np.abs(slow))
    # every pair on every sample: the mode sum is exact when all l are kept (Wigner 3j identity, README Conventions)
    exact = memory_at_direction(modes, times, *direction, smooth_inspiral=False)
    assert np.max(np.abs(exact - slow)) < 1e-10 * np.max(np.abs(slow))
    full = memory_modes(modes, times)
    summed = sum(v * spin_weighted_harmonic(-2, l, m, *direction) for (l, m), v in full.items())
    assert np.max(np.abs(summed - slow)) < 1e-10 * np.max(np.abs(slow))


@pytest.mark.parametrize("direction", [(0.3, 0.2), (1.4, 2.0)])
def test_smooth_early_inspiral_is_close_to_every_pair(direction):
    # the early inspiral of a light binary from its m_i = m_j pairs on every 16th sample against every pair on
    # every sample (the exact mode sum, checked against quadrature above): within 3e-4 of the memory's peak
    # (measured, no outside source; the dropped pairs oscillate at multiples of the orbital frequency)
    series = generate_modes("IMRPhenomTHM", 10.0, 8.0, 100.0, 1 / 2048, 20.0)
    times, modes = series.geometric()
    finer = series.geometric_finer()
    fast = memory_at_direction(modes, times, *direction, finer=finer)
    exact = memory_at_direction(modes, times, *direction, finer=finer, smooth_inspiral=False)
    assert 0 < np.max(np.abs(fast - exact)) < 3e-4 * np.max(np.abs(exact))


@pytest.mark.parametrize("spins", [((0, 0, 0.3), (0, 0, -0.2)), ((0.4, 0.2, 0.3), (-0.1, 0.3, 0.2))])
def test_strain_units_give_the_same_memory(spins):
    # the memory is quadratic in the modes: SI modes with mode_scale = M / r give the geometric result times
    # M / r (identity of the flux form, PRD 44, R2945 (1991)); aligned (mirror-symmetric rows, real form on
    # the m >= 0 modes) and precessing (real form on every mode) spins, finer levels and the early-inspiral offset included
    approximant = "IMRPhenomTPHM" if spins[0][0] else "IMRPhenomTHM"
    series = generate_modes(approximant, 30.0, 25.0, 100.0, 1 / 1024, 20.0, *spins, 20.0)
    times, modes = series.geometric()
    geometric = memory_at_direction(modes, times, 1.1, 0.4, early_inspiral=True,
                                    symmetric_mass_ratio=series.symmetric_mass_ratio,
                                    finer=series.geometric_finer()) * series.strain_scale
    times, strain = series.geometric(scaled=False)
    direct = memory_at_direction(strain, times, 1.1, 0.4, early_inspiral=True,
                                 symmetric_mass_ratio=series.symmetric_mass_ratio,
                                 finer=series.geometric_finer(scaled=False), mode_scale=series.strain_scale)
    assert np.max(np.abs(direct - geometric)) < 1e-12 * np.max(np.abs(geometric))


def test_real_form_without_symmetry_equals_complex_form():
    # identity of the quadratic form (no outside source): sum_ij W_ij dh_i conj(dh_j) written on the real rows
    # [Re dh; Im dh] of every mode gives the complex form's memory to rounding; precessing modes (no mirror
    # symmetry), finer levels and the early-inspiral offset included
    series = generate_modes("IMRPhenomTPHM", 30.0, 25.0, 100.0, 1 / 1024, 20.0, (0.4, 0.2, 0.3), (-0.1, 0.3, 0.2), 20.0)
    times, modes = series.geometric()
    memories = [memory_at_direction(modes, times, 1.1, 0.4, early_inspiral=True,
                                    symmetric_mass_ratio=series.symmetric_mass_ratio, finer=series.geometric_finer(),
                                    smooth_inspiral=smooth) for smooth in (True, None)]
    assert np.max(np.abs(memories[0] - memories[1])) < 1e-12 * np.max(np.abs(memories[1]))


def test_truncated_degree_converges(thm_modes):
    # measured (convergence in l, no outside source): truncating at l <= 4 leaves ~2e-3, at l <= 6 ~1e-4
    times, modes = thm_modes
    exact = memory_at_direction(modes, times, 1.0, 0.5, smooth_inspiral=False)
    errors = []
    for ell_max in (4, 6):
        truncated = memory_modes(modes, times, ell_max=ell_max)
        summed = sum(v * spin_weighted_harmonic(-2, l, m, 1.0, 0.5) for (l, m), v in truncated.items())
        errors.append(np.max(np.abs(summed - exact)) / np.max(np.abs(exact)))
    assert errors[1] < errors[0] < 1e-2
    assert errors[1] < 1e-3


def test_memory_contains_every_allowed_m(thm_modes):
    times, modes = thm_modes
    memory = memory_modes(modes, times, ell_max=6)
    assert {(2, 0), (4, 0), (6, 0), (3, 1), (2, 1), (4, 4), (5, 3)} <= set(memory)
    assert all(abs(m) <= l <= 6 for l, m in memory)
    # aligned spins: the m = 0, even-l modes carry the offset (PRD 80, 024002 (2009))
    assert abs(memory[(2, 0)][-1]) > 10 * abs(memory[(3, 1)][-1])


def test_energy_flux_identity(thm_modes):
    # dE/dt = (1/16 pi) sum |dh_lm/dt|^2 (GRG 40, 1705 (2008)) equals the sphere
    # integral (r^2 / 16 pi) oint |dh/dt|^2 dOmega: exact identity, 1e-10
    times, modes = thm_modes
    flux = energy_flux(modes, times)
    derivatives = {k: time_derivative(v, times[1] - times[0]) for k, v in modes.items()}
    x, w = np.polynomial.legendre.leggauss(16)
    az = np.arange(32) * 2 * np.pi / 32
    th, ph = np.meshgrid(np.arccos(x), az, indexing="ij")
    strain_rate = sum(np.multiply.outer(spin_weighted_harmonic(-2, l, m, th, ph), d) for (l, m), d in derivatives.items())
    grid_weights = np.outer(w, np.full(32, 2 * np.pi / 32))
    sphere = np.tensordot(grid_weights, np.abs(strain_rate) ** 2, axes=([0, 1], [0, 1])) / (16 * np.pi)
    assert np.max(np.abs(flux - sphere)) < 1e-10 * np.max(flux)


@pytest.mark.slow
def test_equal_mass_energy_and_final_memory():
    series = generate_modes("IMRPhenomTHM", 50.0, 50.0, 100.0, 1 / 2048, 5.0)
    times, modes = series.geometric()
    radiated = np.sum(energy_flux(modes, times)) * (times[1] - times[0])
    x0 = orbital_velocity_parameter(modes, times)
    # about 4.8% of M radiated: numerical relativity gives a final mass 0.9516 M for equal non-spinning masses (PRD 79,
    # 024003 (2009), value from memory), 0.5 pp allowed;
    # the model starts at 5 Hz, so add the Newtonian binding energy eta x0 / 2 it has not radiated
    assert abs(radiated + 0.25 * x0 / 2 - 0.048) < 0.005
    assert radiated < 0.048
    memory = memory_modes(modes, times, ell_max=4, early_inspiral=True, symmetric_mass_ratio=0.25)
    # final r h_mem_20 / M near 0.1 in size for equal masses (ApJ 696, L159 (2009), value from memory), 20%, early inspiral
    # included; negative in lalsimulation's basis (CQG 25, 165003 (2008))
    assert abs(memory[(2, 0)][-1].real + 0.1) < 0.02


def test_early_inspiral_offset_is_the_leading_order_value(leading_order):
    times, modes, eta, x = leading_order
    offset = early_inspiral_offset(modes, times, eta)
    # x at the first sample from the (2, 2) phase rate equals the analytic x(t) of the model
    assert abs(orbital_velocity_parameter(modes, times) / x[0] - 1) < 1e-3
    # PRD 80, 024002 (2009): the (2, 0) value -(4/7) sqrt(5 pi / 6) eta x in lalsimulation's basis
    assert abs(offset[(2, 0)] / (-(4 / 7) * np.sqrt(5 * np.pi / 6) * eta * x[0]) - 1) < 1e-3
    with_offset = memory_modes(modes, times, early_inspiral=True, symmetric_mass_ratio=eta)
    without = memory_modes(modes, times)
    assert np.allclose(with_offset[(2, 0)] - without[(2, 0)], offset[(2, 0)])


def test_derivative_and_integral_are_inverse():
    t = np.linspace(0, 10, 2001)
    f = np.sin(3 * t) + t ** 2
    assert np.max(np.abs(time_derivative(f, t[1] - t[0]) - (3 * np.cos(3 * t) + 2 * t))) < 1e-6
    assert np.max(np.abs(cumulative_integral(3 * np.cos(3 * t) + 2 * t, t[1] - t[0]) - (f - f[0]))) < 1e-3


def test_rejects_nonuniform_times():
    with pytest.raises(ValueError, match="uniformly"):
        memory_modes({(2, 2): np.ones(4), (2, -2): np.ones(4)}, np.array([0, 1, 3, 4.0]))


def _taylor_t4_own_modes(amplitude_order, rate=4096.0):
    """lalsimulation's TaylorT4 modes of 20 + 15 M_sun from 20 Hz, its own memory modes included, r h / M."""
    import lal  # a hard dependency: missing, the test fails
    import lalsimulation as lalsim
    params = lal.CreateDict()
    lalsim.SimInspiralWaveformParamsInsertPNAmplitudeOrder(params, amplitude_order)
    distance = 100e6 * lal.PC_SI
    linked = lalsim.SimInspiralChooseTDModes(0.0, 1 / rate, 20 * lal.MSUN_SI, 15 * lal.MSUN_SI, 0, 0, 0, 0, 0, 0,
                                             20.0, 20.0, distance, params, 5,
                                             lalsim.GetApproximantFromString("TaylorT4"))
    modes = {}
    while linked is not None:
        modes[(linked.l, linked.m)] = np.array(linked.mode.data.data) / (35 * lal.MRSUN_SI / distance)
        step = linked.mode.deltaT
        linked = linked.next
    times = np.arange(modes[(2, 2)].size) * step / (35 * lal.MTSUN_SI)
    return times, modes


def test_sign_and_size_match_lalsimulation_taylor_t4_memory_modes():
    # reference library: lalsimulation's TaylorT4 returns its own post-Newtonian memory modes (2, 0) and (4, 0)
    # (CQG 25, 165003 (2008)); ours from the same run's oscillatory modes
    times, modes = _taylor_t4_own_modes(3)
    oscillatory = {k: v for k, v in modes.items() if k[1] != 0}
    ours = memory_modes(oscillatory, times)
    own_20 = (modes[(2, 0)][-1] - modes[(2, 0)][0]).real
    own_40 = (modes[(4, 0)][-1] - modes[(4, 0)][0]).real
    assert own_20 < 0 and ours[(2, 0)][-1].real < 0  # sign: exact
    assert own_40 < 0 and ours[(4, 0)][-1].real < 0
    # size: reference library (lalsimulation's own TaylorT4 (2, 0)); the two differ by the post-Newtonian order at
    # which the amplitudes are truncated, which at x ~ 0.1 near the end is of order 1% (measured 0.9%): 1.5% allowed
    assert abs(ours[(2, 0)][-1].real / own_20 - 1) < 0.015
    # lalsimulation's own memory modes are the leading-order formula c_l eta x (PRD 80, 024002 (2009)),
    # checked here to 0.6% along the run; ours carries the flux of the 1.5PN-accurate amplitudes, so (4, 0),
    # whose leading-order coefficient is small, differs by the next order: 17% measured, 20% allowed
    from memory_infer.waveform.memory import _leading_order_projection

    eta = 20 * 15 / 35 ** 2
    x = (-np.gradient(np.unwrap(np.angle(modes[(2, 2)])), times) / 2) ** (2 / 3)
    for mode, coefficient in _leading_order_projection().items():
        assert np.max(np.abs(modes[mode][:-10].real / (coefficient * eta * x[:-10]) - 1)) < 6e-3
    assert abs(ours[(4, 0)][-1].real / own_40 - 1) < 0.2


def test_lalsimulation_leading_order_h22_is_positive_at_the_reference_phase():
    # reference library: at amplitude order 0 lalsimulation's TaylorT4 h22 at f_ref with phi_ref = 0 is
    # +8 sqrt(pi/5) eta x (real, positive): the convention our analytic model and memory sign follow
    times, modes = _taylor_t4_own_modes(0)
    eta = 20 * 15 / 35 ** 2
    x0 = (np.pi * 20.0 * 35 * 4.925490947641267e-06) ** (2 / 3)
    assert abs(modes[(2, 2)][0] / (8 * np.sqrt(np.pi / 5) * eta * x0) - 1) < 1e-3
    # our analytic model follows the same amplitude law (its sign is written in models/analytic.py)
    from memory_infer.waveform.models.analytic import leading_order_inspiral

    _, analytic_modes = leading_order_inspiral(20.0, 15.0, 100.0, 1 / 4096, 20.0).geometric()
    assert abs(np.abs(analytic_modes[(2, 2)][0]) / (8 * np.sqrt(np.pi / 5) * eta * x0) - 1) < 1e-3
