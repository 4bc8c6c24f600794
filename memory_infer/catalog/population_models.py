"""Every population model of the memory amplitude, run on a catalog's event curves, with Monte-Carlo errors.

``MODELS`` registers the models (one line each; the first is the reference the others are compared with).
For each model: ln Z against no memory in any event, ln BF against the first model
(``ln Z_model - ln Z_shared``) and its parameters' posterior summaries; every error is the standard deviation
over replicas in which each event's curve is moved, point by point, by a normal draw of its own Monte-Carlo
error (the same replicas for every model, so that the ln BF's error holds their correlation).
"""
from __future__ import annotations

import numpy as np

from .amplitude_spread import AmplitudeSpread
from .population import EventCurves, PopulationSettings
from .shared_amplitude import SharedAmplitude

MODELS = (SharedAmplitude, AmplitudeSpread)
SUMMARIES = ("median", "lower_90", "upper_90", "upper_bound_90")
GRID_POINTS = 301  # curves on a finer grid are moved to this many even nodes over the same span (cost ~ nodes^2)


def event_curves(grid, ln_curves: dict, errors: dict) -> EventCurves:
    """The included events' curves (label -> ln l_i on ``grid``) as the models read them."""
    labels = tuple(ln_curves)
    return EventCurves(np.asarray(grid, float), np.array([ln_curves[k] for k in labels], dtype=float),
                       np.array([errors[k] for k in labels], dtype=float), labels)


def compare_models(curves: EventCurves, settings: PopulationSettings = PopulationSettings(), models=MODELS) -> dict:
    """Each model's evidence, ln BF against the first model and parameter summaries, with replica errors."""
    given = curves.grid.size
    curves = curves.coarsened(GRID_POINTS)
    built = [model(settings) for model in models]
    found = [m.analyse(curves) for m in built]
    rng = np.random.default_rng([int(settings.seed), 31])
    replicas = [[m.analyse(replica) for m in built] for replica in
                (curves.replica(rng) for _ in range(settings.replicas))] if curves.errors.any() else []
    reference = found[0]["ln_evidence"]
    out = {"models": [m.name for m in built], "events": len(curves.labels), "replicas": len(replicas),
           "method": "each event's reweighted <L(A)/L(0)> on the common grid, taken as linear in A between grid "
                     "nodes; ln Z against no memory in any event by the trapezoid rule over each model's "
                     f"parameters; errors: standard deviation over {len(replicas)} replicas of the curves, each "
                     "point moved by a normal draw of its Monte-Carlo error (none when the curves carry no error)" +
                     ("" if given == curves.grid.size else
                      f"; the curves' {given} grid points were moved to {curves.grid.size} even nodes (ln l "
                      "interpolated linearly), so the shared model here may differ slightly from the shared-A "
                      "posterior above")}
    for index, (model, result) in enumerate(zip(built, found)):
        ln_z = np.array([r[index]["ln_evidence"] for r in replicas])
        ln_bf = ln_z - np.array([r[0]["ln_evidence"] for r in replicas])
        entry = {"title": model.title, "question": model.question, "parameters_names": list(model.parameters),
                 "prior": model.prior(curves),
                 "ln_bf_vs_no_memory": result["ln_evidence"], "ln_bf_vs_no_memory_err": _spread(ln_z),
                 "ln_bf_vs_shared": result["ln_evidence"] - reference,
                 "ln_bf_vs_shared_err": 0.0 if index == 0 else _spread(ln_bf)}
        for name, summary in result["parameters"].items():
            entry[name] = dict(summary)
            for key in SUMMARIES:
                if key in summary:
                    entry[name][key + "_err"] = _spread([r[index]["parameters"][name][key] for r in replicas])
        entry.update({k: v for k, v in result.items() if k not in ("ln_evidence", "parameters")})
        out[model.name] = entry
    return out


def _spread(values):
    values = np.asarray(values, dtype=float)
    return float(np.std(values, ddof=1)) if values.size > 1 else None
