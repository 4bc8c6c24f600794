"""The list of releases a catalog run works through: from a catalog file (TOML) or from a folder of releases and
strain files named as the open-data archive names them. Each event becomes a :class:`ReleaseEntry`: its evidence
configuration mapping, or the one sentence saying why it cannot run (the mapping itself is checked, in the
command's own process, before any event runs: :func:`memory_infer.catalog.release_runs.plan_events`).

Catalog file::

    [catalog]                 # optional
    name = "my catalog"

    [defaults]                # any event-configuration sections, shared by every event
    evidence = { methods = ["reweighting"] }

    [cluster]                 # optional: where events run, as for campaigns (kind = "slurm", jobs, cores, ...)

    [[events]]
    label = "EV01"
    release = "releases/EV01.h5"          # a catalog posterior release (HDF5, pesummary's layout)
    analysis = "C01:IMRPhenomTHM"          # optional when the release holds one analysis
    strain = { H1 = "H-H1_GWOSC_4KHZ_R1-1000000000-32.hdf5", L1 = "..." }
    psd = "release"                        # optional: "release" or "off_source" (default: the release's if it
                                           # holds one for every detector, else Welch on the strain file)
    overrides = { data = { duration = 8.0 } }   # optional, any event-configuration sections
"""
from __future__ import annotations

import copy
import glob
import os
import re
from dataclasses import dataclass, field

from ..common.errors import MemoryInferError
from .config import load_toml

CATALOG_SECTIONS = ("catalog", "defaults", "events", "cluster")
EVENT_KEYS = ("label", "release", "analysis", "strain", "psd", "overrides")
BUILT_IN_DEFAULTS = {"evidence": {"methods": ["reweighting"]}}  # reweighting needs no priors
STRAIN_NAME = re.compile(r"^([A-Z])-([A-Z][A-Z0-9])_[^/]*-(\d+)-(\d+)\.(hdf5|h5|gwf|txt)$")
EVENT_NAME = re.compile(r"(GW\d{6}(?:_\d{6})?|S\d{6}[a-z]+)")


@dataclass(frozen=True)
class ReleaseEntry:
    """One event of a release list: its label and evidence-configuration mapping (paths absolute), or, when it
    cannot run, ``refused``: one sentence saying why (its mapping then empty)."""

    label: str
    mapping: dict = field(default_factory=dict)
    refused: str = ""


@dataclass(frozen=True)
class ReleaseList:
    """A catalog run's events in order, its name, and its raw ``[cluster]`` section (checked by the command)."""

    name: str
    entries: tuple
    cluster: dict = field(default_factory=dict)


def _merge(base: dict, extra: dict) -> dict:
    out = copy.deepcopy(base)
    for key, value in extra.items():
        if isinstance(value, dict) and isinstance(out.get(key), dict):
            out[key] = _merge(out[key], value)
        else:
            out[key] = copy.deepcopy(value)
    return out


def _absolute(directory: str, path: str) -> str:
    return path if os.path.isabs(path) else os.path.normpath(os.path.join(directory, path))


def event_mapping(entry: dict, defaults: dict, directory: str, where: str) -> dict:
    """The evidence-configuration mapping of one catalog entry (paths made absolute)."""
    from .readers import read_release

    for key in entry:
        if key not in EVENT_KEYS:
            raise MemoryInferError(f"unknown key '{key}' in {where}; known: {', '.join(EVENT_KEYS)}")
    for key in ("label", "release", "strain"):
        if key not in entry:
            raise MemoryInferError(f"{where} needs '{key}'")
    strain = entry["strain"]
    if not isinstance(strain, dict) or not strain or not all(isinstance(v, str) for v in strain.values()):
        raise MemoryInferError(f"'strain' in {where} must be a table of detector = \"file\"")
    if entry.get("psd", "auto") not in ("auto", "release", "off_source"):
        raise MemoryInferError(f"'psd' in {where} must be \"release\" or \"off_source\"")
    raw = _merge(BUILT_IN_DEFAULTS, defaults)
    raw = _merge(raw, entry.get("overrides") or {})
    release = _absolute(directory, entry["release"])
    psd = entry.get("psd", "auto")
    if psd == "auto":
        try:
            held = read_release(release, entry.get("analysis"))["psds"]
        except MemoryInferError:
            held = {}  # the event's own run says what is wrong with the release
        psd = "release" if all(d in held for d in strain) else "off_source"
    files = {}
    for detector, path in strain.items():
        files[detector] = {"strain": _absolute(directory, path)}
        files[detector]["psd_from_samples" if psd == "release" else "psd_off_source"] = True
    raw.setdefault("event", {})["label"] = str(entry["label"])
    raw.setdefault("data", {}).update({"kind": "files", "files": files})
    evidence = raw.setdefault("evidence", {})
    evidence["samples_file"] = release
    if entry.get("analysis"):
        evidence["samples_analysis"] = str(entry["analysis"])
    return raw


