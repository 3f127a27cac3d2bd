"""Scenarios side by side as text and as one self-contained HTML page (``sizing compare``).

Both take the plain data of :func:`sizing.views.compare_view` (one row per case, the curves,
what differs from the first case), so the command line and the workbench's Scenarios page show
the same numbers.  The HTML follows the report's conventions (:mod:`sizing.outputs.htmlbits`):
units as people write them, an inline SVG chart in a fixed axes box with the legend outside, no
script, no request to the network, the same bytes for the same inputs and date.
"""

from __future__ import annotations

import math

from ..texts import CAUTIONS
from ..units import sig
from ..version import __version__
from .htmlbits import CSS, chart, esc, num, section, unit_text

DIFF_MARK = "\u25c6"  # ◆ beside a value that differs from the first case's (seen without colour too)
PALETTE = ("#1f5fa8", "#c0392b", "#1e8449", "#7d3c98", "#b9770e", "#117a8b", "#5d6d7e", "#a93226")


def cell_text(value, unit: str, digits: int = 4, plain: bool = False) -> str:
    """One value as shown: a number with its unit (``'11.42 kg'``), text as given, 'n/a' for none.

    ``plain`` writes the number for a terminal (``sig``: ``1.575e+06``); otherwise as people do.

    >>> cell_text(11.4208, "kg"), cell_text(None, "kg"), cell_text(0.85, "-"), cell_text("case", "")
    ('11.42 kg', 'n/a', '0.85', 'case')
    """
    if value is None:
        return "n/a"
    if isinstance(value, str):
        return value
    x = float(value)
    if not math.isfinite(x):
        return "n/a"
    text = sig(x, digits) if plain else num(x, digits)
    if unit in ("", "-"):
        return text
    return f"{text} {unit}" if plain else f"{text} {unit_text(unit)}"


def text_table(view: dict) -> str:
    """Return the side-by-side table for a terminal: quantities down, cases across, '*' where different."""
    rows = view["rows"]
    header = ["", *[r["scenario"] for r in rows]]
    lines = [header]
    for col in view["columns"]:
        key, unit = col["key"], col["unit"]
        label = col["label"] + (f" [{unit}]" if unit not in ("", "-") else " [-]" if unit == "-" else "")
        cells = []
        for r in rows:
            text = cell_text(r[key], unit, plain=True)
            if unit not in ("", "-") and text.endswith(" " + unit):
                text = text[: -len(unit) - 1]
            cells.append(("* " if key in r["differs"] else "") + text)
        lines.append([("* " if view["differs"][key] else "  ") + label, *cells])
    widths = [max(len(str(line[i])) for line in lines) for i in range(len(header))]
    out = []
    for n, line in enumerate(lines):
        out.append("  ".join(str(c).ljust(widths[i]) if i == 0 else str(c).rjust(widths[i])
                             for i, c in enumerate(line)).rstrip())
        if n == 0:
            out.append("  ".join("-" * w for w in widths))
    out.append("* differs from the first case")
    return "\n".join(out)


def _table_html(view: dict) -> str:
    rows = view["rows"]
    out = ["<table class=\"compare\">",
           "<tr><th>quantity</th>" + "".join(f"<th>{esc(r['scenario'])}</th>" for r in rows) + "</tr>"]
    for col in view["columns"]:
        key, unit = col["key"], col["unit"]
        label = col["label"] + (f" [{unit}]" if unit else "")
        cells = []
        for i, r in enumerate(rows):
            text = cell_text(r[key], unit)
            if unit not in ("", "-") and text.endswith(" " + unit_text(unit)):
                text = text[: -len(unit_text(unit)) - 1]
            numeric = not isinstance(r[key], str)
            cls = ["n"] if numeric else []
            if key in r["differs"]:
                cls.append("diff")
                text = f"{DIFF_MARK} {text}"
            attr = f' class="{" ".join(cls)}"' if cls else ""
            cells.append(f"<td{attr}>{esc(text)}</td>")
        out.append(f"<tr><th>{esc(unit_text(label))}</th>" + "".join(cells) + "</tr>")
    out.append("</table>")
    return "\n".join(out)


