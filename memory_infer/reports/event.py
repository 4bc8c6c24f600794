"""The per-event page, drawn from an :class:`~memory_infer.results.event.EventResult` alone."""
from __future__ import annotations

import html
from types import MappingProxyType

import numpy as np

from ..inputs.settings import FREE_AMPLITUDE_LIMITS
from ..results.base import ABSENT
from ..results.estimates import normalized_density
from ..results.event import EventResult
from ..results.methods import description_of, family_of
from .html import figure_to_html, new_figure, number, number_or_undefined, page, table


def whitened_figure(whitened: dict) -> str:
    """Whitened data with the model with and without memory, per detector, around the merger; below each, the
    residual (data minus the model without memory) and the memory alone (the two models' difference)."""
    fig, axes = new_figure(2 * len(whitened), 1, figsize=(8, 4.4 * len(whitened)), squeeze=False)
    for index, (name, series) in enumerate(whitened.items()):
        axis, lower = axes[2 * index, 0], axes[2 * index + 1, 0]
        time = np.asarray(series["time"])
        data, without = np.asarray(series["data"]), np.asarray(series["model_without_memory"])
        with_memory = np.asarray(series["model_with_memory"])
        axis.plot(time, data, color="0.7", lw=0.7, label="whitened data")
        axis.plot(time, without, color="C0", lw=1.0, label="model, no memory (A = 0)")
        axis.plot(time, with_memory, color="C3", lw=1.0, ls="--", label="model, GR memory (A = 1)")
        axis.set_ylabel(f"{name} whitened strain\n[noise standard deviations]", fontsize=9)
        axis.legend(fontsize=9, loc="upper left")
        lower.plot(time, data - without, color="0.7", lw=0.7, label="residual: data − model without memory")
        lower.plot(time, with_memory - without, color="C3", lw=1.2, label="memory alone (A = 1 model − A = 0 model)")
        lower.set_ylabel(f"{name} residual and memory\n[noise standard deviations]", fontsize=9)
        lower.legend(fontsize=9, loc="upper left")
    axes[-1, 0].set_xlabel("time from merger at geocentre [s]")
    return figure_to_html(fig, "whitened data and models")


def draw_spectrum(spectrum: dict):
    """The memory's 2 sqrt(f)|h(f)| against each detector's noise ASD, both in strain per root hertz, in band."""
    fig, axis = new_figure(figsize=(8, 4))
    low = float(spectrum["minimum_frequency"])
    high = low
    for index, (name, series) in enumerate(spectrum["detectors"].items()):
        f = np.asarray(series["frequency"], dtype=float)
        memory = np.asarray(series["memory"], dtype=float)
        asd = np.array([np.nan if a is None else a for a in series["asd"]], dtype=float)
        band = f >= low  # outside the analysis band the response is masked to zero: nothing to draw
        shown = band & (memory > 0)
        axis.loglog(f[shown], memory[shown], color=f"C{index}",
                    label=f"{name}: memory signal, 2√f |h̃(f)| (GR memory, A = 1)")
        good = band & np.isfinite(asd) & (asd > 0)
        axis.loglog(f[good], asd[good], color=f"C{index}", lw=0.8, ls=":", label=f"{name}: noise ASD √S(f)")
        if np.any(good):
            high = max(high, float(f[good].max()))
    axis.set_xlim(low, high if high > low else None)
    axis.set_xlabel("frequency [Hz]")
    axis.set_ylabel("strain amplitude spectral density [1/√Hz]")
    axis.legend(fontsize=9)
    return fig


def memory_spectrum_figure(spectrum: dict) -> str:
    return figure_to_html(draw_spectrum(spectrum), "memory spectrum and noise")


