"""HTML pieces of the report: the style sheet, escaping, numbers with units, tables and SVG charts.

Numbers and units are shown as people write them (``1 575 000 m²``, ``0.215 µm``, ``25 °C``,
``2.5 × 10⁻⁵``), never ``m**3`` or ``1.575e+06``: :func:`unit_text` and :func:`num`.

Charts are drawn by matplotlib's SVG backend (no pyplot, no display), imported only when a chart
is drawn, in a fixed layout (no layout engine): the axes keep the same place in every chart, the
legend sits outside them on the right (it covers no data), tick labels are plain text (no
mathtext; log axes labelled 0.1, 0.2, 0.5, 1 ...).  A fixed ``svg.hashsalt`` and no date in the
metadata make the SVG byte-identical for the same inputs.
"""

from __future__ import annotations

import html
import io
import math
import re

from ..units import sig

SVG_RC = {"svg.hashsalt": "sizing-report", "svg.fonttype": "path", "font.size": 9,
          "axes.grid": True, "grid.alpha": 0.3, "font.family": "DejaVu Sans",
          "text.parse_math": False, "axes.formatter.use_mathtext": False,
          "axes.formatter.useoffset": False, "axes.formatter.limits": (-4, 6)}

#: figure size [in] and the fixed axes box (fractions of the figure): with a legend on the right, without
FIGSIZE = (9.0, 3.8)
BOX_LEGEND = {"left": 0.08, "right": 0.72, "bottom": 0.13, "top": 0.96}
BOX_PLAIN = {"left": 0.08, "right": 0.97, "bottom": 0.13, "top": 0.96}

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
.muted{color:#555;font-size:.85rem}.context{color:#333;font-size:.95rem;margin-top:-.4rem}
.checks{background:#fff3cd;border:1px solid #e0b000;padding:.4rem .8rem;margin:.5rem 0}
.checks ul{margin:.2rem 0;padding-left:1.2rem}.checks li{margin:.15rem 0}
table.filing{font-size:.78rem;margin:.3rem 0 .6rem}table.filing td{padding:.15rem .4rem}
td.sign{min-width:11rem}
@media print{body{max-width:none;margin:0;font-size:10pt}section{break-inside:avoid-page}
h2{break-after:avoid}figure{break-inside:avoid}a{color:inherit;text-decoration:none}
@page{size:A4;margin:15mm}}
"""


# ---------------------------------------------------------------------------------------------
# formatting helpers


def esc(x) -> str:
    """Return ``x`` as HTML-escaped text (quotes too)."""
    return html.escape(str(x), quote=True)


_UNIT_WORDS = ((re.compile(r"\*\*-?[0-9]+"), None), (re.compile(r"\bumol\b"), "\u00b5mol"),
               (re.compile(r"\bum\b"), "\u00b5m"), (re.compile(r"\bdegC\b"), "\u00b0C"))
_SUP = str.maketrans("-0123456789", "\u207b\u2070\u00b9\u00b2\u00b3\u2074\u2075\u2076\u2077\u2078\u2079")


def unit_text(text: str) -> str:
    """Write units in ``text`` as people do: ``m**3`` -> m³, ``um`` -> µm, ``degC`` -> °C.

    >>> unit_text("area per m**3 of dispersion [m**2/m**3]"), unit_text("d32 [um], 25 degC, umol/m**2")
    ('area per m³ of dispersion [m²/m³]', 'd32 [µm], 25 °C, µmol/m²')
    >>> unit_text("maximum summary (-)")
    'maximum summary (-)'
    """
    text = str(text)
    for pattern, repl in _UNIT_WORDS:
        if repl is None:
            text = pattern.sub(lambda m: m.group(0)[2:].translate(_SUP), text)
        else:
            text = pattern.sub(repl, text)
    return text


def num(x: float, digits: int = 4) -> str:
    """Write a number as people do, ``digits`` significant figures: no ``e+06``.

    Large numbers are grouped by thousands (narrow spaces, SI style), very small ones are written
    with a power of ten.

    >>> [num(x).replace("\u202f", "_") for x in (1575000.0, 12.5, 2.5e-5, -3e9)]
    ['1_575_000', '12.5', '2.5 × 10⁻⁵', '−3_000_000_000']
    """
    x = float(x)
    if x == 0 or not math.isfinite(x):
        return sig(x, digits)
    text = sig(x, digits)
    if "e" not in text:
        return text.replace("-", "\u2212")
    mant, _, exp = text.partition("e")
    e = int(exp)
    if 0 <= e < 16:
        rounded = int(round(x, digits - 1 - e))
        return f"{rounded:,}".replace(",", "\u202f").replace("-", "\u2212")
    return f"{mant.replace('-', chr(0x2212))} \u00d7 10{str(e).translate(_SUP)}"


def q(x, unit: str, digits: int = 4, scale: float = 1.0) -> str:
    """Format a number with its unit as people write it (``'13.5 kg'``); 'n/a' when unknown.

    >>> q(13.5, "kg"), q(2e-6, "um", scale=1e6), q(float("nan"), "kg"), q(1.575e6, "m**2").replace("\u202f", "_")
    ('13.5 kg', '2 µm', 'n/a', '1_575_000 m²')
    """
    if x is None:
        return "n/a"
    x = float(x)
    if not math.isfinite(x):
        return "n/a"
    return f"{num(x * scale, digits)} {unit_text(unit)}".strip()


def table(rows, header=None, numeric_cols=(1,)) -> str:
    """Return an HTML table; ``rows`` are sequences of already formatted cells.

    Units in the header and in the first column (the labels) are written as people do
    (:func:`unit_text`); other cells are shown as given.
    """
    out = ["<table>"]
    if header:
        out.append("<tr>" + "".join(f"<th>{esc(unit_text(h))}</th>" for h in header) + "</tr>")
    for r in rows:
        cells = []
        for j, c in enumerate(r):
            cls = ' class="n"' if j in numeric_cols else ""
            cells.append(f"<td{cls}>{esc(unit_text(c) if j == 0 else c)}</td>")
        out.append("<tr>" + "".join(cells) + "</tr>")
    out.append("</table>")
    return "\n".join(out)


def section(anchor: str, title: str, body: str) -> str:
    """Return a report section with its anchor and heading."""
    return f'<section id="{esc(anchor)}">\n<h2>{esc(title)}</h2>\n{body}\n</section>'


def _figure():
    from matplotlib.figure import Figure  # deferred: matplotlib is heavy and only charts need it

    return Figure(figsize=FIGSIZE, dpi=100)  # no layout engine: the axes box is set in _fix_layout


def _plain(v, _pos=None) -> str:
    """A plain tick label (``0.2``, ``5``, ``1000``): no mathtext, no ``10^x``."""
    return f"{v:g}".replace("-", "\u2212")


def _fix_layout(fig, box=None) -> None:
    """Put every axes in one fixed box, legends outside on the right, plain labels on log axes."""
    from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter  # deferred: heavy

    axes = fig.get_axes()
    legends = [ax for ax in axes if ax.get_legend() is not None]
    if box is None:
        box = dict(BOX_LEGEND if legends else BOX_PLAIN)
        # room for text tick labels on the left (bar charts): about 0.62 em a character (DejaVu Sans)
        longest = max((len(t.get_text()) * 0.62 * t.get_fontsize() / 72 for ax in axes
                       for t in ax.get_yticklabels()), default=0.0)
        ylabel = 0.25 if any(ax.get_ylabel() for ax in axes) else 0.0
        box["left"] = min(0.45, max(box["left"], (0.3 + ylabel + longest) / FIGSIZE[0]))
    fig.subplots_adjust(**box)
    for ax in axes:
        ax.set_xlabel(unit_text(ax.get_xlabel()))
        ax.set_ylabel(unit_text(ax.get_ylabel()))
        for axis, scale in ((ax.xaxis, ax.get_xscale()), (ax.yaxis, ax.get_yscale())):
            if scale == "log":
                axis.set_major_locator(LogLocator(subs=(1.0, 2.0, 5.0)))
                axis.set_major_formatter(FuncFormatter(_plain))
                axis.set_minor_formatter(NullFormatter())
        leg = ax.get_legend()
        if leg is not None:  # outside the axes, on the right: a legend covers no curve
            handles, labels = ax.get_legend_handles_labels()
            leg.remove()
            ax.legend(handles, [unit_text(x) for x in labels], loc="upper left", bbox_to_anchor=(1.02, 1.0),
                      borderaxespad=0.0, fontsize=8, frameon=False)


def svg_of(fig) -> str:
    """Return the figure as inline SVG text (no XML prolog; byte-stable)."""
    import matplotlib  # deferred: heavy, only charts need it

    buf = io.StringIO()
    with matplotlib.rc_context(SVG_RC):
        fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None})
    text = buf.getvalue()
    start = text.find("<svg")
    return text[start:] if start >= 0 else text


def chart(draw, caption: str, box: dict | None = None) -> str:
    """Run ``draw(fig)`` under the report's style and return a <figure> with inline SVG.

    ``box`` is the axes box (``left``, ``right``, ``bottom``, ``top`` as figure fractions); by default
    :data:`BOX_LEGEND` when the chart has a legend (placed outside, right), else :data:`BOX_PLAIN`.
    """
    import matplotlib  # deferred: heavy, only charts need it

    with matplotlib.rc_context(SVG_RC):
        fig = _figure()
        draw(fig)
        _fix_layout(fig, box)
        svg = svg_of(fig)
    return f"<figure>{svg}<figcaption>{esc(unit_text(caption))}</figcaption></figure>"
