"""HTML pieces of the report: the style sheet, escaping, numbers with units, tables and SVG charts.

Numbers and units are shown as people write them (``1 575 000 m²``, ``0.215 µm``, ``25 °C``,
``2.5 × 10⁻⁵``), never ``m**3`` or ``1.575e+06``: :func:`unit_text` and :func:`num`.

Simple charts (lines, steps, points, bars; :func:`hand_drawn`) are written as SVG here, the others
by matplotlib's SVG backend (no pyplot, no display), imported only when such a chart is drawn;
all in one fixed layout (no layout engine): the axes keep the same place in every chart, the
legend sits outside them on the right (it covers no data), tick labels are plain text (no
mathtext; log axes labelled 0.1, 0.2, 0.5, 1 ...).  A fixed ``svg.hashsalt`` and no date in the
metadata make the SVG byte-identical for the same inputs.
"""

from __future__ import annotations

import html
import io
import math
import re

import numpy as np

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
    A ``draw`` marked :func:`hand_drawn` gets a :class:`HandFigure` and no matplotlib is imported.
    """
    if getattr(draw, "hand_drawn", False):  # a simple chart drawn without matplotlib (start-up)
        fig = HandFigure()
        draw(fig)
        return f"<figure>{fig.svg(box)}<figcaption>{esc(unit_text(caption))}</figcaption></figure>"
    import matplotlib  # deferred: heavy, only charts need it

    with matplotlib.rc_context(SVG_RC):
        fig = _figure()
        draw(fig)
        _fix_layout(fig, box)
        svg = svg_of(fig)
    return f"<figure>{svg}<figcaption>{esc(unit_text(caption))}</figcaption></figure>"


# ---------------------------------------------------------------------------------------------
# charts drawn by hand: simple line, step, point and bar charts without matplotlib (start-up)

_PX = 100 / 72  # pixels per point at the figure's 100 dpi
_DASH = {"-": None, "solid": None, "--": (3.7, 1.6), "dashed": (3.7, 1.6), ":": (1.0, 1.65),
         "dotted": (1.0, 1.65), "-.": (6.4, 1.6, 1.0, 1.6), "dashdot": (6.4, 1.6, 1.0, 1.6)}
_FONT = "DejaVu Sans,Verdana,Arial,sans-serif"


def hand_drawn(draw):
    """Mark a chart's ``draw(fig)`` as drawn by hand (:class:`HandFigure`), without matplotlib.

    ``draw`` uses the small matplotlib-like subset :class:`HandAxes` offers; :func:`chart` then
    writes the SVG itself in the same fixed layout (axes box, legend outside on the right, plain
    tick labels), which spares a plan the matplotlib import (about half a second).
    """
    draw.hand_drawn = True
    return draw


def _fmt(v: float) -> str:
    return f"{v:.2f}".rstrip("0").rstrip(".")


def _nice_ticks(lo: float, hi: float, most: int = 8) -> list[float]:
    """Ticks at 1, 2, 2.5 or 5 times a power of ten, at most ``most`` of them, within [lo, hi]."""
    if not (math.isfinite(lo) and math.isfinite(hi)) or hi <= lo:
        return [lo] if math.isfinite(lo) else []
    raw = (hi - lo) / (most - 1)
    mag = 10 ** math.floor(math.log10(raw))
    step = next(m * mag for m in (1, 2, 2.5, 5, 10) if m * mag >= raw)
    first = math.ceil(lo / step - 1e-9)
    ticks = []
    k = first
    while k * step <= hi * (1 + 1e-12) + 1e-12 * step:
        ticks.append(0.0 if abs(k * step) < 1e-12 * step else k * step)
        k += 1
    return ticks


def _log_ticks(lo: float, hi: float) -> list[float]:
    """Log ticks at 1, 2, 5 per decade (1 only when that gives more than 12)."""
    for subs in ((1.0, 2.0, 5.0), (1.0,)):
        ticks = [m * 10.0 ** e for e in range(math.floor(math.log10(lo)) - 1, math.ceil(math.log10(hi)) + 1)
                 for m in subs if lo * (1 - 1e-9) <= m * 10.0 ** e <= hi * (1 + 1e-9)]
        if len(ticks) <= 12:
            return ticks
    return ticks


class HandAxes:
    """One axes of a hand-drawn chart: records what a draw function adds, then writes SVG."""

    def __init__(self):
        self.items = []  # (kind, data, style)
        self.xlabel = self.ylabel = ""
        self.scale = {"x": "linear", "y": "linear"}
        self.lim = {"x": [None, None], "y": [None, None]}
        self.categories: list[str] = []
        self.inverted = False
        self.legend_on = False
        self.legend_size = 8.0
        self._cycle = 0

    # -- the matplotlib-like subset ------------------------------------------------------------
    def _color(self, kw):
        if kw.get("color"):
            return kw["color"]
        c = ("#1f77b4", "#ff7f0e", "#2ca02c", "#d62728", "#9467bd")[self._cycle % 5]
        self._cycle += 1
        return c

    def plot(self, x, y, fmt: str = "-", **kw):
        x, y = [float(v) for v in np.ravel(x)], [float(v) for v in np.ravel(y)]
        style = {"color": self._color(kw), "lw": kw.get("lw", kw.get("linewidth", 1.5)),
                 "ls": kw.get("ls", "-"), "label": kw.get("label"), "ms": kw.get("ms", 6.0)}
        marker = fmt if fmt in ("o", "D") else None
        self.items.append(("points" if marker else "line", (x, y), {**style, "marker": marker}))

    def step(self, x, y, where: str = "pre", **kw):
        x, y = [float(v) for v in np.ravel(x)], [float(v) for v in np.ravel(y)]
        if where != "mid":
            raise NotImplementedError("hand-drawn step: only where='mid'")
        xs, ys = [x[0]], [y[0]]
        for i in range(len(x) - 1):
            m = 0.5 * (x[i] + x[i + 1])
            xs += [m, m]
            ys += [y[i], y[i + 1]]
        xs.append(x[-1])
        ys.append(y[-1])
        self.items.append(("line", (xs, ys), {"color": self._color(kw), "lw": kw.get("lw", 1.5),
                                              "ls": kw.get("ls", "-"), "label": kw.get("label")}))

    def barh(self, labels, widths, left=0.0, **kw):
        labels = [str(v) for v in np.ravel(labels)]
        widths = np.ravel(widths).astype(float)
        left = np.broadcast_to(np.asarray(left, dtype=float), widths.shape)
        for lab in labels:
            if lab not in self.categories:
                self.categories.append(lab)
        bars = [(self.categories.index(lab), float(lo), float(lo + w)) for lab, lo, w in zip(labels, left, widths)]
        self.items.append(("bars", bars, {"color": self._color(kw), "label": kw.get("label"),
                                          "alpha": kw.get("alpha", 1.0)}))

    def axhline(self, y, **kw):
        self.items.append(("hline", float(y), {"color": self._color(kw), "lw": kw.get("lw", 1.5),
                                               "ls": kw.get("ls", "-"), "label": kw.get("label")}))

    def axvline(self, x, **kw):
        self.items.append(("vline", float(x), {"color": self._color(kw), "lw": kw.get("lw", 1.5),
                                               "ls": kw.get("ls", "-"), "label": kw.get("label")}))

    def axvspan(self, x0, x1, **kw):
        self.items.append(("vspan", (float(x0), float(x1)), {"color": self._color(kw), "label": kw.get("label"),
                                                             "alpha": kw.get("alpha", 1.0)}))

    def set_xlabel(self, text):
        self.xlabel = str(text)

    def set_ylabel(self, text):
        self.ylabel = str(text)

    def set_xscale(self, scale):
        self.scale["x"] = scale

    def set_yscale(self, scale):
        self.scale["y"] = scale

    def set_xlim(self, left=None, right=None):
        self.lim["x"] = [left, right]

    def set_ylim(self, bottom=None, top=None):
        self.lim["y"] = [bottom, top]

    def invert_yaxis(self):
        self.inverted = True

    def legend(self, *_, fontsize=8, **__):
        self.legend_on = True
        self.legend_size = float(fontsize)

    # -- limits and SVG ------------------------------------------------------------------------
    def _data(self, axis: str) -> list[float]:
        vals = []
        for kind, data, _ in self.items:
            if kind in ("line", "points"):
                vals += data[0] if axis == "x" else data[1]
            elif kind == "bars" and axis == "x":
                vals += [v for _, lo, hi in data for v in (lo, hi)]
            elif (kind == "hline" and axis == "y") or (kind == "vline" and axis == "x"):
                vals.append(data)
            elif kind == "vspan" and axis == "x":
                vals += list(data)
        if self.scale[axis] == "log":
            return [v for v in vals if math.isfinite(v) and v > 0]
        return [v for v in vals if math.isfinite(v)]

    def limits(self, axis: str) -> tuple[float, float]:
        """The axis range: given limits, else the data with 5 % margins (in log space on a log axis)."""
        if axis == "y" and self.categories:
            lo, hi = -0.4 - 0.05 * len(self.categories), len(self.categories) - 0.6 + 0.05 * len(self.categories)
            return (hi, lo) if self.inverted else (lo, hi)
        vals = self._data(axis) or [0.0, 1.0]
        log = self.scale[axis] == "log"
        f = (lambda v: math.log10(v)) if log else (lambda v: v)
        lo, hi = f(min(vals)), f(max(vals))
        if hi == lo:
            lo, hi = lo - (1.0 if log else max(abs(lo) * 0.05, 0.05)), hi + (1.0 if log else max(abs(hi) * 0.05, 0.05))
        pad = 0.05 * (hi - lo)
        bars = axis == "x" and any(k == "bars" for k, _, _ in self.items) and min(vals) >= 0
        lo, hi = (lo if bars else lo - pad), hi + pad
        if log:
            lo, hi = 10 ** lo, 10 ** hi
        given = self.lim[axis]
        lo = lo if given[0] is None else float(given[0])
        hi = hi if given[1] is None else float(given[1])
        return lo, hi

    def svg(self, x0: float, y0: float, x1: float, y1: float, clip: str) -> list[str]:
        """SVG elements of the axes in the pixel box (x0, y0) top left to (x1, y1) bottom right."""
        (xlo, xhi), (ylo, yhi) = self.limits("x"), self.limits("y")
        logx, logy = self.scale["x"] == "log", self.scale["y"] == "log"

        def sx(v):
            if logx:
                return x0 + (math.log10(v) - math.log10(xlo)) / (math.log10(xhi) - math.log10(xlo)) * (x1 - x0)
            return x0 + (v - xlo) / (xhi - xlo) * (x1 - x0)

        def sy(v):
            if logy:
                return y1 - (math.log10(v) - math.log10(ylo)) / (math.log10(yhi) - math.log10(ylo)) * (y1 - y0)
            return y1 - (v - ylo) / (yhi - ylo) * (y1 - y0)

        def ok(v, log):
            return math.isfinite(v) and (v > 0 or not log)

        fs = 9 * _PX
        out = [f'<rect x="{_fmt(x0)}" y="{_fmt(y0)}" width="{_fmt(x1 - x0)}" height="{_fmt(y1 - y0)}" '
               'fill="#ffffff"/>']
        # grid and ticks
        xt = _log_ticks(xlo, xhi) if logx else _nice_ticks(min(xlo, xhi), max(xlo, xhi))
        for v in xt:
            p = _fmt(sx(v))
            out.append(f'<line x1="{p}" y1="{_fmt(y0)}" x2="{p}" y2="{_fmt(y1)}" stroke="#b0b0b0" '
                       'stroke-opacity="0.3" stroke-width="0.8"/>')
            out.append(f'<line x1="{p}" y1="{_fmt(y1)}" x2="{p}" y2="{_fmt(y1 + 3.5 * _PX)}" stroke="#000" '
                       'stroke-width="0.8"/>')
            out.append(f'<text x="{p}" y="{_fmt(y1 + 3.5 * _PX + fs)}" text-anchor="middle">{esc(_plain(v))}</text>')
        if self.categories:
            yt = [(float(i), lab) for i, lab in enumerate(self.categories)]
        else:
            yt = [(v, _plain(v)) for v in (_log_ticks(ylo, yhi) if logy else _nice_ticks(min(ylo, yhi), max(ylo, yhi)))]
        for v, lab in yt:
            p = _fmt(sy(v))
            if not self.categories:
                out.append(f'<line x1="{_fmt(x0)}" y1="{p}" x2="{_fmt(x1)}" y2="{p}" stroke="#b0b0b0" '
                           'stroke-opacity="0.3" stroke-width="0.8"/>')
            out.append(f'<line x1="{_fmt(x0 - 3.5 * _PX)}" y1="{p}" x2="{_fmt(x0)}" y2="{p}" stroke="#000" '
                       'stroke-width="0.8"/>')
            out.append(f'<text x="{_fmt(x0 - 3.5 * _PX - 3)}" y="{_fmt(sy(v) + 0.35 * fs)}" '
                       f'text-anchor="end">{esc(unit_text(lab))}</text>')
        # data, clipped to the axes
        out.append(f'<g clip-path="url(#{clip})">')
        for kind, data, st in self.items:
            dash = _DASH.get(st.get("ls", "-"))
            stroke = (f' stroke="{st["color"]}" stroke-width="{_fmt(st.get("lw", 1.5) * _PX)}" fill="none"'
                      + (f' stroke-dasharray="{",".join(_fmt(d * st.get("lw", 1.5) * _PX) for d in dash)}"'
                         if dash else ""))
            if kind == "line":
                segs, cur = [], []
                for a, b in zip(*data):
                    if ok(a, logx) and ok(b, logy):
                        cur.append(f"{_fmt(sx(a))},{_fmt(sy(b))}")
                    elif cur:
                        segs.append(cur)
                        cur = []
                segs += [cur] if cur else []
                out += [f'<polyline points="{" ".join(s)}"{stroke} stroke-linejoin="round"/>' for s in segs]
            elif kind == "points":
                r = st["ms"] * _PX / 2
                for a, b in zip(*data):
                    if ok(a, logx) and ok(b, logy):
                        out.append(_marker(st["marker"], sx(a), sy(b), r, st["color"]))
            elif kind == "bars":
                for pos, lo, hi in data:
                    top, bot = sy(pos - 0.4), sy(pos + 0.4)
                    out.append(f'<rect x="{_fmt(min(sx(lo), sx(hi)))}" y="{_fmt(min(top, bot))}" '
                               f'width="{_fmt(abs(sx(hi) - sx(lo)))}" height="{_fmt(abs(bot - top))}" '
                               f'fill="{st["color"]}" fill-opacity="{st["alpha"]:g}"/>')
            elif kind == "hline" and ok(data, logy):
                out.append(f'<line x1="{_fmt(x0)}" y1="{_fmt(sy(data))}" x2="{_fmt(x1)}" y2="{_fmt(sy(data))}"{stroke}/>')
            elif kind == "vline" and ok(data, logx):
                out.append(f'<line x1="{_fmt(sx(data))}" y1="{_fmt(y0)}" x2="{_fmt(sx(data))}" y2="{_fmt(y1)}"{stroke}/>')
            elif kind == "vspan":
                a, b = sorted(sx(v) for v in data)
                out.append(f'<rect x="{_fmt(a)}" y="{_fmt(y0)}" width="{_fmt(b - a)}" height="{_fmt(y1 - y0)}" '
                           f'fill="{st["color"]}" fill-opacity="{st["alpha"]:g}"/>')
        out.append("</g>")
        out.append(f'<rect x="{_fmt(x0)}" y="{_fmt(y0)}" width="{_fmt(x1 - x0)}" height="{_fmt(y1 - y0)}" '
                   'fill="none" stroke="#000" stroke-width="0.8"/>')
        # axis labels
        if self.xlabel:
            out.append(f'<text x="{_fmt((x0 + x1) / 2)}" y="{_fmt(y1 + 3.5 * _PX + 2.3 * fs)}" '
                       f'text-anchor="middle">{esc(unit_text(self.xlabel))}</text>')
        if self.ylabel:
            cx, cy = 0.55 * fs + 4, (y0 + y1) / 2
            out.append(f'<text x="{_fmt(cx)}" y="{_fmt(cy)}" text-anchor="middle" '
                       f'transform="rotate(-90 {_fmt(cx)} {_fmt(cy)})">{esc(unit_text(self.ylabel))}</text>')
        return out

    def legend_svg(self, x: float, y: float) -> list[str]:
        """The legend's SVG elements, top left at (x, y) (outside the axes, on the right)."""
        if not self.legend_on:
            return []
        fs = self.legend_size * _PX
        out, row = [], 0
        for kind, _, st in self.items:
            if not st.get("label"):
                continue
            cy = y + (row + 0.5) * 1.5 * fs
            if kind in ("bars", "vspan"):
                out.append(f'<rect x="{_fmt(x)}" y="{_fmt(cy - 0.35 * fs)}" width="{_fmt(2 * fs)}" '
                           f'height="{_fmt(0.7 * fs)}" fill="{st["color"]}" fill-opacity="{st.get("alpha", 1.0):g}"/>')
            elif kind == "points":
                out.append(_marker(st["marker"], x + fs, cy, st["ms"] * _PX / 2, st["color"]))
            else:
                dash = _DASH.get(st.get("ls", "-"))
                out.append(f'<line x1="{_fmt(x)}" y1="{_fmt(cy)}" x2="{_fmt(x + 2 * fs)}" y2="{_fmt(cy)}" '
                           f'stroke="{st["color"]}" stroke-width="{_fmt(st.get("lw", 1.5) * _PX)}"'
                           + (f' stroke-dasharray="{",".join(_fmt(d * st.get("lw", 1.5) * _PX) for d in dash)}"'
                              if dash else "") + "/>")
            out.append(f'<text x="{_fmt(x + 2.6 * fs)}" y="{_fmt(cy + 0.35 * fs)}" '
                       f'font-size="{_fmt(fs)}">{esc(unit_text(st["label"]))}</text>')
            row += 1
        return out


