"""Self-contained HTML pages: figures inlined as PNG, numbers with their errors and methods."""
from __future__ import annotations

import base64
import html
import io

import numpy as np

STYLE = """body{font-family:system-ui,sans-serif;max-width:1000px;margin:2em auto;color:#222;line-height:1.45}
h1{font-size:1.5em;border-bottom:2px solid #345}h2{font-size:1.15em;margin-top:1.8em;color:#345}
table{border-collapse:collapse;margin:.6em 0}td,th{border:1px solid #bbb;padding:.25em .6em;text-align:left}
th{background:#eef2f6}.caution{background:#fff6e0;border-left:4px solid #d90;padding:.6em 1em}
.warn{color:#a40}img{max-width:100%}code{background:#f3f3f3;padding:0 .2em}"""


def figure_to_html(fig, alt: str) -> str:
    import matplotlib.pyplot as plt

    buffer = io.BytesIO()
    fig.savefig(buffer, format="png", dpi=100, bbox_inches="tight")
    plt.close(fig)
    data = base64.b64encode(buffer.getvalue()).decode()
    return f'<img alt="{html.escape(alt)}" src="data:image/png;base64,{data}">'


def new_figure(*args, **kwargs):
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    return plt.subplots(*args, **kwargs)


def number(value, error=None, digits=2) -> str:
    if value is None:
        return "—"
    if isinstance(value, float) and not np.isfinite(value):
        return str(value)
    text = f"{value:.{digits}f}"
    if error is not None and np.isfinite(error):
        text += f" ± {error:.{digits}f}"
    return text


def table(headers, rows) -> str:
    head = "".join(f"<th>{html.escape(str(h))}</th>" for h in headers)
    body = "".join("<tr>" + "".join(f"<td>{html.escape(str(c))}</td>" for c in row) + "</tr>" for row in rows)
    return f"<table><tr>{head}</tr>{body}</table>"


def page(title: str, sections, caution: str) -> str:
    parts = [f"<!doctype html><html><head><meta charset='utf-8'><title>{html.escape(title)}</title>"
             f"<style>{STYLE}</style></head><body><h1>{html.escape(title)}</h1>",
             f"<p class='caution'><b>What this does and does not claim.</b> {html.escape(caution)}</p>"]
    for heading, content in sections:
        parts.append(f"<h2>{html.escape(heading)}</h2>{content}")
    parts.append("</body></html>")
    return "\n".join(parts)


# ---------------------------------------------------------------- per-event figures

def whitened_figure(setup, point) -> str:
    """Whitened data with the model with and without memory, per detector, around the merger."""
    generator = setup.generator
    detectors = list(setup.detectors)
    fig, axes = new_figure(len(detectors), 1, figsize=(8, 2.4 * len(detectors)), squeeze=False)
    with_memory = generator.frequency_domain_strain(dict(point, memory_amplitude=1.0))
    with_memory = {k: v.copy() for k, v in with_memory.items()}
    without = generator.frequency_domain_strain(dict(point, memory_amplitude=0.0))
    for axis, detector in zip(axes[:, 0], detectors):
        mask = detector.frequency_mask
        asd = np.sqrt(detector.power_spectral_density_array)
        times = detector.time_array - point["geocent_time"]

        def whiten(series):
            white = np.zeros_like(series)
            white[mask] = series[mask] / asd[mask]
            return np.fft.irfft(white, n=len(times)) * np.sqrt(2 / detector.sampling_frequency) * detector.sampling_frequency

        data = whiten(detector.frequency_domain_strain)
        model_mem = whiten(detector.get_detector_response(with_memory, point))
        model_none = whiten(detector.get_detector_response(without, point))
        window = (times > -0.25) & (times < 0.1)
        axis.plot(times[window], data[window], color="0.7", lw=0.7, label="whitened data")
        axis.plot(times[window], model_none[window], color="C0", lw=1.0, label="model, no memory")
        axis.plot(times[window], model_mem[window], color="C3", lw=1.0, ls="--", label="model with memory (A = 1)")
        axis.set_ylabel(detector.name)
        axis.legend(fontsize=7, loc="upper left")
    axes[-1, 0].set_xlabel("time from merger at geocentre [s]")
    return figure_to_html(fig, "whitened data and models")


def memory_spectrum_figure(setup, point) -> str:
    generator = setup.generator
    total = generator.frequency_domain_strain(dict(point, memory_amplitude=1.0))
    total = {k: v.copy() for k, v in total.items()}
    none = generator.frequency_domain_strain(dict(point, memory_amplitude=0.0))
    memory = {k: total[k] - none[k] for k in total}
    fig, axis = new_figure(figsize=(8, 4))
    for index, detector in enumerate(setup.detectors):
        response = detector.get_detector_response(memory, point)
        f = detector.frequency_array
        keep = f > 0
        axis.loglog(f[keep], 2 * np.sqrt(f[keep]) * np.abs(response[keep]), color=f"C{index}",
                    label=f"{detector.name} memory 2√f|h̃|")
        psd = detector.power_spectral_density_array
        good = keep & np.isfinite(psd)
        axis.loglog(f[good], np.sqrt(psd[good]), color=f"C{index}", lw=0.8, ls=":", label=f"{detector.name} ASD")
    axis.axvline(setup.config["data"]["minimum_frequency"], color="0.5", ls="--", lw=0.8)
    axis.set_xlabel("frequency [Hz]")
    axis.set_ylabel("[1/√Hz]")
    axis.legend(fontsize=7)
    return figure_to_html(fig, "memory spectrum and noise")