def draw_amplitude(result: EventResult):
    """The posterior of the memory amplitude A: the free-A nested run and the reweighted curve."""
    limits = result.figures.get("free_amplitude_limits") or result.settings.get("free_amplitude_limits", list(FREE_AMPLITUDE_LIMITS))
    fig, axis = new_figure(figsize=(7, 3.5))
    drawn = False
    shown = [0.0, 1.0]  # the x range: A = 0, A = 1 and where the posterior has mass
    if result.free_amplitude and result.free_amplitude.get("samples"):
        samples = np.asarray(result.free_amplitude["samples"], dtype=float)
        axis.hist(samples, bins=40, density=True, alpha=0.5, color="C2", label="nested sampling with A free (samples)")
        shown += [float(samples.min()), float(samples.max())]
        drawn = True
    if result.amplitude_curve:
        grid = np.asarray(result.amplitude_curve.amplitudes)
        ln = np.asarray(result.amplitude_curve.ln_mean_ratio)
        inside = (grid >= limits[0]) & (grid <= limits[1])
        density = normalized_density(grid[inside], ln[inside])
        axis.plot(grid[inside], density, color="C3", label="reweighting: ⟨L(A)/L(0)⟩, uniform prior")
        mass = grid[inside][density > 1e-3 * density.max()]
        shown += [float(mass.min()), float(mass.max())]
        drawn = True
    margin = 0.1 * (max(shown) - min(shown))
    axis.set_xlim(max(min(shown) - margin, limits[0]), min(max(shown) + margin, limits[1]))
    axis.axvline(1.0, color="k", lw=0.8, ls="--", label="general relativity (A = 1)")
    axis.axvline(0.0, color="0.5", lw=0.8, ls=":", label="no memory (A = 0)")
    axis.set_xlabel("memory amplitude A (dimensionless; 1 = general relativity)")
    axis.set_ylabel("posterior density [per unit A]")
    axis.legend(fontsize=9)
    if not drawn:
        axis.text(0.5, 0.5, "no free-amplitude run or reweighting", transform=axis.transAxes, ha="center")
    return fig


def amplitude_figure(result: EventResult) -> str:
    return figure_to_html(draw_amplitude(result), "posterior of the memory amplitude")


def weights_label(name: str) -> str:
    """A sample set's legend: which run drew the samples and which weight they get."""
    return {"none": "samples of the no-memory run (A = 0): weight L(A = 1) / L(A = 0)",
            "memory": "samples of the GR-memory run (A = 1): weight L(A = 0) / L(A = 1)"}.get(
        name, f"samples {name}: weight L(A = 1) / L(samples' A)")


def weights_figure(weights: dict) -> str:
    fig, axis = new_figure(figsize=(7, 3.2))
    if not weights:
        axis.text(0.5, 0.5, "no reweighting in this run", transform=axis.transAxes, ha="center")
    for name, log_weights in weights.items():
        lw = np.asarray(log_weights, dtype=float)
        lw = lw[np.isfinite(lw)]
        if lw.size:
            axis.hist((lw - lw.max()) / np.log(10), bins=40, histtype="step", label=weights_label(name))
    axis.set_xlabel("log10 of the importance weight relative to the largest (dimensionless)")
    axis.set_ylabel("samples (count)")
    if weights:
        axis.legend(fontsize=9)
    return figure_to_html(fig, "importance weights")


def _sample_check_html(check: dict) -> str:
    rows = [(key.replace("_", " "), value.get("samples"), value.get("this_run"), value.get("from"),
             {True: "yes", False: "no", None: "unknown"}[value.get("differs")])
            for key, value in check.items() if isinstance(value, dict) and "this_run" in value]
    text = table(["setting", "samples", "this run", "read from", "differs"], rows)
    mismatch = check.get("mismatch")
    if mismatch:
        text += (f"<p>This run's ln L at the samples minus their own ({html.escape(mismatch['column_convention'])}): "
                 f"median {mismatch['median']:+.3g}, spread {mismatch['spread']:.3g}, worst departure from the median "
                 f"{mismatch['worst']:.3g} nats over {mismatch['samples']} samples; threshold {mismatch['threshold']:g} "
                 f"({'exceeded' if mismatch['exceeded'] else 'within'}). The Bayes factors use the proposal correction "
                 "mean(L₁/L_src) / mean(L₀/L_src).</p>")
    elif check.get("note"):
        text += f"<p>{html.escape(check['note'])}</p>"
    return text


def _given(value):
    """A block's value, None where its file did not hold the key."""
    return None if value is ABSENT else value


def _cross_check_text(check) -> str:
    if not check:
        return "<p>Cross-check: no second estimate with an error.</p>"
    size = check.difference_in_errors
    return (f"<p>Cross-check: {number(check.ln_bf, check.ln_bf_err)} by {html.escape(check.method)}; "
            f"difference {check.difference:+.3g}"
            + ("" if size is None else f" ({size:+.1f} combined standard errors)") + ".</p>")


