"""Self-contained HTML pages: figures inlined as PNG, numbers with their errors and methods.

Every page is drawn from a result file's content alone (no live data or models)."""
from __future__ import annotations

import base64
import html
import io

import numpy as np

from ..results.estimates import ERROR_UNDEFINED_TEXT

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
    """``value ± error`` with the error to two significant digits and the value to the same decimal place
    (common practice); without an error, ``digits`` decimals. An error of 0 is printed as 0."""
    if value is None:
        return "—"
    if isinstance(value, float) and not np.isfinite(value):
        return str(value)
    if error is not None and np.isfinite(error) and error > 0:
        decimals = max(0, 1 - int(np.floor(np.log10(error))))
        return f"{value:.{decimals}f} ± {error:.{decimals}f}"
    text = f"{value:.{digits}f}"
    if error is not None and error == 0:
        text += " ± 0"
    return text


class Markup(str):
    """A table cell that is already HTML (a link), written as it is."""


def link(target: str, text: str) -> Markup:
    return Markup(f"<a href='{html.escape(target)}'>{html.escape(text)}</a>")


def _cell(value) -> str:
    return value if isinstance(value, Markup) else html.escape(str(value))


def number_or_undefined(value, error, undefined: bool, digits=2) -> str:
    """:func:`number`, or ``value ± —`` with the reason when the method has an error that is undefined here
    (fewer than two effective samples)."""
    if undefined and error is None and value is not None:
        return f"{number(value, None, digits)} ± — ({ERROR_UNDEFINED_TEXT})"
    return number(value, error, digits)


def table(headers, rows) -> str:
    head = "".join(f"<th>{html.escape(str(h))}</th>" for h in headers)
    body = "".join("<tr>" + "".join(f"<td>{_cell(c)}</td>" for c in row) + "</tr>" for row in rows)
    return f"<table><tr>{head}</tr>{body}</table>"


def page(title: str, sections, caution: str) -> str:
    parts = [f"<!doctype html><html><head><meta charset='utf-8'><title>{html.escape(title)}</title>"
             f"<style>{STYLE}</style></head><body><h1>{html.escape(title)}</h1>",
             f"<p class='caution'><b>What this does and does not claim.</b> {html.escape(caution)}</p>"]
    for heading, content in sections:
        parts.append(f"<h2>{html.escape(heading)}</h2>{content}")
    parts.append("</body></html>")
    return "\n".join(parts)
