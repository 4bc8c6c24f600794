"""Bilby's standard source parameters and the physical checks every input goes through."""
from __future__ import annotations

import numpy as np

from ..common.errors import MemoryInferError

SOURCE_PARAMETERS = ("mass_1", "mass_2", "luminosity_distance", "a_1", "a_2", "tilt_1", "tilt_2", "phi_12",
                     "phi_jl", "theta_jn", "phase", "ra", "dec", "psi", "geocent_time")
ZERO_DEFAULTS = {"a_1": 0.0, "a_2": 0.0, "tilt_1": 0.0, "tilt_2": 0.0, "phi_12": 0.0, "phi_jl": 0.0}


# solar masses: above the heaviest neutron stars (about 2-2.5) and below the lightest black holes seen in binaries
# (common practice, no source); a binary with both masses below it may hold neutron stars
NEUTRON_STAR_LIMIT = 3.0


def light_binary_caution(mass_1: float, mass_2: float, approximant: str, where: str) -> str | None:
    """A caution when both (detector-frame) masses lie below :data:`NEUTRON_STAR_LIMIT`: every model here is a
    binary-black-hole (point-particle) model, without tides or tidal disruption; None otherwise."""
    if not (float(mass_1) < NEUTRON_STAR_LIMIT and float(mass_2) < NEUTRON_STAR_LIMIT):
        return None
    return (f"both masses of {where} lie below {NEUTRON_STAR_LIMIT:g} solar masses ({float(mass_1):.3g} + "
            f"{float(mass_2):.3g}), so it may hold neutron stars, but {approximant} is a binary-black-hole model "
            "without tides or tidal disruption: its signal and memory may be wrong for such a binary")


def check_physical(values: dict, where: str) -> None:
    """One sentence for the first unphysical value among bilby's standard parameters (numbers or arrays)."""
    rules = [
        ("mass_1", lambda v: v > 0, "must be positive"), ("mass_2", lambda v: v > 0, "must be positive"),
        ("luminosity_distance", lambda v: v > 0, "must be positive"),
        ("a_1", lambda v: (v >= 0) & (v <= 1), "must lie between 0 and 1"),
        ("a_2", lambda v: (v >= 0) & (v <= 1), "must lie between 0 and 1"),
        ("theta_jn", lambda v: (v >= 0) & (v <= np.pi), "must lie between 0 and pi"),
        ("tilt_1", lambda v: (v >= 0) & (v <= np.pi), "must lie between 0 and pi"),
        ("tilt_2", lambda v: (v >= 0) & (v <= np.pi), "must lie between 0 and pi"),
        ("dec", lambda v: (v >= -np.pi / 2) & (v <= np.pi / 2), "must lie between -pi/2 and pi/2"),
        ("mass_ratio", lambda v: (v > 0) & (v <= 1), "must lie in (0, 1]"), ("chirp_mass", lambda v: v > 0, "must be positive"),
    ]
    for key, rule, text in rules:
        if key in values:
            value = np.asarray(values[key], dtype=float)
            if not np.all(np.isfinite(value)):
                raise MemoryInferError(f"'{key}' in {where} is not a finite number")
            if not np.all(rule(value)):
                raise MemoryInferError(f"'{key}' in {where} {text}")
    if "mass_1" in values and "mass_2" in values:
        if np.any(np.asarray(values["mass_2"]) > np.asarray(values["mass_1"]) * (1 + 1e-12)):
            raise MemoryInferError(f"'mass_2' in {where} exceeds 'mass_1' (bilby orders the masses)")


# the physical range of each parameter a prior may span (closed: a continuous prior's end points carry no mass)
PRIOR_RANGES = {
    "mass_1": (0.0, np.inf, "must be positive"), "mass_2": (0.0, np.inf, "must be positive"),
    "chirp_mass": (0.0, np.inf, "must be positive"), "total_mass": (0.0, np.inf, "must be positive"),
    "luminosity_distance": (0.0, np.inf, "must be positive"), "mass_ratio": (0.0, 1.0, "must lie in (0, 1]"),
    "a_1": (0.0, 1.0, "must lie between 0 and 1"), "a_2": (0.0, 1.0, "must lie between 0 and 1"),
    "chi_1": (-1.0, 1.0, "must lie between -1 and 1"), "chi_2": (-1.0, 1.0, "must lie between -1 and 1"),
    "theta_jn": (0.0, np.pi, "must lie between 0 and pi"), "tilt_1": (0.0, np.pi, "must lie between 0 and pi"),
    "tilt_2": (0.0, np.pi, "must lie between 0 and pi"), "dec": (-np.pi / 2, np.pi / 2, "must lie between -pi/2 and pi/2"),
}


def check_prior_range(name: str, minimum: float, maximum: float) -> None:
    """One sentence when a prior on ``name`` reaches outside the parameter's physical range (a negative distance,
    a spin magnitude above 1, ...): its waveforms would fail and count as zero likelihood without a word."""
    if name not in PRIOR_RANGES:
        return
    low, high, text = PRIOR_RANGES[name]
    for end in (float(minimum), float(maximum)):
        if not low - 1e-12 <= end <= high + 1e-12:
            raise MemoryInferError(f"the prior for '{name}' reaches {end:g}, but '{name}' {text}; give a prior "
                                   "inside the physical range")


def non_finite_sentence(numeric, columns: list, where: str) -> str:
    """Where the first NaN or infinite value of a table sits (column, and row counted from 1), and how many rows
    and other columns hold one."""
    bad = ~np.isfinite(numeric)
    column = int(np.argmax(bad.any(axis=0)))
    rows = np.flatnonzero(bad[:, column])
    value = "NaN" if np.isnan(numeric[rows[0], column]) else "an infinite value"
    text = f"{where} hold {value} in column '{columns[column]}' at row {rows[0] + 1}"
    if rows.size > 1:
        text += f" (and {rows.size - 1} more row{'s' if rows.size > 2 else ''})"
    others = [columns[k] for k in np.flatnonzero(bad.any(axis=0)) if k != column]
    if others:
        text += (f", as does the column '{others[0]}'" if len(others) == 1
                 else f", as do the columns {', '.join(repr(c) for c in others)}")
    return text


def check_samples(frame, required, where: str):
    """Missing columns, non-finite values and unphysical values each get one sentence."""
    missing = [name for name in required if name not in frame.columns]
    if missing:
        raise MemoryInferError(f"{where} lack the column{'s' if len(missing) > 1 else ''} {', '.join(repr(m) for m in missing)}")
    numeric = frame[[c for c in required]].to_numpy(dtype=float)
    if not np.all(np.isfinite(numeric)):
        raise MemoryInferError(non_finite_sentence(numeric, list(required), where))
    check_physical({c: frame[c].to_numpy(dtype=float) for c in frame.columns
                    if c in ("mass_1", "mass_2", "luminosity_distance", "a_1", "a_2", "theta_jn", "tilt_1", "tilt_2",
                             "dec", "mass_ratio", "chirp_mass")}, where)
