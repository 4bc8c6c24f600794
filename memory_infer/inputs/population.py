"""Source populations for campaigns: draws from a population description, or an explicit table.

Population (TOML ``[population]``): primary mass ``p(m1) ∝ m1^-alpha`` on [minimum_mass, maximum_mass]
(source frame); mass ratio uniform on [max(mass_ratio_minimum, minimum_mass / m1), 1], so that the secondary
never falls below ``minimum_mass`` either; pairs with ``m1 + m2 < minimum_total_mass`` are redrawn. Spin
magnitudes uniform on [0, spin_max], oriented either along the orbital angular momentum (``spin_orientation =
"aligned"``, either sign) or isotropically (``"isotropic"``: cosine of each tilt uniform on [-1, 1], phi_12 and
phi_jl uniform). Redshift uniform in comoving volume (``dVc/dz``, times ``1/(1+z)`` for source-frame time when
``source_frame_time``) up to ``redshift_max`` (astropy's Planck18); without ``redshift_max`` the network's own
reach is used (:data:`NETWORK_REDSHIFT`: z = 10 for third-generation networks). Isotropic sky position and
orientation. Detector-frame masses are ``(1+z)`` times source-frame masses.
"""
from __future__ import annotations

import os
from dataclasses import dataclass, fields
from types import MappingProxyType

import numpy as np

from .config import NUMBER, apply_schema, load_toml
from ..common.errors import MemoryInferError
from .checks import SOURCE_PARAMETERS, ZERO_DEFAULTS, check_physical



@dataclass(frozen=True)
class Population:
    """A checked population description (the module's docstring gives each field's meaning); made from its TOML
    by :func:`load_population`, refused in one sentence when a value is out of range."""

    alpha: float = 2.35
    minimum_mass: float = 5.0
    maximum_mass: float = 80.0
    mass_ratio_minimum: float = 0.1
    spin_max: float = 0.8
    redshift_max: float | None = None
    source_frame_time: bool = True
    minimum_total_mass: float = 0.0
    spin_orientation: str = "aligned"

    def __post_init__(self):
        if not 0 < self.minimum_mass < self.maximum_mass:
            raise MemoryInferError("the population needs 0 < minimum_mass < maximum_mass")
        if not 0 < self.mass_ratio_minimum <= 1:
            raise MemoryInferError("the population's mass_ratio_minimum must lie in (0, 1]")
        if not 0 <= self.spin_max <= 1:
            raise MemoryInferError("the population's spin_max must lie in [0, 1]")
        if self.redshift_max is not None and not 0 < self.redshift_max <= 20:
            raise MemoryInferError("the population's redshift_max must lie in (0, 20]")
        if self.spin_orientation not in SPIN_ORIENTATIONS:
            raise MemoryInferError("the population's spin_orientation must be 'aligned' or 'isotropic'")
        if self.minimum_total_mass >= 2 * self.maximum_mass:
            raise MemoryInferError("the population's minimum_total_mass must lie below twice maximum_mass")


SPIN_ORIENTATIONS = ("aligned", "isotropic")
_DEFAULTS = MappingProxyType({field.name: field.default for field in fields(Population)})
POPULATION_SCHEMA = {
    "population": {
        "alpha": (NUMBER, _DEFAULTS["alpha"]), "minimum_mass": (NUMBER, _DEFAULTS["minimum_mass"]),
        "maximum_mass": (NUMBER, _DEFAULTS["maximum_mass"]),
        "mass_ratio_minimum": (NUMBER, _DEFAULTS["mass_ratio_minimum"]), "spin_max": (NUMBER, _DEFAULTS["spin_max"]),
        "redshift_max": (NUMBER, _DEFAULTS["redshift_max"]),
        "source_frame_time": (bool, _DEFAULTS["source_frame_time"]),
        "minimum_total_mass": (NUMBER, _DEFAULTS["minimum_total_mass"]),
        "spin_orientation": (str, _DEFAULTS["spin_orientation"]),
    }
}
# the largest redshift a network's detected binary black holes reach, by network (a default for
# ``redshift_max``; campaigns warn when detected events crowd against it)
NETWORK_REDSHIFT = {"hl-o4": 1.0, "hl-design": 1.5, "hlv-design": 1.5, "hlv-aplus": 2.5, "et": 10.0, "ce": 10.0,
                    "ce-et": 10.0}


def load_population(path: str) -> Population:
    """A population from its TOML file (``[population]``), checked key by key, then as a whole."""
    return Population(**apply_schema(load_toml(path), POPULATION_SCHEMA, os.path.basename(path))["population"])


def redshift_reach(population: Population, network: str) -> float:
    """The population's ``redshift_max``, or the network's default reach when it has none."""
    if population.redshift_max is not None:
        return float(population.redshift_max)
    return NETWORK_REDSHIFT.get(network, 2.0)


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


