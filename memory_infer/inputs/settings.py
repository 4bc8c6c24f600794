"""Typed settings: each section of a run's configuration as a frozen dataclass, built once from the checked TOML
mapping (:mod:`.config` checks it key by key). Every default of a setting is defined here, once, except the
waveform stage's own: the approximant, band edge and reference frequency come from :mod:`memory_infer.waveform.models`,
and ``ModelSettings.memory_taper`` repeats ``waveform.options.DEFAULT_TAPER_DURATION`` (a test compares them). Not
settings, and defined where they are used: the source parameters fixed at zero when absent
(``inputs.checks.ZERO_DEFAULTS``) and a catalog run's own methods (``inputs.release_list.BUILT_IN_DEFAULTS``).
The code below the inputs stage takes these objects, never the mapping. A changed value is a new object
(:func:`dataclasses.replace`), with its origin recorded in ``origins`` or the model's ``*_from`` fields.
"""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field

from ..waveform.models import DEFAULT_APPROXIMANT, DEFAULT_MINIMUM_FREQUENCY, DEFAULT_REFERENCE_FREQUENCY

FREE_AMPLITUDE_LIMITS = (-5.0, 5.0)  # the uniform prior of A when it is free
AMPLITUDE_GRID = (-4.0, 4.0, 81)  # the A curve's grid: lowest, highest, points (-1, 0, 1 are always added)
DEFAULT_POST_TRIGGER = 2.0  # s after the trigger that a segment read from a release ends, when the release omits it


@dataclass(frozen=True)
class EventSettings:
    label: str
    control: bool = False


@dataclass(frozen=True)
class DataSettings:
    """The segment and where its strain comes from; ``directory`` is where relative file names are taken from."""

    kind: str = "simulated"
    detectors: tuple = ("H1", "L1")
    noise_curve: str = "ligo-design"
    noise_curves: dict = field(default_factory=dict)
    noise: str = "gaussian"
    seed: int = 1
    duration: float = 4.0
    sampling_rate: float = 2048.0
    start_time: float = 1_000_000_000.0
    minimum_frequency: float = DEFAULT_MINIMUM_FREQUENCY
    maximum_frequency: float | None = None
    files: dict = field(default_factory=dict)
    window_roll_off: float = 0.2
    resampling: str = "fir with margin"  # or "lal" / "gwpy": the segment alone, as bilby_pipe resamples it
    directory: str = "."


@dataclass(frozen=True)
class ModelSettings:
    """The waveform model; ``approximant`` and ``reference_frequency`` are None until resolved
    (:func:`memory_infer.inputs.event_inputs.resolve_model`), each with where it came from."""

    approximant: str | None = None
    reference_frequency: float | None = None
    minimum_frequency: float | None = None  # the model's start; the band's lower edge when None
    early_inspiral_memory: bool = True
    memory_taper: float = 1.0
    modes: tuple | None = None
    approximant_from: str = "configuration"
    reference_frequency_from: str = "configuration"

    def waveform_arguments(self, data: DataSettings) -> dict:
        """The waveform generator's arguments (:mod:`memory_infer.waveform.generator`) for the resolved model."""
        arguments = {
            "waveform_approximant": self.approximant,
            "reference_frequency": float(self.reference_frequency or DEFAULT_REFERENCE_FREQUENCY),
            "minimum_frequency": float(self.minimum_frequency or data.minimum_frequency),
            "early_inspiral_memory": bool(self.early_inspiral_memory),
            "memory_taper_duration": float(self.memory_taper),
            "catch_waveform_errors": True,
        }
        if self.modes:
            arguments["mode_list"] = [tuple(int(x) for x in mode) for mode in self.modes]
        if data.maximum_frequency is not None:  # bilby's model takes it too (it sets a time-domain model's step)
            arguments["maximum_frequency"] = float(data.maximum_frequency)
        return arguments


@dataclass(frozen=True)
class LikelihoodSettings:
    distance_marginalization: bool = False
    time_marginalization: bool = False
    phase_marginalization: bool = False  # refused when true (:data:`memory_infer.inputs.config.PHASE_REFUSAL`)


@dataclass(frozen=True)
class SamplerSettings:
    live_points: int = 200
    accepted_walks: int = 30
    pool: int = 1
    seed: int = 1
    checkpoint_seconds: float = 60.0
    progress: bool = True


@dataclass(frozen=True)
class EvidenceSettings:
    methods: tuple = ("nested", "reweighting", "fast")
    nested_hypotheses: tuple = ("memory", "none", "flipped", "free")
    reweight_from: tuple = ("none", "memory")
    samples_file: str | None = None
    samples_amplitude: float = 0.0
    amplitude_grid: tuple = AMPLITUDE_GRID
    free_amplitude_limits: tuple = FREE_AMPLITUDE_LIMITS
    minimum_effective_samples: float = 50.0
    max_reweight_samples: int = 2000
    samples_log_likelihood: str = "log_likelihood"
    samples_reference_frequency: float | None = None
    samples_waveform_model: str | None = None
    mismatch_threshold: float = 0.1
    samples_analysis: str | None = None

    def grid(self):
        """The evidence grid of A, always holding -1, 0 and 1 exactly."""
        low, high, points = self.amplitude_grid
        return grid_with_hypotheses(low, high, points)


