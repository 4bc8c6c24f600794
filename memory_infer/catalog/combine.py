"""Catalog combination with consistent-sign bookkeeping (README, "Catalog").

Independent events multiply evidences, so ln Bayes factors add and their errors add in quadrature:
- consistent sign (general relativity): ``sum_i ln BF+_i``;
- wrong sign: ``sum_i ln BF-_i``;
- sign-agnostic: ``sum_i ln((BF+_i + BF-_i) / 2)`` (each event's sign unknown, independently);
- shared unknown sign: ``ln((prod_i BF+_i + prod_i BF-_i) / 2)`` (one sign for the whole catalog, unknown:
  the hedge against a sign-convention error);
- a shared amplitude A: ``p(A) ∝ pi(A) prod_i <L(A)/L(0)>_i`` on the events' common grid;
- population models of the amplitudes (shared, spread), each with its evidence (``population_models``).
"""
from __future__ import annotations

import glob
import json
import os
from collections import Counter
from dataclasses import asdict, dataclass, field

import numpy as np

from ..common.errors import MemoryInferError
from ..results.catalog import CatalogResult
from ..results.estimates import (RULE, cumulative_distribution, event_pair, normalized_density, prior_on_grid,
                                 sample_set_name)
from ..results.event import EventResult
from ..results.methods import description_of, preference_rank
from .consistency import expected_versus_observed, leave_one_out
from .population import PopulationSettings
from .population_models import compare_models, event_curves

CONSISTENCY_KEYS = ("amplitude_grid", "early_inspiral_memory", "free_amplitude_limits")
METHOD_RULE = f"per event, for A = +1 and A = -1 against 0 from one method: {RULE}"


@dataclass
class EventEntry:
    label: str
    ln_bf_plus: float | None
    ln_bf_minus: float | None
    ln_bf_err: float | None
    ln_bf_plus_err: float | None = None
    ln_bf_minus_err: float | None = None
    method: str = ""
    included: bool = True
    reason: str = ""
    memory_snr: float | None = None
    source: str = ""
    control: str = ""  # why the event is a control, kept out of the sums and shown apart ("" otherwise)
    injected_amplitude: float | None = None
    # how far this tool's ln L at A = 0 departs from the samples' own (median and spread, nats), when they carry one
    likelihood_mismatch_median: float | None = None
    likelihood_mismatch_spread: float | None = None
    effective_samples: float | None = None  # of the summed estimate, when it has them
    number_of_samples: int | None = None
    curve: dict | None = field(default=None, repr=False)

    def public(self) -> dict:
        data = asdict(self)
        data.pop("curve")
        return data


def find_records(inputs) -> list:
    """evidence.json paths from files and folders (searched recursively)."""
    paths = []
    for item in inputs:
        if os.path.isdir(item):
            found = sorted(glob.glob(os.path.join(item, "**", EventResult.FILE), recursive=True))
            if not found:
                raise MemoryInferError(f"folder '{item}' holds no {EventResult.FILE}")
            paths.extend(found)
        elif os.path.isfile(item):
            paths.append(item)
        else:
            raise MemoryInferError(f"input '{item}' is neither a file nor a folder")
    if not paths:
        raise MemoryInferError("no evidence.json inputs were given")
    return paths


def load_record(path: str) -> EventResult:
    """One per-event result, read through the results layer."""
    try:
        return EventResult.load(path)
    except MemoryInferError:
        raise MemoryInferError(f"'{path}' is not a readable evidence.json from memory-infer evidence") from None


def _as_result(record) -> EventResult:
    return record if isinstance(record, EventResult) else EventResult.from_json(record, "an event record")


