"""Files in and out: atomic writes (temporary name, then rename) and JSON with provenance."""
from __future__ import annotations

import contextlib
import json
import os
import platform
import sys
import tempfile

import numpy as np


@contextlib.contextmanager
def atomic_path(path: str):
    """Yield a temporary path beside ``path``; rename it onto ``path`` only if the block succeeds."""
    directory = os.path.dirname(os.path.abspath(path))
    os.makedirs(directory, exist_ok=True)
    handle, temporary = tempfile.mkstemp(prefix=".partial-", suffix=os.path.splitext(path)[1], dir=directory)
    os.close(handle)
    try:
        yield temporary
        os.replace(temporary, path)
    finally:
        if os.path.exists(temporary):
            os.remove(temporary)


class _Encoder(json.JSONEncoder):
    def default(self, value):
        if isinstance(value, np.generic):
            return value.item()
        if isinstance(value, np.ndarray):
            return value.tolist()
        if isinstance(value, complex):
            return [value.real, value.imag]
        return super().default(value)


def write_json(path: str, data: dict) -> None:
    with atomic_path(path) as temporary:
        with open(temporary, "w") as handle:
            json.dump(data, handle, indent=2, cls=_Encoder, allow_nan=True)
            handle.write("\n")


def provenance(configuration=None, seed=None) -> dict:
    """Versions, platform, command line, configuration and seed of a run."""
    import importlib.metadata as metadata

    versions = {}
    for package in ("memory_infer", "numpy", "scipy", "bilby", "dynesty", "lalsuite", "pandas"):
        try:
            versions[package] = metadata.version(package)
        except metadata.PackageNotFoundError:
            versions[package] = None
    return {"versions": versions, "python": sys.version.split()[0], "platform": platform.platform(),
            "command": sys.argv, "configuration": configuration, "seed": seed}
