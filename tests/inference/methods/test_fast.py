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
    # SPEC section 6: with only (2, +-2) modes, phase + pi/2 and psi + pi/2 keep the oscillatory
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
    assert two_plus == pytest.approx(snr ** 2 / 2, rel=1e-6)  # zero noise: rho^2 / 2 (Finn 1992, mean value)