def _select(record: EventResult, source: str) -> EventEntry:
    """ln BF+ and ln BF- of one event by the one rule (:func:`memory_infer.results.estimates.event_pair`), the
    same pair the event's headline and sign table show, named with its sample set."""
    label = str(record.event)
    methods = record.methods or []
    snr = None if record.memory_snr is None else record.memory_snr.value
    chosen = event_pair(methods)
    if chosen is not None and "flipped" not in chosen:
        return EventEntry(label, chosen["memory"].ln_bf, None, None, method=sample_set_name(chosen["memory"]),
                          included=False, reason="no sample set holds ln BF₋ (A = -1 vs 0) beside ln BF₊",
                          memory_snr=snr, source=source)
    if chosen is not None:
        plus, minus = chosen["memory"], chosen["flipped"]
        curve = record.amplitude_curve if description_of(plus.family).with_curve else None
        return EventEntry(label, plus.ln_bf, minus.ln_bf, plus.ln_bf_err, plus.ln_bf_err, minus.ln_bf_err,
                          sample_set_name(plus), memory_snr=snr, source=source,
                          curve=None if curve is None else curve.to_dict())
    unreliable = next((m for m in methods if not m.reliable and m.numerator == "memory"
                       and preference_rank(m.family) is not None), None)
    if unreliable is not None:
        reason = (f"no reliable estimate ({unreliable.note})" if unreliable.effective_sample_size is None else
                  f"too few effective samples ({unreliable.effective_sample_size:.1f})")
        return EventEntry(label, None, None, None, method=description_of(unreliable.family).label, included=False,
                          reason=reason, memory_snr=snr, source=source)
    return EventEntry(label, None, None, None, included=False, reason="failed run: no usable Bayes factor",
                      memory_snr=snr, source=source)


def select_events(records: list, sources=None) -> tuple:
    """(entries, dropped): one entry per result, with duplicates and mismatched settings dropped, and control
    events (injected without memory, or marked ``control = true``) kept out of the sums and not counted as
    dropped."""
    sources = sources or [""] * len(records)
    entries = [_select(record, source) for record, source in zip(records, sources)]
    for entry, record in zip(entries, records):
        entry.control = record.control or ""
        entry.injected_amplitude = None if record.injection is None else record.injection.get("memory_amplitude")
        mismatches = [check.get("mismatch") for check in (record.sample_checks or {}).values()
                      if isinstance(check, dict) and check.get("mismatch")]
        if mismatches:
            entry.likelihood_mismatch_median = float(mismatches[0]["median"])
            entry.likelihood_mismatch_spread = float(mismatches[0]["spread"])
        chosen = [m for m in record.methods if m.method == entry.method and m.numerator == "memory"]
        if chosen and chosen[0].effective_sample_size is not None:
            entry.effective_samples = float(chosen[0].effective_sample_size)
            entry.number_of_samples = chosen[0].number_of_samples
    settings = [json.dumps({k: (r.settings or {}).get(k) for k in CONSISTENCY_KEYS}, sort_keys=True)
                for r in records]
    reference = Counter(settings).most_common(1)[0][0] if settings else None
    seen = {}
    for entry, setting, record in zip(entries, settings, records):
        if not entry.included:
            continue
        if entry.label in seen:
            entry.included = False
            entry.reason = f"duplicated event label '{entry.label}' (kept the one in {seen[entry.label]})"
            continue
        if setting != reference:
            differing = [k for k in CONSISTENCY_KEYS
                         if (record.settings or {}).get(k) != json.loads(reference).get(k)]
            entry.included = False
            entry.reason = f"settings differ from the rest of the catalog: {', '.join(differing)}"
            continue
        seen[entry.label] = entry.source
        if entry.control:
            entry.included = False
            entry.reason = f"control event, shown apart: {entry.control}"
    dropped = [{"label": e.label, "reason": e.reason, "source": e.source} for e in entries
               if not e.included and not e.control]
    return entries, dropped


def _quadrature(errors):
    known = [e for e in errors if e is not None]
    return float(np.sqrt(np.sum(np.square(known)))) if known else None