INJECTION_UNITS = MappingProxyType({
    "mass_1": "M☉ (detector frame)", "mass_2": "M☉ (detector frame)", "luminosity_distance": "Mpc",
    "theta_jn": "rad", "phase": "rad", "ra": "rad", "dec": "rad", "psi": "rad", "geocent_time": "s (GPS)",
    "memory_amplitude": "(1 = general relativity)"})


def injection_text(result: EventResult) -> str:
    """The injected parameters, the memory amplitude A first, and whether the event is a control."""
    injection = dict(result.injection)
    order = ["memory_amplitude"] + sorted(k for k in injection if k != "memory_amplitude")
    rows = [("memory amplitude A" if key == "memory_amplitude" else key, parameter_value(key, injection[key]),
             INJECTION_UNITS.get(key, "")) for key in order if key in injection]
    text = table(["parameter", "injected value", "unit"], rows)
    if result.control:
        text += (f"<p>A control event ({html.escape(result.control)}): a catalog keeps it out of its sums and "
                 "shows it apart.</p>")
    return text


def parameter_value(name: str, value) -> str:
    """A parameter's value for a page: GPS times to the millisecond (``1e+09`` hides the event time), others to six
    significant figures."""
    if name.endswith("_time"):
        return f"{float(value):.3f}"
    return f"{float(value):.6g}"


def expected_ln_bf_text(snr_value: float, injected_amplitude) -> str:
    """What a perfectly known signal would give in expectation: ln BF+ = (A_true - 1/2) rho^2 for data holding memory
    of amplitude A_true (PRD 46, 5236 (1992)); for data of unknown content, the values under GR and without
    memory."""
    rho2 = snr_value ** 2
    if injected_amplitude is not None:
        amplitude = float(injected_amplitude)
        return (f"Expected ln BF₊ for a perfectly known signal with the injected memory amplitude A = {amplitude:g}: "
                f"(A − 1/2) ρ² = {(amplitude - 0.5) * rho2:.3f} (PRD 46, 5236 (1992)).")
    return (f"Expected ln BF₊ for a perfectly known signal: ρ²/2 = {rho2 / 2:.3f} if the data hold the memory general "
            f"relativity predicts, −ρ²/2 = {-rho2 / 2:.3f} if they hold none (PRD 46, 5236 (1992)).")


def parameters_html(roles: dict) -> str:
    """Which parameters were sampled and which fixed (and at what value)."""
    sampled = ", ".join(html.escape(name) for name in roles.get("sampled") or []) or "none"
    fixed = roles.get("fixed") or {}
    rows = [(html.escape(name), parameter_value(name, value), INJECTION_UNITS.get(name, "")) for name, value in fixed.items()]
    return (f"<p>Sampled: {sampled}.</p>" + (table(["fixed parameter", "value", "unit"], rows) if rows else
                                             "<p>No parameter fixed.</p>"))


def _monte_carlo(family: str) -> bool:
    """Whether the family's estimates carry a Monte-Carlo error (a missing one is then shown as undefined)."""
    description = description_of(family)
    return bool(description is not None and description.monte_carlo_error)


