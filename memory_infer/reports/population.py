"""The catalog page's population models: every model with its evidence side by side, and the spread model's
posterior of (mu, sigma) with the shared model's line sigma = 0 marked."""
from __future__ import annotations

import html

import numpy as np

from ..results.population import ParameterSummary, PopulationModels, SpreadFigure
from .html import figure_to_html, new_figure, number, table

CAUTION = ("A spread found in real data points first to waveform systematics (a memory model that errs by an "
           "amount that differs between events), to non-Gaussian noise or a misestimated noise spectrum, or to a "
           "poorly converged event curve, and only after those are excluded to new physics.")


def parameter_text(summary: ParameterSummary, name: str, named: bool = True) -> str:
    """``name median ± error [lower, upper]`` of one parameter's posterior."""
    return ((f"{name} " if named else "") + f"{number(summary.median, summary.median_err)} "
            f"[{summary.lower_90:.2f}, {summary.upper_90:.2f}]")


def models_table(population: PopulationModels) -> str:
    """One row per model: what it asks, its prior, ln BF against no memory and against the shared model."""
    rows = []
    for _, entry in population.entries:
        parameters = "; ".join(parameter_text(entry.summary(p), p) for p in entry.parameters_names) or "none"
        rows.append((entry.title, entry.question, entry.prior, parameters,
                     number(entry.ln_bf_vs_no_memory, entry.ln_bf_vs_no_memory_err),
                     number(entry.ln_bf_vs_shared, entry.ln_bf_vs_shared_err)))
    return table(["model", "what it asks", "prior", "parameters: median [90% interval]",
                  "ln BF against no memory", "ln BF against one shared amplitude"], rows)


def spread_figure(figure: SpreadFigure) -> str:
    """The joint posterior of (mu, sigma) as filled contours, with sigma = 0 (one shared amplitude) marked."""
    mu, sigma, density = np.asarray(figure.mu), np.asarray(figure.sigma), np.asarray(figure.density)
    fig, axis = new_figure(figsize=(7, 3.8))
    axis.contourf(mu, sigma, density, levels=np.linspace(0, 1, 11)[1:], cmap="Blues", extend="neither")
    axis.axhline(0.0, color="C3", lw=2, label="one shared amplitude (σ = 0)")
    axis.axvline(1.0, color="k", ls="--", lw=0.8, label="general relativity (μ = 1)")
    axis.set_ylim(-0.03 * sigma[-1], sigma[-1])
    axis.set_xlabel("mean amplitude μ (1 = general relativity)")
    axis.set_ylabel("spread σ of the amplitudes")
    axis.legend(fontsize=9, loc="upper right")
    return figure_to_html(fig, "joint posterior of the mean and spread of the amplitudes")


def population_text(population: PopulationModels) -> str:
    """The section on population models (a catalog.json written before them has none)."""
    if not population.models:
        return f"<p>{html.escape(population.note or 'not computed')}.</p>"
    text = (models_table(population) + f"<p>ln BF against no memory is ln Z of the model with every event's "
            f"amplitude at 0 as the alternative; against one shared amplitude it is the ratio of evidences "
            f"(above 0 favours the model). {population.events} events; "
            f"{html.escape(population.method)}.</p>")
    if population.resolution_note:
        text += f"<p class='warn'>{html.escape(population.resolution_note)}.</p>"
    spread = population.model("gaussian")
    if spread:
        sigma = spread.summary("sigma")
        text += (f"<p>Spread model: μ = {parameter_text(spread.summary('mu'), 'mu', False)}, "
                 f"σ = {parameter_text(sigma, 'sigma', False)} "
                 f"(medians and equal-tailed 90% intervals), σ below {sigma.upper_bound_90:.2f} at 90% "
                 f"(σ uniform on [0, {spread.sigma_max:g}]); σ = 0 is "
                 f"{'inside' if sigma.zero_in_highest_density_90 else 'outside'} the 90% highest-density "
                 f"region.</p>" + spread_figure(spread.figure))
    return text + f"<p class='warn'>{html.escape(CAUTION)}</p>"
