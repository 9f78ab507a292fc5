"""The build sheet as one self-contained HTML file that prints on A4 or Letter in one or two pages.

Everything is inline (CSS, the schemdraw schematic, the matplotlib plots as SVG); no
scripts, fonts or links to fetch.  The printable width is the narrower of the two
papers (A4, 210 mm) less the margins; the content never asks for more.
"""

from __future__ import annotations

import re
from html import escape

from inventory.values import format_si

from . import plots
from .content import SAFETY, Sheet, figures, spec_line, yield_text
from .schematic_svg import schematic_svg

CSS = """
@page { margin: 12mm; }
* { box-sizing: border-box; }
body { font: 9.5pt/1.35 "DejaVu Sans", "Helvetica", sans-serif; color: #1d2530; margin: 0; }
.sheet { max-width: 186mm; margin: 0 auto; }
header { border-left: 5mm solid #1d3557; padding: 1mm 0 1mm 3mm; margin-bottom: 3mm; }
header h1 { font-size: 14pt; margin: 0; letter-spacing: 0.02em; }
header p { margin: 0.5mm 0 0; color: #4a5563; }
h2 { font-size: 10.5pt; margin: 3mm 0 1.5mm; color: #1d3557; border-bottom: 0.3mm solid #c8553d; }
.schematic svg { display: block; width: 100%; height: auto; max-height: 120mm; }
table { border-collapse: collapse; width: 100%; }
th, td { text-align: left; padding: 0.6mm 1.5mm; border-bottom: 0.2mm solid #d5dae1; vertical-align: top; }
th { font-weight: 600; background: #eef1f5; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; }
.tick { display: inline-block; width: 3.2mm; height: 3.2mm; border: 0.3mm solid #1d2530; }
.cols { display: grid; grid-template-columns: 1fr 1fr; gap: 4mm; }
.plot svg { width: 100%; height: auto; }
.plot p, .note { font-size: 8pt; color: #4a5563; margin: 0.5mm 0; }
ul { margin: 0; padding-left: 4.5mm; }
li { margin: 0.4mm 0; }
.warn li { color: #8a2c14; }
section { break-inside: avoid; }
"""


def _table(head: list[str], rows: list[list[str]], numeric=()) -> str:
    cls = [' class="num"' if i in numeric else "" for i in range(len(head))]
    out = ["<table><thead><tr>" + "".join(f"<th{c}>{escape(h)}</th>" for h, c in zip(head, cls)) + "</tr></thead><tbody>"]
    for r in rows:
        out.append("<tr>" + "".join(f"<td{c}>{cell}</td>" for cell, c in zip(r, cls)) + "</tr>")
    out.append("</tbody></table>")
    return "".join(out)


def _inline_svg(svg: str) -> str:
    """An SVG document for inline use: no prolog, scaled by CSS (width/height attributes dropped)."""
    svg = svg[svg.index("<svg"):]
    return re.sub(r'<svg([^>]*?)\s(width|height)="[^"]*"([^>]*?)\s(width|height)="[^"]*"', r"<svg\1\3", svg, count=1)


def meter_rows(sheet: Sheet) -> list[list[str]]:
    rows = []
    for m in sheet.meters:
        rows.append([f"{m['point']} ({escape(m['node'])})", f"{m['typical']:.2f} V",
                     f"{m['low']:.2f} V … {m['high']:.2f} V", '<span class="tick"></span>'])
    return rows


def render(sheet: Sheet) -> str:
    d = sheet.design
    spec = sheet.spec
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        f"<title>drawerfit build sheet: {escape(sheet.title)}</title>",
        f"<style>{CSS}</style></head><body><div class=\"sheet\">",
        "<header><h1>Build sheet: " + escape(d["topology"]) + " stage</h1>",
        f"<p>design {sheet.pick} of {escape(sheet.source)} · for {escape(spec_line(spec))}</p></header>",
        "<section><h2>Schematic</h2><div class=\"schematic\">" + _inline_svg(schematic_svg(sheet)) + "</div>",
        '<p class="note">Part names match the pick list and the SPICE netlist; R1_2 is the second part of '
        "R1's network. + marks the positive lead of a polarised capacitor.</p></section>",
        "<section><h2>Pick list (by drawer location)</h2>",
        _table(["location", "line", "part", "value", "qty", "for", "taken"],
               [[escape(r["location"] or "–"), str(r["line"]), escape(r["part"]), escape(r["value"]), str(r["qty"]),
                 escape(r["positions"]), '<span class="tick"></span>'] for r in sheet.picks], numeric=(1, 4)),
        "</section>",
        "<section><h2>Meter checks</h2>",
        '<p class="note">DC volts to ground, supply on, no signal. The range covers the transistor line\'s hFE '
        f"({_hfe(d)}) and {_temps(spec)} with nominal part values.</p>",
        _table(["test point", "expect", "range", "read"], meter_rows(sheet)),
        "</section>",
        "<section><h2>Predicted figures</h2>",
        _table(["figure", "at hFE min", "typical", "at hFE max"], [[escape(c) for c in r] for r in figures(sheet)],
               numeric=(1, 2, 3)),
        f'<p class="note">Monte Carlo yield (part tolerances, hFE, VBE spread, temperature): {yield_text(d)}.</p>',
        "</section>",
    ]
    resp = plots.response_svg(d, spec.get("low_cut_hz"))
    hist = plots.histogram_svg(d, spec)
    if resp or hist:
        parts.append('<section><h2>Response and spread</h2><div class="cols">')
        if resp:
            parts.append('<div class="plot">' + resp + "<p>Gain from the source's EMF to the load.</p></div>")
        if hist:
            mc = d.get("mc") or {}
            parts.append('<div class="plot">' + hist + f"<p>Gain of {len(mc.get('gain', []))} of the "
                         f"{mc.get('n', '?')} builds the yield counts; each build draws every part within its "
                         "tolerance, hFE, VBE and the temperature.</p></div>")
        parts.append("</div></section>")
    warnings = list(d.get("warnings") or [])
    if warnings:
        parts.append('<section><h2>Warnings</h2><ul class="warn">' +
                     "".join(f"<li>{escape(w)}</li>" for w in warnings) + "</ul></section>")
    parts.append("<section><h2>Safety</h2><ul>" + "".join(f"<li>{escape(c)}</li>" for c in cautions(sheet)) +
                 "</ul></section>")
    parts.append('<p class="note">Made by drawerfit. A design aid, not a substitute for your own checks.</p>')
    parts.append("</div></body></html>")
    return "\n".join(parts) + "\n"


def cautions(sheet: Sheet) -> list[str]:
    """The design's own cautions, then the general ones, each once."""
    out = []
    for c in list(sheet.design.get("cautions") or []) + list(SAFETY):
        if c not in out:
            out.append(c)
    return out


def _hfe(d: dict) -> str:
    h = d.get("hfe") or {}
    return f"{h['min']:g}…{h['max']:g}" if h.get("min") and h.get("max") else "as stocked"


def _temps(spec: dict) -> str:
    lo, hi = spec.get("temp_range_c") or (27, 27)
    return f"{format_si(lo, '°C')} to {format_si(hi, '°C')}"