def combinations(entries) -> dict:
    """The four catalog sums (consistent sign, shared unknown sign, wrong sign, sign-agnostic), errors in quadrature."""
    used = [e for e in entries if e.included]
    plus = np.array([e.ln_bf_plus for e in used], dtype=float)
    minus = np.array([e.ln_bf_minus for e in used], dtype=float)
    agnostic = np.logaddexp(plus, minus) - np.log(2)
    weight_plus = np.exp(plus - np.logaddexp(plus, minus))
    agnostic_errors = [None if (e.ln_bf_plus_err is None or e.ln_bf_minus_err is None) else
                       float(np.hypot(w * e.ln_bf_plus_err, (1 - w) * e.ln_bf_minus_err))
                       for e, w in zip(used, weight_plus)]
    missing = sum(e.ln_bf_err is None for e in used)
    note = ("errors add in quadrature over events" +
            (f"; {missing} events from the two-point approximation carry no error" if missing else ""))
    total_plus, total_minus = float(plus.sum()), float(minus.sum())
    shared_weight = float(np.exp(total_plus - np.logaddexp(total_plus, total_minus)))
    plus_error = _quadrature([e.ln_bf_plus_err for e in used])
    minus_error = _quadrature([e.ln_bf_minus_err for e in used])
    shared_error = None if plus_error is None or minus_error is None else \
        float(np.hypot(shared_weight * plus_error, (1 - shared_weight) * minus_error))
    return {
        "consistent_sign": {"ln_bf": total_plus, "ln_bf_err": plus_error,
                            "formula": "sum of ln BF₊ (A = +1 vs 0)", "note": note},
        "shared_unknown_sign": {"ln_bf": float(np.logaddexp(total_plus, total_minus) - np.log(2)),
                                "ln_bf_err": shared_error, "formula": "ln((prod BF+ + prod BF-)/2)",
                                "weight_plus": shared_weight,
                                "note": note + "; one sign for every event, unknown, prior odds 1:1; weight_plus = "
                                               "prod BF+ / (prod BF+ + prod BF-)"},
        "wrong_sign": {"ln_bf": total_minus, "ln_bf_err": minus_error,
                       "formula": "sum of ln BF- (A = -1 vs 0)", "note": note},
        "sign_agnostic": {"ln_bf": float(agnostic.sum()), "ln_bf_err": _quadrature(agnostic_errors),
                          "formula": "sum of ln((BF+ + BF-)/2)", "note": note},
    }


def amplitude_posterior(entries, limits=None, replicas: int = 200, seed: int = 0,
                        minimum_effective_samples: float = 50.0) -> dict:
    """Catalog posterior of a shared A on the common grid, uniform prior on ``limits`` limited to the grid.

    The posterior over prior density at A = 0 is a Savage-Dickey ratio for that prior: for the same data
    it scales with the prior's width. Each event's effective sample size is checked over the grid.
    """
    curves = [e for e in entries if e.included and e.curve]
    if not curves:
        return {"median": None, "lower_90": None, "upper_90": None, "density_ratio_at_zero": None,
                "density_ratio_at_one": None, "events": 0, "note": "no event has an amplitude curve"}
    grid = np.asarray(curves[0].curve["amplitudes"], dtype=float)
    low, high, cut = prior_on_grid(grid, (grid[0], grid[-1]) if limits is None else limits)
    inside = (grid >= low) & (grid <= high)
    grid = grid[inside]
    ln_curves = np.array([np.asarray(e.curve["ln_mean_ratio"], float)[inside] for e in curves])
    errors = np.array([np.asarray(e.curve["ln_mean_ratio_err"], float)[inside] for e in curves])
    summary = _summarize(grid, ln_curves.sum(axis=0), (low, high))
    rng = np.random.default_rng(seed)
    draws = [_summarize(grid, (ln_curves + rng.normal(0, 1, ln_curves.shape) * np.nan_to_num(errors)).sum(axis=0),
                        (low, high)) for _ in range(replicas)]
    for key in ("median", "lower_90", "upper_90"):
        summary[key + "_err"] = float(np.std([d[key] for d in draws]))
    summary.update({"events": len(curves), "grid": grid.tolist(), "ln_density": summary.pop("_ln_density"),
                    "event_curves": {e.label: c.tolist() for e, c in zip(curves, ln_curves)},
                    "prior": f"uniform on [{low:g}, {high:g}]", "prior_note": cut,
                    "density_ratio_note": "posterior over prior density (a Savage-Dickey ratio for this prior): "
                                          "for the same data it scales with the prior's width",
                    "effective_samples": _effective_sample_check(curves, inside, grid, summary,
                                                                 minimum_effective_samples),
                    "method": "product of each event's reweighted <L(A)/L(0)> on a grid; errors from "
                              f"{replicas} replicas with each curve's Monte-Carlo error"})
    for draw in draws:
        draw.pop("_ln_density")
    return summary


def _effective_sample_check(curves, inside, grid, summary, minimum: float) -> dict:
    """Events whose curve has fewer than ``minimum`` effective samples somewhere on the grid, and whether
    that part lies inside the catalog's 90% interval (where it would matter)."""
    flagged = []
    for entry in curves:
        ess = entry.curve.get("effective_sample_size")
        if ess is None:
            continue
        ess = np.asarray(ess, dtype=float)[inside]
        low = grid[ess < minimum]
        if low.size:
            overlaps = bool(np.any((low >= summary["lower_90"]) & (low <= summary["upper_90"])))
            flagged.append({"label": entry.label, "fewest": float(ess.min()),
                            "below_threshold_from": float(low.min()), "below_threshold_to": float(low.max()),
                            "inside_catalog_90": overlaps})
    return {"threshold": float(minimum), "flagged": flagged,
            "note": "flagged events have fewer effective samples than the threshold on part of the grid; where "
                    "that part lies inside the catalog's 90% interval the shared-A posterior there is unreliable"}