def _chart_html(view: dict) -> str:
    curves = view["curves"]

    def draw(fig):
        ax = fig.add_subplot()
        top = 0.0
        for i, c in enumerate(curves):
            color = PALETTE[i % len(PALETTE)]
            ax.plot(c["kg_product"], c["coverage"], color=color, lw=1.6, label=c["scenario"])
            top = max([top, *[x for x in c["kg_product"] if math.isfinite(x)]])
            if c["target_kg_product"] is not None and c["target_coverage"] is not None:
                ax.plot([c["target_kg_product"]], [c["target_coverage"]], "D", color=color, ms=5)
        ax.set_xlabel("product charged per batch [kg]")
        ax.set_ylabel("coverage theta [-]")
        ax.set_ylim(0, 1.0)
        ax.set_xlim(0, top * 1.02 if top > 0 else 1.0)
        ax.legend(fontsize=7)

    return chart(draw, "Coverage of the interface at equilibrium against the product charged per batch [kg], "
                       "one line per case up to its CMC ceiling; a diamond marks each case's target "
                       "(before the safety margin).")


def render(view: dict, files: list[str], date: str) -> str:
    """Return the comparison as one self-contained HTML document.

    ``files`` are the case files as the user named them (one per row); ``date`` is the ISO date
    shown in the head (the page holds no other time, so the same inputs give the same bytes).
    """
    rows = view["rows"]
    names = "".join(f"<li><b>{esc(r['scenario'])}</b>: <code>{esc(f)}</code></li>" for r, f in zip(rows, files))
    warn = []
    for r in rows:
        for w in r["warnings"]:
            warn.append(f"<li><b>{esc(r['scenario'])}</b>: {esc(unit_text(w))}</li>")
        if not r["feasible"]:
            warn.append(f"<li><b>{esc(r['scenario'])}</b>: the target is not reachable at equilibrium "
                        "(the CMC caps the coverage); no dose is shown for it.</li>")
    differing = [c["label"] for c in view["columns"] if view["differs"][c["key"]]]
    summary = (f"<p>{len(rows)} cases; values that differ from the first case ({esc(rows[0]['scenario'])}) are "
               f"marked {DIFF_MARK} and shaded"
               + (f": {esc(', '.join(differing))}.</p>" if differing else "; none differ.</p>"))
    body = [
        section("cases", "Cases", f"<ul>{names}</ul>{summary}"),
        section("table", "Side by side", _table_html(view)
                + '<p class="muted">Doses are the equilibrium balance at each case\'s target, before its safety '
                  "margin and rounding (the plan adds them). Product is as delivered (the active divided by "
                  "its active fraction).</p>"),
        section("coverage", "Dose against coverage", _chart_html(view)),
    ]
    if warn:
        body.append(section("warnings", "Warnings", f'<div class="checks"><ul>{"".join(warn)}</ul></div>'))
    body.append(section("cautions", "Cautions", "".join(f'<p class="caution">{esc(c)}</p>' for c in CAUTIONS)))
    css = CSS + "td.diff{background:#fff3cd;font-weight:600}table.compare th{white-space:nowrap}\n"
    head = (f'<!DOCTYPE html>\n<html lang="en">\n<head>\n<meta charset="utf-8">\n'
            f"<title>Cases side by side</title>\n<style>{css}</style>\n</head>\n<body>\n"
            f"<h1>Cases side by side</h1>\n<p class=\"muted\">Compared by sizing {esc(__version__)} on {esc(date)}. "
            "Every quantity carries its unit; (-) marks a dimensionless number.</p>\n")
    return head + "\n".join(body) + "\n</body>\n</html>\n"
