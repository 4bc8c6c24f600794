"""The catalog's population models as typed blocks: what ``catalog.population_models.compare_models`` computes and
the catalog page reads. The JSON keeps its layout (each model under its own name, each parameter's summary under
the parameter's name); a field at :data:`.base.ABSENT` is a key the model does not write."""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass

from ..common.errors import MemoryInferError
from .base import ABSENT, Block, json_ready


@dataclass(frozen=True)
class ParameterSummary(Block):
    """One parameter's posterior: median and equal-tailed 90% interval, the 90% upper bound when the model gives
    it, and each number's Monte-Carlo error (standard deviation over replicas; None without replicas)."""

    median: float
    lower_90: float
    upper_90: float
    upper_bound_90: float = ABSENT
    zero_in_highest_density_90: bool = ABSENT  # a spread: whether sigma = 0 is inside the 90% highest-density region
    median_err: float | None = ABSENT
    lower_90_err: float | None = ABSENT
    upper_90_err: float | None = ABSENT
    upper_bound_90_err: float | None = ABSENT


@dataclass(frozen=True)
class SpreadFigure(Block):
    """The joint posterior density of (mu, sigma) on a grid (over its largest value), and sigma's marginal."""

    mu: list
    sigma: list
    density: list
    sigma_density: list
    note: str


@dataclass(frozen=True)
class PopulationModel(Block):
    """One population model: what it asks, its prior, its evidence against no memory and against the first
    (shared) model with errors, and its parameters' summaries (``parameters``: name and summary, in order)."""

    title: str
    question: str
    parameters_names: list
    prior: str
    ln_bf_vs_no_memory: float
    ln_bf_vs_no_memory_err: float | None
    ln_bf_vs_shared: float
    ln_bf_vs_shared_err: float | None
    parameters: tuple = ()
    sigma_max: float = ABSENT  # a spread model: the upper end of sigma's uniform prior
    figure: SpreadFigure = ABSENT

    FIXED = ("title", "question", "parameters_names", "prior", "ln_bf_vs_no_memory", "ln_bf_vs_no_memory_err",
             "ln_bf_vs_shared", "ln_bf_vs_shared_err")

    def summary(self, name: str) -> ParameterSummary:
        return dict(self.parameters)[name]

    def to_dict(self) -> dict:
        out = {key: json_ready(getattr(self, key)) for key in self.FIXED}
        out.update((name, summary.to_dict()) for name, summary in self.parameters)
        out.update((key, json_ready(value)) for key in ("sigma_max", "figure")
                   if (value := getattr(self, key)) is not ABSENT)
        return out

    @classmethod
    def from_dict(cls, data: dict):
        if isinstance(data, cls):
            return data
        missing = [key for key in cls.FIXED if key not in data]
        if missing:
            raise MemoryInferError(f"a result's population model lacks the key '{missing[0]}'")
        parameters = tuple((name, ParameterSummary.from_dict(data[name])) for name in data
                           if name not in cls.FIXED and name not in ("sigma_max", "figure"))
        figure = data.get("figure", ABSENT)
        return cls(**{key: data[key] for key in cls.FIXED}, parameters=parameters,
                   sigma_max=data.get("sigma_max", ABSENT),
                   figure=figure if figure is ABSENT else SpreadFigure.from_dict(figure))


@dataclass(frozen=True)
class PopulationModels(Block):
    """Every population model run on a catalog (``entries``: name and model, in ``models`` order), how, and the
    note on the grid's resolution; or, with no model run, ``note`` saying why. Empty for a catalog written before
    population models existed."""

    models: list = ABSENT
    note: str = ABSENT
    events: int = ABSENT
    replicas: int = ABSENT
    method: str = ABSENT
    entries: tuple = ()
    resolution_note: str = ABSENT

    def model(self, name: str) -> PopulationModel | None:
        return dict(self.entries).get(name)

    def to_dict(self) -> dict:
        out = {}
        for item in dataclasses.fields(self):
            if item.name == "entries":
                out.update((name, model.to_dict()) for name, model in self.entries)
            elif (value := getattr(self, item.name)) is not ABSENT:
                out[item.name] = json_ready(value)
        return out

    @classmethod
    def from_dict(cls, data: dict):
        if isinstance(data, cls):
            return data
        if not isinstance(data, dict):
            raise MemoryInferError("a result's population block is not a JSON object")
        names = list(data.get("models") or [])
        known = {item.name for item in dataclasses.fields(cls)} - {"entries"}
        unknown = [key for key in data if key not in known and key not in names]
        if unknown:
            raise MemoryInferError(f"a result's population block holds the unknown key '{unknown[0]}'")
        return cls(**{key: value for key, value in data.items() if key in known},
                   entries=tuple((name, PopulationModel.from_dict(data[name])) for name in names))

