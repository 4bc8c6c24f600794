"""Posterior-sample tables as users have them, made ready for reweighting.

bilby and the trade's other tools write the same binary in several parameterizations and with many extra
columns. :func:`usable_samples` keeps the numeric columns, drops a pandas index column, reads the run's settings
columns (``reference_frequency``, ``waveform_approximant``, ...) as metadata rather than parameters, and adds the
component masses and spins in bilby's standard parameterization from whatever the table carries, with bilby's
own conversion (``convert_to_lal_binary_black_hole_parameters``):

- masses from ``mass_1``/``mass_2``, ``chirp_mass`` with ``mass_ratio``, ``total_mass`` with ``mass_ratio``, or
  ``chirp_mass`` with ``symmetric_mass_ratio``;
- spins from ``a_i``/``tilt_i`` (or ``cos_tilt_i``), or aligned ``chi_i`` (then ``a_i = |chi_i|``, ``tilt_i`` 0
  or pi, ``phi_12 = phi_jl = 0``);
- ``theta_jn`` from ``cos_theta_jn``, or from ``iota`` when the spins are aligned (then the two are equal).

Columns already present are never overwritten.
"""
from __future__ import annotations

import numpy as np

SETTINGS_COLUMNS = ("reference_frequency", "minimum_frequency", "maximum_frequency", "waveform_approximant",
                    "sampling_frequency", "duration")
COMPLETED = ("mass_1", "mass_2", "a_1", "a_2", "tilt_1", "tilt_2", "phi_12", "phi_jl", "theta_jn")


def _is_index(name: str) -> bool:
    return str(name).startswith("Unnamed:") or str(name) in ("index", "level_0")


def usable_samples(frame):
    """(numeric table in bilby's standard parameterization, settings found in the table's own columns)."""
    import pandas as pd
    from bilby.gw.conversion import convert_to_lal_binary_black_hole_parameters

    settings = {}
    for name in SETTINGS_COLUMNS:
        if name in frame.columns:
            values = frame[name].dropna().unique()
            if len(values) == 1:
                value = values[0]
                settings[name] = value.decode() if isinstance(value, bytes) else (
                    float(value) if isinstance(value, (int, float, np.number)) else str(value))
    numeric = {}
    for name in frame.columns:
        if _is_index(name) or name in SETTINGS_COLUMNS:
            continue
        column = frame[name]
        if pd.api.types.is_bool_dtype(column) or not pd.api.types.is_numeric_dtype(column):
            continue
        if pd.api.types.is_complex_dtype(column):
            continue
        numeric[str(name)] = column.to_numpy(dtype=float)
    table = pd.DataFrame(numeric, index=pd.RangeIndex(len(frame)))
    missing = [name for name in COMPLETED if name not in table.columns]
    if missing and len(table):
        converted, _ = convert_to_lal_binary_black_hole_parameters(
            {name: table[name].to_numpy() for name in table.columns})
        if "theta_jn" in missing and "theta_jn" not in converted and "iota" in table.columns:
            # a spin of magnitude zero is aligned whatever tilt the conversion gave it (bilby gives pi/2 for chi = 0)
            aligned = all(np.all(np.isin(np.asarray(converted.get(f"tilt_{i}", 0.0)), (0.0, np.pi))
                                 | (np.asarray(converted.get(f"a_{i}", 0.0)) == 0.0))
                          for i in ("1", "2")) and not any(f"chi_{i}_in_plane" in table.columns for i in "12")
            if aligned:
                converted["theta_jn"] = table["iota"].to_numpy()
        spins_converted = any(name in converted for name in ("a_1", "a_2") if name in missing)
        for name in missing:
            if name in ("phi_12", "phi_jl") and not spins_converted:
                continue  # bilby's conversion sets them to 0 whenever absent; only aligned spins imply that
            if name in converted:
                table[name] = np.broadcast_to(np.asarray(converted[name], dtype=float), (len(table),)).copy()
    return table, settings