@dataclass(frozen=True)
class CalibrationSettings:
    """The detectors' calibration model; ``envelopes`` holds a release's own envelope tables (detector -> 7-column
    array), written to files only when the model is attached."""

    kind: str = "none"
    amplitude_sigma: float = 0.0
    phase_sigma: float = 0.0
    envelope_files: dict = field(default_factory=dict)
    correction_type: str = "data"
    spline_nodes: int = 10
    minimum_frequency: float | None = None
    maximum_frequency: float | None = None
    envelopes: dict | None = None

    def described(self) -> dict:
        """The settings as a result records them (a release's tables named, not copied)."""
        return {f.name: getattr(self, f.name) for f in dataclasses.fields(self) if f.name != "envelopes"}


@dataclass(frozen=True)
class AnalysisSettings:
    """One event's analysis. ``injection`` and ``priors`` are the tables as written (checked where they are
    built); ``given`` names the keys the user wrote per section (settings left out may come from a release);
    ``origins`` says where each segment and model setting came from once resolved."""

    event: EventSettings
    data: DataSettings = DataSettings()
    model: ModelSettings = ModelSettings()
    likelihood: LikelihoodSettings = LikelihoodSettings()
    sampler: SamplerSettings = SamplerSettings()
    evidence: EvidenceSettings = EvidenceSettings()
    calibration: CalibrationSettings = CalibrationSettings()
    injection: dict = field(default_factory=dict)
    priors: dict = field(default_factory=dict)
    given: dict = field(default_factory=dict)
    origins: dict = field(default_factory=dict)

    SECTIONS = {"event": EventSettings, "data": DataSettings, "model": ModelSettings,
                "likelihood": LikelihoodSettings, "sampler": SamplerSettings, "evidence": EvidenceSettings,
                "calibration": CalibrationSettings}

    @classmethod
    def from_checked(cls, config: dict, directory: str = ".", given: dict | None = None) -> "AnalysisSettings":
        """The settings from a mapping that :func:`memory_infer.inputs.config.evidence_config` checked."""
        sections = {name: typed(kind, config[name]) for name, kind in cls.SECTIONS.items()}
        sections["data"] = dataclasses.replace(sections["data"], directory=directory)
        return cls(**sections, injection=dict(config["injection"]), priors=dict(config["priors"]),
                   given=dict(given or {}))

    def as_mapping(self) -> dict:
        """The settings as configuration sections (for the provenance a result records)."""
        out = {name: plain(dataclasses.asdict(getattr(self, name))) for name in self.SECTIONS}
        out["calibration"].pop("envelopes", None)
        out["data"].pop("directory", None)
        out["injection"], out["priors"] = dict(self.injection), dict(self.priors)
        return out


def typed(kind, section: dict):
    """A settings dataclass from one checked section: lists become tuples (lists of lists, tuples of tuples)."""
    names = {f.name for f in dataclasses.fields(kind)}
    return kind(**{key: frozen(value) for key, value in section.items() if key in names})


def frozen(value):
    if isinstance(value, list):
        return tuple(frozen(item) for item in value)
    return value


def plain(value):
    if isinstance(value, (list, tuple)):
        return [plain(item) for item in value]
    if isinstance(value, dict):
        return {key: plain(item) for key, item in value.items()}
    return value


def defaults_of(kind) -> dict:
    """Each field's default (``None`` marks a required one), for the checking schema."""
    out = {}
    for item in dataclasses.fields(kind):
        if item.default is not dataclasses.MISSING:
            out[item.name] = item.default
        elif item.default_factory is not dataclasses.MISSING:
            out[item.name] = item.default_factory()
        else:
            out[item.name] = None
    return out


def grid_with_hypotheses(low, high, points):
    """A uniform grid of A from ``low`` to ``high`` that also holds -1, 0 and 1 exactly."""
    import numpy as np

    grid = np.linspace(float(low), float(high), int(points))
    return np.unique(np.round(np.concatenate([grid, [-1.0, 0.0, 1.0]]), 12))


# ---------------------------------------------------------------- campaigns

@dataclass(frozen=True)
class RecoverySettings:
    """A campaign's full recoveries: which source parameters are free, and the short nested runs' size."""

    free_parameters: tuple = ("phase", "psi", "luminosity_distance", "theta_jn", "geocent_time")
    live_points: int = 50
    accepted_walks: int = 10
    minimum_effective_samples: float = 30.0


@dataclass(frozen=True)
class ClusterSettings:
    kind: str = "local"
    scheduler_address: str | None = None
    jobs: int = 2
    cores: int = 1
    memory: str = "2GB"
    walltime: str = "02:00:00"
    queue: str | None = None
    job_logs: str | None = None


@dataclass(frozen=True)
class CampaignSettings:
    """An injection campaign; ``data`` and ``model`` are the segment and model every injection shares (its
    reference frequency is the band's lower edge), ``geocent_time`` the sources' time when a table leaves it out."""

    label: str = "campaign"
    injections: str | None = None
    count: int = 100
    seed: int = 1
    network: str = "hlv-design"
    noise: str = "gaussian"
    injected_amplitude: float | str = 1.0
    method: str = "fast"
    detection_snr: float = 12.0
    threshold: float = 8.0
    bootstrap: int = 1000
    free_amplitude_limits: tuple = FREE_AMPLITUDE_LIMITS
    geocent_time: float = 1_000_000_002.0
    data: DataSettings = DataSettings()
    model: ModelSettings = ModelSettings(approximant=DEFAULT_APPROXIMANT)
    recovery: RecoverySettings = RecoverySettings()
    cluster: ClusterSettings = ClusterSettings()
    directory: str = "."

    @property
    def injections_path(self) -> str:
        import os

        return os.path.join(self.directory, self.injections)