def amplitude_figure(outcome, limits) -> str:
    fig, axis = new_figure(figsize=(7, 3.5))
    drawn = False
    if outcome.free_amplitude:
        axis.hist(outcome.free_amplitude["samples"], bins=40, density=True, alpha=0.5, color="C2",
                  label="nested sampling, A free")
        drawn = True
    if outcome.amplitude_curve:
        grid = np.asarray(outcome.amplitude_curve["amplitudes"])
        ln = np.asarray(outcome.amplitude_curve["ln_mean_ratio"])
        inside = (grid >= limits[0]) & (grid <= limits[1])
        density = np.exp(ln[inside] - ln[inside].max())
        density /= np.trapezoid(density, grid[inside])
        axis.plot(grid[inside], density, color="C3", label="reweighting: ⟨L(A)/L(0)⟩, uniform prior")
        drawn = True
    axis.axvline(1.0, color="k", lw=0.8, ls="--", label="general relativity (A = 1)")
    axis.axvline(0.0, color="0.5", lw=0.8, ls=":")
    axis.set_xlabel("memory amplitude A")
    axis.set_ylabel("posterior density")
    axis.legend(fontsize=7)
    if not drawn:
        axis.text(0.5, 0.5, "no free-amplitude run or reweighting", transform=axis.transAxes, ha="center")
    return figure_to_html(fig, "posterior of the memory amplitude")


def weights_figure(outcome) -> str:
    fig, axis = new_figure(figsize=(7, 3.2))
    if not outcome.reweighting_weights:
        axis.text(0.5, 0.5, "no reweighting in this run", transform=axis.transAxes, ha="center")
    for name, log_weights in outcome.reweighting_weights.items():
        lw = np.asarray(log_weights)
        lw = lw[np.isfinite(lw)]
        if lw.size:
            axis.hist((lw - lw.max()) / np.log(10), bins=40, histtype="step", label=name)
    axis.set_xlabel("log10 of the importance weight relative to the largest")
    axis.set_ylabel("samples")
    if outcome.reweighting_weights:
        axis.legend(fontsize=7)
    return figure_to_html(fig, "importance weights")


def event_page(setup, outcome, record: dict) -> str:
    """The per-event report: numbers with errors and methods, then the figures."""
    rows = [(m["method"], f"{m['numerator']} vs {m['denominator']}", number(m["ln_bf"], m["ln_bf_err"]),
             "" if m["effective_sample_size"] is None else f"{m['effective_sample_size']:.0f} of {m['number_of_samples']}",
             "yes" if m["reliable"] else "NO", m["note"]) for m in record["methods"]]
    sections = [("Bayes factors", table(["method", "hypotheses", "ln BF ± error", "effective samples", "usable", "note"], rows))]
    headline = record.get("headline")
    if headline:
        sections[0] = (sections[0][0], f"<p>Headline: ln BF (memory vs none) = <b>{number(headline['ln_bf'], headline['ln_bf_err'])}</b> "
                       f"by {html.escape(headline['method'])}. Rule: {html.escape(headline['rule'])}.</p>" + sections[0][1])
    sign = record.get("sign")
    if sign:
        sections.append(("Sign of the memory", table(
            ["ln BF₊ (A=+1 vs 0)", "ln BF₋ (A=−1 vs 0)", "sign ln BF (+ vs −)", "posterior weight A > 0", "method"],
            [(number(sign["ln_bf_plus"], sign["ln_bf_plus_err"]), number(sign["ln_bf_minus"], sign["ln_bf_minus_err"]),
              number(sign["ln_bf_sign"], sign["ln_bf_sign_err"]), f"{sign['weight_plus']:.3f}", sign["method"])])
            + f"<p>{html.escape(sign.get('note', ''))}</p>"))
    snr = record.get("memory_snr")
    if snr:
        sections.append(("Memory signal-to-noise ratio", f"<p>{snr['value']:.3f} at {html.escape(snr['point'])}; "
                         f"{html.escape(snr['method'])}. Expected ln BF for a perfectly known signal: ρ²/2 = "
                         f"{snr['value'] ** 2 / 2:.3f} (Finn, PRD 46, 5236 (1992)).</p>"))
    free = record.get("free_amplitude")
    if free:
        sections.append(("Memory amplitude, A free", f"<p>median {free['median']:.2f}, 90% interval "
                         f"[{free['lower_90']:.2f}, {free['upper_90']:.2f}] ({html.escape(free['method'])})</p>"))
    if record.get("warnings"):
        sections.append(("Warnings", "".join(f"<p class='warn'>{html.escape(w)}</p>" for w in record["warnings"])))
    point = outcome.reference_point
    if point is not None:
        sections.append((f"Whitened data and model at {record['memory_snr']['point']}", whitened_figure(setup, point)))
        sections.append(("Memory spectrum against each detector's noise", memory_spectrum_figure(setup, point)))
    sections.append(("Posterior of the memory amplitude", amplitude_figure(outcome, setup.config["evidence"]["free_amplitude_limits"])))
    sections.append(("Importance weights", weights_figure(outcome)))
    prov = record["provenance"]
    sections.append(("Provenance", table(["package", "version"], sorted(prov["versions"].items()))
                     + f"<p>seed {prov['seed']}; command <code>{html.escape(' '.join(prov['command']))}</code></p>"))
    return page(f"Memory evidence for {record['event']}", sections, record["caution"])
