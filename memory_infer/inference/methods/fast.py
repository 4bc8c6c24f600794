"""Fast approximations at one parameter point (SPEC section 5.3): no sampling, no Monte-Carlo error.

- fixed-parameter: ``ln Lambda = <d - h_osc, h_mem> - <h_mem, h_mem> / 2``;
- two-point: also weighs the sign-degenerate partner (phase + pi/2, psi + pi/2) by its oscillatory
  likelihood, which is what a full posterior would do for a (2, +-2)-dominated signal.
"""
from __future__ import annotations

import numpy as np
from scipy.special import logsumexp

from ...common.errors import MemoryInferError
from ...results.estimates import EvidenceEstimate, SignSummary, sign_weight
from ..likelihood import fixed_point_log_ratio, memory_snr
from .base import EvidenceMethod, RunState

NOTE = "deterministic approximation at one point: no Monte-Carlo error; its bias is measured by campaigns"


def sign_partner(point: dict) -> dict:
    """The point whose (2, +-2) strain is the same and whose memory flips: phase + pi/2, psi + pi/2."""
    partner = dict(point)
    partner["phase"] = (point.get("phase", 0.0) + np.pi / 2) % (2 * np.pi)
    partner["psi"] = (point.get("psi", 0.0) + np.pi / 2) % np.pi
    return partner


def fast_estimates(likelihood, point: dict):
    """Fixed-parameter and two-point ln BF (A = +1 and -1 against 0) at ``point``, and the memory SNR."""
    products = likelihood.inner_products(point)
    if products is None:
        raise MemoryInferError("the waveform failed at the chosen parameter point")
    fixed = fixed_point_log_ratio(products)
    fixed_minus = float(-np.real(products.d_mem) + products.osc_mem - products.mem_mem / 2)
    partner_products = likelihood.inner_products(sign_partner(point))
    curve_here = likelihood.curve_from_products(products, point, [0.0, 1.0, -1.0])
    curve_partner = likelihood.curve_from_products(partner_products, sign_partner(point), [0.0, 1.0, -1.0])
    osc = np.array([curve_here[0], curve_partner[0]])
    two_plus = float(logsumexp(osc + np.array([curve_here[1] - curve_here[0], curve_partner[1] - curve_partner[0]]))
                     - logsumexp(osc))
    two_minus = float(logsumexp(osc + np.array([curve_here[2] - curve_here[0], curve_partner[2] - curve_partner[0]]))
                      - logsumexp(osc))
    fixed_name, two_name = "fixed-parameter approximation", "two-point approximation (with the sign-degenerate partner)"
    estimates = [
        EvidenceEstimate(method=fixed_name, ln_bf=fixed, ln_bf_err=None, note=NOTE, family="fixed-point"),
        EvidenceEstimate(method=fixed_name, ln_bf=fixed_minus, ln_bf_err=None, numerator="flipped", note=NOTE,
                         family="fixed-point"),
        EvidenceEstimate(method=two_name, ln_bf=two_plus, ln_bf_err=None, note=NOTE, family="two-point"),
        EvidenceEstimate(method=two_name, ln_bf=two_minus, ln_bf_err=None, numerator="flipped", note=NOTE,
                         family="two-point"),
    ]
    return estimates, memory_snr(products)


class FastApproximation(EvidenceMethod):
    """Fixed-parameter and two-point estimates at the run's reference point (the injection, else the
    best sample of the methods before), without marginalization."""

    name = "fast"

    @staticmethod
    def estimates(likelihood, point: dict):
        """(estimates, memory SNR) at ``point``; used by campaigns at the true parameters too."""
        return fast_estimates(likelihood, point)

    def run(self, state: RunState) -> None:
        point, _ = state.reference_point()
        if point is None:
            return
        plain, _ = state.setup.likelihood("none", marginalize=False)
        estimates, state.memory_snr = self.estimates(plain, point)
        state.result.methods.extend(estimates)
        plus, minus = estimates[2], estimates[3]
        state.propose_sign(2, SignSummary(
            ln_bf_plus=plus.ln_bf, ln_bf_plus_err=None, ln_bf_minus=minus.ln_bf, ln_bf_minus_err=None,
            ln_bf_sign=plus.ln_bf - minus.ln_bf, ln_bf_sign_err=None,
            weight_plus=sign_weight(plus.ln_bf, minus.ln_bf), method=plus.method,
            note="from the fast two-point approximation only"))
