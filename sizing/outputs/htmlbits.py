"""HTML pieces of the report: the style sheet, escaping, numbers with units, tables and SVG charts.

Charts are drawn by matplotlib's SVG backend (no pyplot, no display), imported only when a chart
is drawn.  A fixed ``svg.hashsalt`` and no date in the metadata make the SVG byte-identical for
the same inputs.
"""

from __future__ import annotations

import html
import io
import math

from ..units import sig

SVG_RC = {"svg.hashsalt": "sizing-report", "svg.fonttype": "path", "font.size": 9,
          "axes.grid": True, "grid.alpha": 0.3, "font.family": "DejaVu Sans"}

CSS = """
body{font-family:system-ui,-apple-system,'Segoe UI',Helvetica,Arial,sans-serif;max-width:60rem;
margin:1.5rem auto;padding:0 1rem;color:#1b1b1b;line-height:1.4}
h1{font-size:1.5rem;margin-bottom:.2rem}h2{font-size:1.15rem;border-bottom:1px solid #bbb;
margin-top:1.8rem}table{border-collapse:collapse;margin:.5rem 0;font-size:.9rem}
th,td{border:1px solid #ccc;padding:.25rem .5rem;text-align:left;vertical-align:top}
td.n{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}th{background:#f0f0f0}
.big{font-size:1.3rem;font-weight:600}.warn{background:#fff3cd;border:1px solid #e0b000;
padding:.6rem .8rem}.caution{background:#f6f6f6;border-left:4px solid #888;padding:.4rem .8rem}
figure{margin:.5rem 0}figure svg{max-width:100%;height:auto}figcaption{font-size:.85rem;color:#444}
pre.notes{white-space:pre-wrap;font-size:.8rem;background:#fafafa;border:1px solid #ddd;padding:.5rem}
.muted{color:#555;font-size:.85rem}
@media print{body{max-width:none;margin:0;font-size:10pt}section{break-inside:avoid-page}
h2{break-after:avoid}figure{break-inside:avoid}a{color:inherit;text-decoration:none}
@page{size:A4;margin:15mm}}
"""


# ---------------------------------------------------------------------------------------------
# formatting helpers


def esc(x) -> str:
    """Return ``x`` as HTML-escaped text (quotes too)."""
    return html.escape(str(x), quote=True)


def q(x, unit: str, digits: int = 4, scale: float = 1.0) -> str:
    """Format a number with its unit (``'13.5 kg'``); 'n/a' when unknown.

    >>> q(13.5, "kg"), q(2e-6, "um", scale=1e6), q(float("nan"), "kg")
    ('13.5 kg', '2 um', 'n/a')
    """
    if x is None:
        return "n/a"
    x = float(x)
    if not math.isfinite(x):
        return "n/a"
    return f"{sig(x * scale, digits)} {unit}".strip()


def table(rows, header=None, numeric_cols=(1,)) -> str:
    """Return an HTML table; ``rows`` are sequences of already formatted cells."""
    out = ["<table>"]
    if header:
        out.append("<tr>" + "".join(f"<th>{esc(h)}</th>" for h in header) + "</tr>")
    for r in rows:
        cells = []
        for j, c in enumerate(r):
            cls = ' class="n"' if j in numeric_cols else ""
            cells.append(f"<td{cls}>{esc(c)}</td>")
        out.append("<tr>" + "".join(cells) + "</tr>")
    out.append("</table>")
    return "\n".join(out)


def section(anchor: str, title: str, body: str) -> str:
    """Return a report section with its anchor and heading."""
    return f'<section id="{esc(anchor)}">\n<h2>{esc(title)}</h2>\n{body}\n</section>'


def _figure():
    from matplotlib.figure import Figure  # deferred: matplotlib is heavy and only charts need it

    return Figure(figsize=(7.0, 3.6), dpi=100, layout="constrained")


def svg_of(fig) -> str:
    """Return the figure as inline SVG text (no XML prolog; byte-stable)."""
    import matplotlib  # deferred: heavy, only charts need it

    buf = io.StringIO()
    with matplotlib.rc_context(SVG_RC):
        fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None})
    text = buf.getvalue()
    start = text.find("<svg")
    return text[start:] if start >= 0 else text


def chart(draw, caption: str) -> str:
    """Run ``draw(fig)`` under the report's style and return a <figure> with inline SVG."""
    import matplotlib  # deferred: heavy, only charts need it

    with matplotlib.rc_context(SVG_RC):
        fig = _figure()
        draw(fig)
        svg = svg_of(fig)
    return f"<figure>{svg}<figcaption>{esc(caption)}</figcaption></figure>"