def _source_masses(rng, population: Population, count: int):
    """(m1, m2) in the source frame: m2 >= minimum_mass, m1 + m2 >= minimum_total_mass (redrawn until so)."""
    low, high = population.minimum_mass, population.maximum_mass
    m1, m2 = np.empty(count), np.empty(count)
    missing = np.arange(count)
    for _ in range(1000):
        primary = _power_law(rng, population.alpha, low, high, missing.size)
        smallest_ratio = np.maximum(population.mass_ratio_minimum, low / primary)
        secondary = primary * rng.uniform(smallest_ratio, 1.0)
        good = primary + secondary >= population.minimum_total_mass
        m1[missing[good]], m2[missing[good]] = primary[good], secondary[good]
        missing = missing[~good]
        if not missing.size:
            return m1, m2
    raise MemoryInferError("the population's minimum_total_mass leaves almost no binaries to draw")


def _spins(rng, population: Population, count: int) -> dict:
    magnitudes = rng.uniform(0, population.spin_max, (2, count))
    if population.spin_orientation == "isotropic":
        tilts = np.arccos(rng.uniform(-1, 1, (2, count)))
        angles = rng.uniform(0, 2 * np.pi, (2, count))
    else:
        tilts = np.where(rng.uniform(size=(2, count)) < 0.5, 0.0, np.pi)
        angles = np.zeros((2, count))
    return {"a_1": magnitudes[0], "a_2": magnitudes[1], "tilt_1": tilts[0], "tilt_2": tilts[1],
            "phi_12": angles[0], "phi_jl": angles[1]}


def draw(population: Population, count: int, seed: int, geocent_time: float, redshift_max: float | None = None) -> list:
    """``count`` sources (dicts of bilby parameters, detector frame) from a seeded generator, out to
    ``redshift_max`` (default: the population's own, else 2)."""
    rng = np.random.default_rng(seed)
    reach = redshift_max or population.redshift_max or 2.0
    grid, cdf, distances = _redshift_sampler(reach, population.source_frame_time)
    m1, m2 = _source_masses(rng, population, count)
    redshift = np.interp(rng.uniform(size=count), cdf, grid)
    distance = np.interp(redshift, grid, distances)
    spins = _spins(rng, population, count)
    sources = []
    for i in range(count):
        sources.append({
            "mass_1": float(m1[i] * (1 + redshift[i])), "mass_2": float(m2[i] * (1 + redshift[i])),
            "luminosity_distance": float(distance[i]), "redshift": float(redshift[i]),
            **{name: float(values[i]) for name, values in spins.items()},
            "theta_jn": float(np.arccos(rng.uniform(-1, 1))), "phase": float(rng.uniform(0, 2 * np.pi)),
            "ra": float(rng.uniform(0, 2 * np.pi)), "dec": float(np.arcsin(rng.uniform(-1, 1))),
            "psi": float(rng.uniform(0, np.pi)), "geocent_time": float(geocent_time),
        })
    return sources


def truncation_warning(redshifts, redshift_max: float, share: float = 0.01) -> str | None:
    """One sentence when more than ``share`` of the detected events lie within 10% of ``redshift_max``."""
    redshifts = np.asarray(redshifts, dtype=float)
    if not redshifts.size:
        return None
    near = float(np.mean(redshifts >= 0.9 * redshift_max))
    if near <= share:
        return None
    return (f"{near:.1%} of the detected events lie within 10% of the population's redshift_max = {redshift_max:g}: "
            "the range truncates the detectable population, so raise redshift_max")


def read_table(path: str, geocent_time: float, what: str = "injection table") -> list:
    """Explicit sources from CSV with bilby parameter names (spins default to zero); ``what`` names the table in
    messages. Text outside a 'label' column, missing columns (all named at once) and unphysical values are refused
    in one sentence."""
    import pandas as pd

    if not os.path.isfile(path):
        raise MemoryInferError(f"{what} '{path}' does not exist")
    name = os.path.basename(path)
    try:
        frame = pd.read_csv(path)
    except (ValueError, OSError):
        raise MemoryInferError(f"{what} '{name}' is not a readable CSV") from None
    text = [c for c in frame.columns if c != "label" and not pd.api.types.is_numeric_dtype(frame[c])]
    if text:
        column = frame[text[0]]
        first = column[pd.to_numeric(column, errors="coerce").isna() & column.notna()]
        example = f" (row {first.index[0] + 1}: {first.iloc[0]!r})" if len(first) else ""
        raise MemoryInferError(f"{what} '{name}' has text in the column{'s' if len(text) > 1 else ''} "
                               f"{', '.join(repr(str(c)) for c in text)}{example}; every column but 'label' must "
                               "hold numbers")
    missing = [k for k in SOURCE_PARAMETERS if k not in frame.columns and k not in ZERO_DEFAULTS and k != "geocent_time"]
    if missing:
        raise MemoryInferError(f"{what} '{name}' lacks the column{'s' if len(missing) > 1 else ''} "
                               f"{', '.join(repr(m) for m in missing)}")
    sources = []
    for row, values in enumerate(frame.to_dict("records"), 1):
        source = dict(ZERO_DEFAULTS, geocent_time=geocent_time)
        source.update({k: float(v) for k, v in values.items() if k != "label"})
        check_physical(source, f"row {row} of {what} '{name}'")
        sources.append(source)
    if not sources:
        raise MemoryInferError(f"{what} '{name}' holds no rows")
    return sources