def _summarize(grid, ln_total, limits) -> dict:
    density = normalized_density(grid, ln_total)
    cdf = cumulative_distribution(grid, density)
    prior_density = 1.0 / (limits[1] - limits[0])
    return {"median": float(np.interp(0.5, cdf, grid)), "lower_90": float(np.interp(0.05, cdf, grid)),
            "upper_90": float(np.interp(0.95, cdf, grid)),
            "density_ratio_at_zero": float(np.interp(0.0, grid, density) / prior_density),
            "density_ratio_at_one": float(np.interp(1.0, grid, density) / prior_density),
            "_ln_density": np.log(np.maximum(density, 1e-300)).tolist()}


def ranked(entries) -> list:
    """Included events by their contribution to the consistent-sign sum, largest first."""
    return sorted([e for e in entries if e.included], key=lambda e: -e.ln_bf_plus)


def population(entries, amplitude: dict, settings: PopulationSettings) -> dict:
    """Every population model on the included events' curves, on the grid of the shared-A posterior."""
    if not amplitude.get("grid") or not amplitude.get("event_curves"):
        return {"models": [], "note": "no event has an amplitude curve"}
    grid = np.asarray(amplitude["grid"], dtype=float)
    errors = {}
    for entry in entries:
        if entry.label in amplitude["event_curves"] and entry.included and entry.curve:
            full = np.asarray(entry.curve["amplitudes"], dtype=float)
            inside = (full >= grid[0] - 1e-12) & (full <= grid[-1] + 1e-12)
            errors[entry.label] = np.asarray(entry.curve["ln_mean_ratio_err"], dtype=float)[inside]
    out = compare_models(event_curves(grid, amplitude["event_curves"], errors), settings)
    width, spacing = amplitude["upper_90"] - amplitude["lower_90"], float(np.max(np.diff(grid)))
    out["resolution_note"] = "" if width >= 4 * spacing else (
        f"the shared-A 90% interval ({width:.3g} wide) spans fewer than 4 grid spacings ({spacing:.3g}): the "
        "curves are integrated as linear between nodes, so the evidences carry an interpolation error the "
        "replicas do not include; a finer amplitude_grid resolves it")
    return out


def combine(records: list, limits=None, sources=None, population_settings=None) -> CatalogResult:
    """The catalog result from per-event results (:class:`EventResult`, or their JSON as dicts); the population
    models follow ``population_settings`` (:class:`PopulationSettings`, defaults when None)."""
    records = [_as_result(r) for r in records]
    entries, dropped = select_events(records, sources)
    if not any(e.included for e in entries):
        raise MemoryInferError("no event is usable: " + "; ".join(f"{e.label}: {e.reason}" for e in entries))
    if limits is None:
        first = next(r for r, e in zip(records, entries) if e.included)
        limits = (first.settings or {}).get("free_amplitude_limits")
    order = ranked(entries)
    cumulative = np.cumsum([e.ln_bf_plus for e in order])
    cumulative_err = np.sqrt(np.cumsum([0.0 if e.ln_bf_plus_err is None else e.ln_bf_plus_err ** 2 for e in order]))
    amplitude = amplitude_posterior(entries, limits)
    tension = (leave_one_out(amplitude["grid"], amplitude["event_curves"]) if amplitude.get("grid")
               else leave_one_out([], {}))
    models = population(entries, amplitude, population_settings or PopulationSettings())
    return CatalogResult(**combinations(entries), amplitude=amplitude, population=models,
                         events=[e.public() for e in entries if not e.control], ranking=[e.label for e in order],
                         cumulative_ln_bf_plus=cumulative.tolist(), cumulative_ln_bf_plus_err=cumulative_err.tolist(),
                         dropped=dropped, expected_vs_observed=expected_versus_observed(order),
                         controls=[e.public() for e in entries if e.control], consistency=tension,
                         method_rule=METHOD_RULE, n_events=int(sum(e.included for e in entries)))
