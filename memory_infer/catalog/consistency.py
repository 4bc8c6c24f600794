"""Checks of a catalog against general relativity's memory and against its own shared amplitude.

- **Expected against observed.** For a signal whose parameters are known, ln BF(A = 1 vs 0) = ln L(1) - ln L(0)
  = <d, h> - <h, h>/2 with ``h`` the memory; in Gaussian noise with ``d = h + n`` it is normal with mean
  rho^2/2 and variance rho^2 (rho the memory's optimal SNR; PRD 46, 5236 (1992)), and with ``d = n`` it has
  mean -rho^2/2 and the same variance. Over independent events the sums add: under GR memory the catalog's
  sum of ln BF+ has mean sum rho^2/2 and standard deviation sqrt(sum rho^2). Marginalizing over the other source
  parameters makes this approximate.
- **Leave-one-out tension.** Each event's own amplitude posterior p_i(A) against the posterior of every other
  event, p_-i(A), both with the catalog's uniform prior: the probability that A drawn from p_i exceeds A drawn
  from p_-i, ``P = int p_i(a) F_-i(a) da`` (F the CDF), and the two-sided p-value ``2 min(P, 1 - P)`` of
  the parameter difference (common practice for agreement between two data sets; no source).
"""
from __future__ import annotations

import numpy as np
from scipy import stats

from ..results.estimates import cumulative_distribution, normalized_density

TENSION_LEVEL = 0.05  # family-wise: an event is in tension below TENSION_LEVEL / number of events (Bonferroni)


def expected_versus_observed(used) -> dict:
    """The consistent-sign sum against sum rho^2/2 with its spread under GR memory, over events with a memory SNR."""
    with_snr = [e for e in used if e.memory_snr is not None]
    if not with_snr:
        return {"expected_ln_bf_plus": None, "expected_spread": None, "observed_ln_bf_plus":
                float(np.sum([e.ln_bf_plus for e in used])), "observed_err": None, "events_with_snr": 0,
                "standard_deviations": None, "p_value": None, "method": "no event has a memory SNR"}
    snr2 = float(np.sum(np.square([e.memory_snr for e in with_snr])))
    observed = float(np.sum([e.ln_bf_plus for e in with_snr]))
    errors = [e.ln_bf_plus_err for e in with_snr if e.ln_bf_plus_err is not None]
    spread = float(np.sqrt(snr2))
    expected = snr2 / 2
    deviation = (observed - expected) / spread if spread > 0 else None
    return {"expected_ln_bf_plus": expected, "expected_spread": spread, "observed_ln_bf_plus": observed,
            "observed_err": float(np.sqrt(np.sum(np.square(errors)))) if errors else None,
            "events_with_snr": len(with_snr), "expected_without_memory": -expected,
            "standard_deviations": deviation,
            "p_value": None if deviation is None else float(2 * stats.norm.sf(abs(deviation))),
            "method": "expected under GR memory: sum of rho_mem^2/2 at each event's reference point, spread "
                      "sqrt(sum rho_mem^2) (the standard deviation of the sum for known source parameters in "
                      "Gaussian noise; PRD 46, 5236 (1992)); without memory the mean is -sum rho_mem^2/2 "
                      "with the same spread; observed: the consistent-sign sum over the same events; p-value "
                      "two-sided from the normal distribution"}


def leave_one_out(grid, ln_curves: dict) -> dict:
    """Each event's leave-one-out p-value against the rest of the catalog (module docstring), with the events in
    tension at the Bonferroni-corrected level."""
    labels = list(ln_curves)
    method = ("each event's amplitude posterior against the posterior of all other events (same uniform prior): "
              "P = Pr(A_event > A_rest), two-sided p-value 2 min(P, 1 - P); tension below "
              f"{TENSION_LEVEL:g} / number of events (Bonferroni)")
    if len(labels) < 2:
        return {"events": {}, "in_tension": [], "level": None, "method": method,
                "note": "fewer than two events with an amplitude curve: nothing to compare"}
    grid = np.asarray(grid, dtype=float)
    curves = np.array([ln_curves[label] for label in labels], dtype=float)
    total = curves.sum(axis=0)
    out = {}
    for label, curve in zip(labels, curves):
        own = normalized_density(grid, curve)
        rest_cdf = cumulative_distribution(grid, normalized_density(grid, total - curve))
        above = float(np.clip(np.trapezoid(own * rest_cdf, grid), 0.0, 1.0))
        own_cdf = cumulative_distribution(grid, own)
        out[label] = {"p_value": float(min(1.0, 2 * min(above, 1 - above))), "probability_above_rest": above,
                      "median": float(np.interp(0.5, own_cdf, grid)),
                      "rest_median": float(np.interp(0.5, rest_cdf, grid))}
    level = TENSION_LEVEL / len(labels)
    return {"events": out, "in_tension": [k for k, v in out.items() if v["p_value"] < level], "level": level,
            "method": method, "note": ""}