def load_catalog_file(path: str) -> ReleaseList:
    """The release list of a catalog TOML file."""
    content = load_toml(path)
    source = os.path.basename(path)
    for section in content:
        if section not in CATALOG_SECTIONS:
            raise MemoryInferError(f"unknown section [{section}] in {source}; known: {', '.join(CATALOG_SECTIONS)}")
    entries = content.get("events")
    if not isinstance(entries, list) or not entries:
        raise MemoryInferError(f"{source} lists no [[events]]")
    defaults = content.get("defaults") or {}
    if not isinstance(defaults, dict):
        raise MemoryInferError(f"[defaults] in {source} must be a table")
    directory = os.path.dirname(os.path.abspath(path))
    events, seen = [], set()
    for number, entry in enumerate(entries, start=1):
        where = f"event {number} of {source}"
        if not isinstance(entry, dict):
            raise MemoryInferError(f"{where} must be a table")
        label = str(entry.get("label", ""))
        if label in seen:
            raise MemoryInferError(f"event label '{label}' appears twice in {source}")
        seen.add(label)
        events.append(ReleaseEntry(label, event_mapping(entry, defaults, directory, where)))
    cluster = content.get("cluster") or {}
    if not isinstance(cluster, dict):
        raise MemoryInferError(f"[cluster] in {source} must be a table")
    name = str((content.get("catalog") or {}).get("name", os.path.splitext(source)[0]))
    return ReleaseList(name, tuple(events), cluster)


def release_label(path: str) -> str:
    """An event's label from its release's file name (the event name in it, else the file's stem)."""
    stem = os.path.splitext(os.path.basename(path))[0]
    found = EVENT_NAME.search(stem)
    return found.group(1) if found else stem


def load_catalog_folder(folder: str) -> ReleaseList:
    """The release list of a folder of releases and strain files named as published
    (``H-H1_GWOSC_4KHZ_R1-<GPS start>-<duration>.hdf5``): each release takes the files covering its trigger time."""
    from .readers import is_release
    from .release_settings import read_release_settings

    paths = sorted(glob.glob(os.path.join(folder, "**", "*"), recursive=True))
    releases = [p for p in paths if os.path.isfile(p) and is_release(p)]
    if not releases:
        raise MemoryInferError(f"folder '{folder}' holds no catalog release (HDF5 with posterior_samples)")
    strain = []
    for path in paths:
        match = STRAIN_NAME.match(os.path.basename(path))
        if match and path not in releases:
            strain.append((match.group(2), float(match.group(3)), float(match.group(4)), path))
    events = []
    for release in releases:
        label = release_label(release)
        where = f"release '{os.path.basename(release)}'"
        try:
            found = read_release_settings(release)
        except MemoryInferError as error:
            events.append(ReleaseEntry(label, refused=str(error)))
            continue
        if "trigger_time" not in found:
            events.append(ReleaseEntry(label, refused=f"{where} gives no trigger time"))
            continue
        trigger = float(found["trigger_time"][0])
        files = {}
        for detector, start, duration, path in sorted(strain, key=lambda item: item[2]):  # shortest file first
            if start <= trigger < start + duration and detector not in files:
                files[detector] = os.path.relpath(path, folder)
        if not files:
            events.append(ReleaseEntry(label, refused=f"no strain file in the folder covers the trigger time "
                                                      f"{trigger:.3f} of {where}"))
            continue
        missing = uncovered_detector(found.get("detectors", (None,))[0], files, strain, trigger, where, folder)
        if missing:  # never run on fewer detectors than the release analysed without a word
            events.append(ReleaseEntry(label, refused=missing))
            continue
        entry = {"label": label, "release": os.path.relpath(release, folder), "strain": files}
        events.append(ReleaseEntry(label, event_mapping(entry, {}, os.path.abspath(folder), where)))
    labels = [event.label for event in events]
    duplicates = sorted({label for label in labels if labels.count(label) > 1})
    if duplicates:
        named = "; ".join(f"{label} in " + " and ".join(f"'{os.path.relpath(release, folder)}'"
                                                       for release, other in zip(releases, events)
                                                       if other.label == label) for label in duplicates)
        raise MemoryInferError(f"several releases in '{folder}' hold the same event ({named}); keep one release per "
                               "event in the folder, or list the events in a catalog file with labels of their own")
    return ReleaseList(os.path.basename(os.path.normpath(folder)), tuple(events))


NEARBY = 64.0  # s: a detector's file ending or starting this close to a trigger is taken as meant for that event


def uncovered_detector(analysed, files: dict, strain: list, trigger: float, where: str, folder: str) -> str | None:
    """One sentence when a detector the release analysed (``analysed``; when the release does not say, a detector
    with a file within :data:`NEARBY` seconds of the trigger) has no strain file covering the trigger time."""
    nearby = {detector for detector, start, duration, _ in strain
              if start - NEARBY <= trigger < start + duration + NEARBY}
    for detector in sorted(set(analysed or nearby) - set(files)):
        near = sorted((abs(trigger - (start + duration / 2)), path, start, duration)
                      for name, start, duration, path in strain if name == detector)
        said = f"{where} analysed {detector}" if analysed else f"the folder holds {detector} strain near {where}"
        if near:
            _, path, start, duration = near[0]
            return (f"{said}, but no {detector} strain file in the folder covers its trigger time "
                    f"{trigger:.3f} (the nearest, '{os.path.relpath(path, folder)}', holds {start:.0f} to "
                    f"{start + duration:.0f}); add the file that covers it, or list the event in a catalog file "
                    "with the detectors to use")
        return (f"{where} analysed {detector}, but the folder holds no {detector} strain file; add the file that "
                "covers its trigger time, or list the event in a catalog file with the detectors to use")
    return None


def load_release_list(path: str) -> ReleaseList:
    """The release list of a catalog file or of a folder of releases and strain files."""
    if os.path.isdir(path):
        return load_catalog_folder(path)
    return load_catalog_file(path)