def _marker(kind: str, x: float, y: float, r: float, color: str) -> str:
    if kind == "D":
        pts = f"{_fmt(x)},{_fmt(y - r)} {_fmt(x + r)},{_fmt(y)} {_fmt(x)},{_fmt(y + r)} {_fmt(x - r)},{_fmt(y)}"
        return f'<polygon points="{pts}" fill="{color}"/>'
    return f'<circle cx="{_fmt(x)}" cy="{_fmt(y)}" r="{_fmt(r)}" fill="{color}"/>'


class HandFigure:
    """A figure of one :class:`HandAxes`, written as SVG in the report's fixed layout."""

    def __init__(self):
        self.axes: list[HandAxes] = []

    def add_subplot(self, *_):
        ax = HandAxes()
        self.axes.append(ax)
        return ax

    def svg(self, box: dict | None = None) -> str:
        w, h = FIGSIZE[0] * 100, FIGSIZE[1] * 100
        legends = [ax for ax in self.axes if ax.legend_on and any(st.get("label") for _, _, st in ax.items)]
        if box is None:
            box = dict(BOX_LEGEND if legends else BOX_PLAIN)
            longest = max((len(c) * 0.62 * 9 / 72 for ax in self.axes for c in ax.categories), default=0.0)
            ylabel = 0.25 if any(ax.ylabel for ax in self.axes) else 0.0
            box["left"] = min(0.45, max(box["left"], (0.3 + ylabel + longest) / FIGSIZE[0]))
        x0, x1 = box["left"] * w, box["right"] * w
        y0, y1 = (1 - box["top"]) * h, (1 - box["bottom"]) * h
        clip = f"hc{int(x0)}x{int(y0)}x{int(x1)}x{int(y1)}"
        body = []
        for ax in self.axes:
            body += ax.svg(x0, y0, x1, y1, clip) + ax.legend_svg(x1 + 0.02 * (x1 - x0), y0)
        return (f'<svg xmlns="http://www.w3.org/2000/svg" width="{_fmt(w)}" height="{_fmt(h)}" '
                f'viewBox="0 0 {_fmt(w)} {_fmt(h)}" font-family="{_FONT}" font-size="{_fmt(9 * _PX)}">'
                f'<defs><clipPath id="{clip}"><rect x="{_fmt(x0)}" y="{_fmt(y0)}" width="{_fmt(x1 - x0)}" '
                f'height="{_fmt(y1 - y0)}"/></clipPath></defs>'
                '<rect width="100%" height="100%" fill="#ffffff"/>' + "".join(body) + "</svg>")
