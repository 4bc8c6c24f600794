"""What the source model is asked for, read once at bilby's boundary: the binary, the source options, and the
inputs of one mode generation; frozen and hashable, so each is its own cache key. Every default lives here."""
from __future__ import annotations

from dataclasses import dataclass, field, fields

DEFAULT_APPROXIMANT = "IMRPhenomTHM"
DEFAULT_MINIMUM_FREQUENCY = 20.0  # Hz, the analysis band's lower edge
DEFAULT_REFERENCE_FREQUENCY = 20.0  # Hz, when neither the configuration nor the samples file gives one
DEFAULT_TAPER_DURATION = 1.0  # s, memory taper after the ringdown
# bilby's own waveform arguments passed on untouched to its lal_binary_black_hole (see .conditioning)
BILBY_ARGUMENTS = ("catch_waveform_errors", "pn_spin_order", "pn_tidal_order", "pn_phase_order", "pn_amplitude_order",
                   "mode_array", "lal_waveform_dictionary")


@dataclass(frozen=True)
class Binary:
    """bilby's binary-black-hole parameters (solar masses, Mpc, radians); missing ones are 0."""

    mass_1: float = 0.0
    mass_2: float = 0.0
    luminosity_distance: float = 0.0
    a_1: float = 0.0
    a_2: float = 0.0
    tilt_1: float = 0.0
    tilt_2: float = 0.0
    phi_12: float = 0.0
    phi_jl: float = 0.0
    theta_jn: float = 0.0
    phase: float = 0.0

    @classmethod
    def of(cls, parameters: dict) -> "Binary":
        return cls(**{f.name: float(parameters.get(f.name, 0.0)) for f in fields(cls)})


@dataclass(frozen=True)
class SourceOptions:
    """The source model's waveform arguments (bilby's names in :meth:`of`)."""

    approximant: str = DEFAULT_APPROXIMANT
    reference_frequency: float = DEFAULT_REFERENCE_FREQUENCY  # Hz, where the spins are given
    minimum_frequency: float = DEFAULT_MINIMUM_FREQUENCY  # Hz
    maximum_frequency: float | None = None  # Hz, None: the data's Nyquist frequency
    taper_duration: float = DEFAULT_TAPER_DURATION  # s, the memory's taper after the ringdown
    early_inspiral: bool = True  # add the memory of the inspiral before the model's first sample
    mode_list: tuple | None = None  # ((l, m), ...) restricting the modes
    include_memory: bool = True
    # bilby's other arguments (BILBY_ARGUMENTS given), for its own model only; fixed per generator, so not in the key
    bilby: tuple = field(default=(), compare=False)

    @classmethod
    def of(cls, parameters: dict) -> "SourceOptions":
        """From bilby's waveform arguments: ``waveform_approximant``, ``reference_frequency``, ``minimum_frequency``,
        ``maximum_frequency``, ``memory_taper_duration``, ``early_inspiral_memory``, ``mode_list``,
        ``include_memory``."""
        maximum, modes = parameters.get("maximum_frequency"), parameters.get("mode_list")
        return cls(approximant=parameters.get("waveform_approximant", DEFAULT_APPROXIMANT),
                   reference_frequency=float(parameters.get("reference_frequency", DEFAULT_REFERENCE_FREQUENCY)),
                   minimum_frequency=float(parameters.get("minimum_frequency", DEFAULT_MINIMUM_FREQUENCY)),
                   maximum_frequency=None if maximum is None else float(maximum),
                   taper_duration=float(parameters.get("memory_taper_duration", DEFAULT_TAPER_DURATION)),
                   early_inspiral=bool(parameters.get("early_inspiral_memory", True)),
                   mode_list=tuple(tuple(int(x) for x in mode) for mode in modes) if modes else None,
                   include_memory=bool(parameters.get("include_memory", True)),
                   bilby=tuple((k, parameters[k]) for k in BILBY_ARGUMENTS if parameters.get(k) is not None))

    def bilby_arguments(self) -> dict:
        """The waveform arguments of bilby's ``lal_binary_black_hole`` for these options."""
        arguments = {"waveform_approximant": self.approximant, "reference_frequency": self.reference_frequency,
                     "minimum_frequency": self.minimum_frequency}
        if self.maximum_frequency is not None:
            arguments["maximum_frequency"] = self.maximum_frequency
        arguments.update(self.bilby)
        if self.mode_list and "mode_array" not in arguments:
            arguments["mode_array"] = [list(mode) for mode in self.mode_list]
        return arguments


@dataclass(frozen=True)
class ModesRequest:
    """One generation of modes at 1 Mpc (distance only rescales them, and for aligned spins the angles only re-sum
    them): solar masses, Hz, s, Cartesian spins in lalsimulation's frame. ``observer`` is (inclination, phase) for
    models whose modes depend on them (precessing frequency-domain models), else ()."""

    approximant: str
    mass_1: float
    mass_2: float
    delta_t: float
    minimum_frequency: float
    spin_1: tuple
    spin_2: tuple
    reference_frequency: float
    mode_list: tuple | None = None
    finer_for_memory: bool = True
    observer: tuple = ()
