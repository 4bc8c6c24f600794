"""Files out: atomic writes (temporary name, then rename), JSON with numpy values, provenance of a run.

A failed run never half-writes an output: every file is written beside its final name and renamed
onto it only when complete. The finished file gets the permissions of any newly created file (0666 less the
process's umask, so 0644 under the usual 022), not the owner-only mode of a temporary file.
"""
from __future__ import annotations

import contextlib
import json
import os
import platform
import sys
import tempfile

import numpy as np

from .errors import MemoryInferError


def current_umask() -> int:
    """The process's umask, read without changing it where Linux reports it (``/proc/self/status``)."""
    try:
        with open("/proc/self/status") as handle:
            for line in handle:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    mask = os.umask(0o022)  # elsewhere: set and restore at once
    os.umask(mask)
    return mask


def output_folder(path: str, option: str = "--outdir") -> str:
    """Make the output folder ``path`` (and its parents) if needed; one sentence when a file stands in its place or
    it cannot be made. Returns it."""
    try:
        os.makedirs(path, exist_ok=True)
    except FileExistsError:
        raise MemoryInferError(f"{option} '{path}' names a file, not a folder; give a folder") from None
    except NotADirectoryError:
        raise MemoryInferError(f"{option} '{path}' lies under a file, not a folder; give a folder") from None
    except OSError as error:
        raise MemoryInferError(f"{option} '{path}' cannot be made ({error.strerror})") from None
    return path


@contextlib.contextmanager
def atomic_path(path: str):
    """Yield a temporary path beside ``path``; rename it onto ``path`` only if the block succeeds, with the
    permissions the umask gives a new file (the block may write, replace or recreate the temporary file)."""
    directory = os.path.dirname(os.path.abspath(path))
    os.makedirs(directory, exist_ok=True)
    handle, temporary = tempfile.mkstemp(prefix=".partial-", suffix=os.path.splitext(path)[1], dir=directory)
    os.close(handle)
    try:
        yield temporary
        os.chmod(temporary, 0o666 & ~current_umask())
        os.replace(temporary, path)
    finally:
        if os.path.exists(temporary):
            os.remove(temporary)


def write_text(path: str, text: str) -> None:
    """Write ``text`` to ``path`` atomically."""
    with atomic_path(path) as temporary:
        with open(temporary, "w") as handle:
            handle.write(text)


class JSONEncoder(json.JSONEncoder):
    """JSON for numpy scalars and arrays, and complex numbers as [real, imaginary]."""

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
            json.dump(data, handle, indent=2, cls=JSONEncoder, allow_nan=True)
            handle.write("\n")


def read_json(path: str, what: str) -> dict:
    """A JSON object from ``path``; one sentence naming ``what`` if it is missing or unreadable."""
    try:
        with open(path) as handle:
            content = json.load(handle)
    except OSError:
        raise MemoryInferError(f"{what} '{path}' does not exist or cannot be read") from None
    except json.JSONDecodeError:
        raise MemoryInferError(f"{what} '{path}' is not valid JSON") from None
    if not isinstance(content, dict):
        raise MemoryInferError(f"{what} '{path}' does not hold a JSON object")
    return content


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
