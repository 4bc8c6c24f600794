"""Source populations for campaigns: draws from a population description, or an explicit table.

Population (TOML ``[population]``): primary mass ``p(m1) ∝ m1^-alpha`` on [minimum_mass, maximum_mass]
(source frame), mass ratio uniform on [mass_ratio_minimum, 1], aligned spins with magnitudes uniform on
[0, spin_max] and either orientation, redshift uniform in comoving volume (``dVc/dz``, times ``1/(1+z)``
for source-frame time when ``source_frame_time``) up to ``redshift_max`` (astropy's Planck18), isotropic
sky position and orientation. Detector-frame masses are ``(1+z)`` times source-frame masses.
"""
from __future__ import annotations

import os

import numpy as np

from .config import NUMBER, apply_schema, load_toml
from ..common.errors import MemoryInferError
from .checks import SOURCE_PARAMETERS, ZERO_DEFAULTS, check_physical

POPULATION_SCHEMA = {
    "population": {
        "alpha": (NUMBER, 2.35), "minimum_mass": (NUMBER, 5.0), "maximum_mass": (NUMBER, 80.0),
        "mass_ratio_minimum": (NUMBER, 0.1), "spin_max": (NUMBER, 0.8),
        "redshift_max": (NUMBER, 1.0), "source_frame_time": (bool, True),
        "minimum_total_mass": (NUMBER, 0.0),
    }
}


def load_population(path: str) -> dict:
    config = apply_schema(load_toml(path), POPULATION_SCHEMA, os.path.basename(path))["population"]
    if not 0 < config["minimum_mass"] < config["maximum_mass"]:
        raise MemoryInferError("the population needs 0 < minimum_mass < maximum_mass")
    if not 0 < config["mass_ratio_minimum"] <= 1:
        raise MemoryInferError("the population's mass_ratio_minimum must lie in (0, 1]")
    if not 0 <= config["spin_max"] <= 1:
        raise MemoryInferError("the population's spin_max must lie in [0, 1]")
    if not 0 < config["redshift_max"] <= 20:
        raise MemoryInferError("the population's redshift_max must lie in (0, 20]")
    return config


def _power_law(rng, alpha, low, high, size):
    u = rng.uniform(size=size)
    if abs(alpha - 1) < 1e-12:
        return low * (high / low) ** u
    a = 1 - alpha
    return (low ** a + u * (high ** a - low ** a)) ** (1 / a)


def _redshift_sampler(redshift_max: float, source_frame_time: bool):
    from astropy.cosmology import Planck18

    grid = np.linspace(0, redshift_max, 2001)[1:]
    density = Planck18.differential_comoving_volume(grid).value
    if source_frame_time:
        density = density / (1 + grid)
    cdf = np.concatenate([[0], np.cumsum(0.5 * (density[1:] + density[:-1]) * np.diff(grid))])
    cdf /= cdf[-1]
    distances = Planck18.luminosity_distance(grid).value
    return grid, cdf, distances


def draw(population: dict, count: int, seed: int, geocent_time: float) -> list:
    """``count`` sources (dicts of bilby parameters, detector frame) from a seeded generator."""
    rng = np.random.default_rng(seed)
    grid, cdf, distances = _redshift_sampler(population["redshift_max"], population["source_frame_time"])
    m1 = _power_law(rng, population["alpha"], population["minimum_mass"], population["maximum_mass"], count)
    q = rng.uniform(population["mass_ratio_minimum"], 1.0, count)
    redshift = np.interp(rng.uniform(size=count), cdf, grid)
    distance = np.interp(redshift, grid, distances)
    spins = rng.uniform(0, population["spin_max"], (2, count))
    tilts = np.where(rng.uniform(size=(2, count)) < 0.5, 0.0, np.pi)
    sources = []
    for i in range(count):
        sources.append({
            "mass_1": float(m1[i] * (1 + redshift[i])), "mass_2": float(m1[i] * q[i] * (1 + redshift[i])),
            "luminosity_distance": float(distance[i]), "redshift": float(redshift[i]),
            "a_1": float(spins[0, i]), "a_2": float(spins[1, i]), "tilt_1": float(tilts[0, i]),
            "tilt_2": float(tilts[1, i]), "phi_12": 0.0, "phi_jl": 0.0,
            "theta_jn": float(np.arccos(rng.uniform(-1, 1))), "phase": float(rng.uniform(0, 2 * np.pi)),
            "ra": float(rng.uniform(0, 2 * np.pi)), "dec": float(np.arcsin(rng.uniform(-1, 1))),
            "psi": float(rng.uniform(0, np.pi)), "geocent_time": float(geocent_time),
        })
    return sources


def read_table(path: str, geocent_time: float) -> list:
    """Explicit injections from CSV with bilby parameter names (spins default to zero)."""
    import pandas as pd

    if not os.path.isfile(path):
        raise MemoryInferError(f"injection table '{path}' does not exist")
    try:
        frame = pd.read_csv(path)
    except (ValueError, OSError):
        raise MemoryInferError(f"injection table '{os.path.basename(path)}' is not a readable CSV") from None
    sources = []
    for row in frame.to_dict("records"):
        source = dict(ZERO_DEFAULTS, geocent_time=geocent_time)
        source.update({k: float(v) for k, v in row.items() if k != "label"})
        missing = [k for k in SOURCE_PARAMETERS if k not in source]
        if missing:
            raise MemoryInferError(f"injection table '{os.path.basename(path)}' lacks the column {missing[0]!r}")
        check_physical(source, f"injection table '{os.path.basename(path)}'")
        sources.append(source)
    if not sources:
        raise MemoryInferError(f"injection table '{os.path.basename(path)}' holds no injections")
    return sources