def event_page(result: EventResult) -> str:
    """The per-event report: numbers with errors and methods, then the figures."""
    rows = [(m.method, f"{m.numerator} vs {m.denominator}",
             number_or_undefined(m.ln_bf, m.ln_bf_err, _monte_carlo(m.family)),
             "" if m.effective_sample_size is None else f"{m.effective_sample_size:.0f} of {m.number_of_samples}",
             "yes" if m.reliable else "NO", m.note) for m in result.methods]
    sections = [("Bayes factors", table(["method", "hypotheses", "ln BF ± error", "effective samples", "usable", "note"], rows))]
    headline = result.headline
    if headline:
        minus = ("" if _given(headline.ln_bf_minus) is None else
                 f"; ln BF₋ (A = −1 vs 0) = {number(headline.ln_bf_minus, _given(headline.ln_bf_minus_err))} "
                 "from the same samples")
        sections[0] = (sections[0][0], f"<p>Headline: ln BF₊ (memory, A = +1 vs 0) = "
                       f"<b>{number(headline.ln_bf, headline.ln_bf_err)}</b> by {html.escape(headline.method)}"
                       f"{minus}. Rule: {html.escape(headline.rule)}.</p>"
                       + _cross_check_text(headline.cross_check) + sections[0][1])
    sign = result.sign
    if sign:
        undefined = _monte_carlo(family_of(sign.method))
        sections.append(("Sign of the memory", table(
            ["ln BF₊ (A=+1 vs 0)", "ln BF₋ (A=−1 vs 0)", "sign ln BF (+ vs −)", "weight of A = +1 against −1",
             "posterior mass of A > 0 (A free)", "method"],
            [(number_or_undefined(sign.ln_bf_plus, sign.ln_bf_plus_err, undefined),
              number_or_undefined(sign.ln_bf_minus, sign.ln_bf_minus_err, undefined),
              number_or_undefined(sign.ln_bf_sign, sign.ln_bf_sign_err, undefined), f"{sign.weight_plus:.3f}",
              "—" if sign.mass_above_zero is None else f"{sign.mass_above_zero:.3f}", sign.method)])
            + f"<p>{html.escape(sign.note)}</p>"))
    snr = result.memory_snr
    if snr:
        injected = (result.injection or {}).get("memory_amplitude") if result.injection else None
        sections.append(("Memory signal-to-noise ratio", f"<p>{snr.value:.3f} at {html.escape(snr.point)}; "
                         f"{html.escape(snr.method)}. {expected_ln_bf_text(snr.value, injected)}</p>"))
    if result.injection:
        sections.append(("Injection (simulated data)", injection_text(result)))
    free = result.free_amplitude
    if free:
        sections.append(("Memory amplitude, A free", f"<p>median {free['median']:.2f}, 90% interval "
                         f"[{free['lower_90']:.2f}, {free['upper_90']:.2f}] ({html.escape(free['method'])})</p>"))
    for name, check in (result.sample_checks or {}).items():
        sections.append((f"Posterior samples from a file: {name}", _sample_check_html(check)))
    settings = result.settings or {}
    if settings.get("approximant"):
        calibration = (settings.get("calibration") or {}).get("detectors") or ["none (the data taken as exactly "
                                                                              "calibrated)"]
        reference = settings.get("reference_frequency")
        sections.append(("Model and calibration", f"<p>{html.escape(str(settings['approximant']))}"
                         + ("" if reference is None else f", reference frequency {reference:g} Hz (from "
                            f"{html.escape(str(settings.get('reference_frequency_from', 'configuration')))})")
                         + ".</p><p>Calibration: " + "; ".join(html.escape(c) for c in calibration) + ".</p>"))
    if settings.get("parameters"):
        sections.append(("Parameters sampled and fixed", parameters_html(settings["parameters"])))
    if settings.get("origins") or settings.get("data_notes"):
        sections.append(("Where each setting came from", _origins_html(settings)))
    if result.warnings:
        sections.append(("Warnings", "".join(f"<p class='warn'>{html.escape(w)}</p>" for w in result.warnings)))
    figures = result.figures
    if figures.get("whitened"):
        sections.append((f"Whitened data and model at {snr.point if snr else 'the reference point'}",
                         whitened_figure(figures["whitened"])))
    if figures.get("spectrum"):
        sections.append(("Memory spectrum against each detector's noise", memory_spectrum_figure(figures["spectrum"])))
    sections.append(("Posterior of the memory amplitude", amplitude_figure(result)))
    sections.append(("Importance weights", weights_figure(figures.get("weights") or {})))
    prov = result.provenance or {"versions": {}, "seed": None, "command": []}
    sections.append(("Provenance", table(["package", "version"], sorted(prov["versions"].items()))
                     + f"<p>seed {prov['seed']}; command <code>{html.escape(' '.join(prov['command']))}</code></p>"))
    return page(f"Memory evidence for {result.event}", sections, result.caution)


def _origins_html(settings: dict) -> str:
    """Each segment and model setting with its value and origin (configuration, the release, or default), and how
    each strain file became the segment."""
    segment = settings.get("segment") or {}
    values = {"start_time": segment.get("start_time"), "duration": segment.get("duration"),
              "sampling_rate": segment.get("sampling_rate"), "minimum_frequency": settings.get("minimum_frequency"),
              "maximum_frequency": segment.get("maximum_frequency"),
              "reference_frequency": settings.get("reference_frequency"), "waveform_model": settings.get("approximant"),
              "calibration": (settings.get("calibration") or {}).get("kind")}
    rows = [(key.replace("_", " "), "—" if values.get(key) is None else str(values.get(key)), origin)
            for key, origin in (settings.get("origins") or {}).items()]
    notes = "".join(f"<p>{html.escape(note)}</p>" for note in settings.get("data_notes") or [])
    return table(["setting", "value", "from"], rows) + notes
