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
from .chain_content import hfe_text, stage_rows
from .content import SAFETY, Sheet, figures, spec_line, yield_text
from .schematic_svg import schematic_svg, stage_svgs

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
.chain .schematic svg { max-height: 100mm; }
.schematic h3 { font-size: 9.5pt; margin: 2mm 0 1mm; color: #4a5563; }
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
.chain section.long { break-inside: auto; }
tr { break-inside: avoid; }
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


def point_text(m: dict) -> str:
    """"VB (base)", a chain's "Q2 VB (base2)" (the netlist's node)."""
    q = f"{m['transistor']} " if m.get("transistor") else ""
    return f"{q}{m['point']} ({m['node']})"


def meter_rows(sheet: Sheet) -> list[list[str]]:
    rows = []
    for m in sheet.meters:
        rows.append([escape(point_text(m)), f"{m['typical']:.2f} V",
                     f"{m['low']:.2f} V … {m['high']:.2f} V", '<span class="tick"></span>'])
    return rows


def _schematic(sheet: Sheet) -> list[str]:
    if sheet.chain is None:
        return ["<section><h2>Schematic</h2><div class=\"schematic\">" + _inline_svg(schematic_svg(sheet)) + "</div>",
                '<p class="note">Part names match the pick list and the SPICE netlist; R1_2 is the second part of '
                "R1's network. + marks the positive lead of a polarised capacitor.</p></section>"]
    out = ["<section><h2>Schematic</h2><div class=\"schematic cols\">"]
    for view, svg in zip(sheet.views, stage_svgs(sheet), strict=True):
        what = (f"Stage 1, {view.design['topology']}: its output x feeds stage 2 through CIN_B" if view.index == 0 else
                f"Stage 2, {view.design['topology']}: its input is x; its positions end in _B")
        out.append(f"<div><h3>{escape(what)}</h3>" + _inline_svg(svg) + "</div>")
    out.append('</div><p class="note">Join the two drawings at x. Both stages share the supply and 0 V. Part names '
               "match the pick list and the SPICE netlist; R1_B_2 is the second part of R1_B's network. + marks the "
               "positive lead of a polarised capacitor.</p></section>")
    return out


def _stages(sheet: Sheet) -> list[str]:
    if sheet.chain is None:
        return []
    return ["<section><h2>Stages</h2>",
            _table(["stage", "kind", "gain", "Rin", "Rout", "IC", "clip-free swing", "positions"],
                   [[escape(c) for c in r] for r in stage_rows(sheet)], numeric=(2, 3, 4, 5, 6)),
            '<p class="note">At typical hFE. Each stage\'s gain is as the chain sees it (stage 1 from the source\'s '
            "EMF to x, stage 2 from x to the load); their product is the chain's gain.</p></section>"]


def render(sheet: Sheet) -> str:
    d = sheet.design
    spec = sheet.spec
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        f"<title>drawerfit build sheet: {escape(sheet.title)}</title>",
        f"<style>{CSS}</style></head><body><div class=\"sheet{' chain' if sheet.chain is not None else ''}\">",
        "<header><h1>Build sheet: " + escape(sheet.what) + "</h1>",
        f"<p>design {sheet.pick} of {escape(sheet.source)} · for {escape(spec_line(spec))}</p></header>",
        *_schematic(sheet),
        *_stages(sheet),
        '<section class="long"><h2>Pick list (by drawer location)</h2>',
        _table(["location", "line", "part", "value", "qty", "for", "taken"],
               [[escape(r["location"] or "–"), str(r["line"]), escape(r["part"]), escape(r["value"]), str(r["qty"]),
                 escape(r["positions"]), '<span class="tick"></span>'] for r in sheet.picks], numeric=(1, 4)),
        "</section>",
        "<section><h2>Meter checks</h2>",
        f'<p class="note">DC volts to ground, supply on, no signal. {escape(meter_note(sheet))}</p>',
        _table(["test point", "expect", "range", "read"], meter_rows(sheet)),
        "</section>",
        "<section><h2>Predicted figures" + (" of the whole chain" if sheet.chain is not None else "") + "</h2>",
        _table(figure_head(sheet), [[escape(c) for c in r] for r in figures(sheet)], numeric=(1, 2, 3)),
        f'<p class="note">{escape(yield_note(sheet))}</p>',
        "</section>",
    ]
    resp = plots.response_svg(d, spec.get("low_cut_hz"))
    hist = plots.histogram_svg(d, spec)
    warnings = list(d.get("warnings") or [])
    tail = []
    if warnings:
        tail.append('<section><h2>Warnings</h2><ul class="warn">' +
                    "".join(f"<li>{escape(w)}</li>" for w in warnings) + "</ul></section>")
    tail.append("<section><h2>Safety</h2><ul>" + "".join(f"<li>{escape(c)}</li>" for c in cautions(sheet)) +
                "</ul></section>")
    resp_div = ('<div class="plot">' + resp + "<p>Gain from the source's EMF to the load.</p></div>") if resp else ""
    if resp and not hist:  # no Monte Carlo samples kept (a chain saved before chains had a yield): the
        # warnings and cautions beside the response
        parts.append('<div class="cols"><section><h2>Response</h2>' + resp_div + "</section><div>" + "".join(tail) +
                     "</div></div>")
        tail = []
    elif resp or hist:
        parts.append('<section><h2>Response and spread</h2><div class="cols">' + resp_div)
        if hist:
            mc = d.get("mc") or {}
            parts.append('<div class="plot">' + hist + f"<p>Gain of {len(mc.get('gain', []))} of the "
                         f"{mc.get('n', '?')} builds the yield counts; each build draws every part within its "
                         "tolerance, hFE, VBE and the temperature.</p></div>")
        parts.append("</div></section>")
    parts += tail
    parts.append('<p class="note">Made by drawerfit. A design aid, not a substitute for your own checks.</p>')
    parts.append("</div></body></html>")
    return "\n".join(parts) + "\n"


def meter_note(sheet: Sheet) -> str:
    """What the meter ranges span."""
    if sheet.chain is not None:
        return (f"The range covers each transistor line's hFE ({hfe_text(sheet.design)}, each end of one with each "
                f"end of the other) and {_temps(sheet.spec)} with nominal part values; the node names are the "
                "SPICE netlist's (1: stage 1, 2: stage 2).")
    return (f"The range covers the transistor line's hFE ({_hfe(sheet.design)}) and {_temps(sheet.spec)} "
            "with nominal part values.")


def figure_head(sheet: Sheet) -> list[str]:
    if sheet.chain is not None:
        return ["figure", "both at hFE min", "typical", "both at hFE max"]
    return ["figure", "at hFE min", "typical", "at hFE max"]


def yield_note(sheet: Sheet) -> str:
    if sheet.chain is not None:
        return ("Gain from the source's EMF to the load, Rin at the chain's input, Rout and the swing at the load, "
                "THD of the whole chain; IC is Q1's. Every figure was checked at each transistor's hFE ends and the "
                "temperature range. Monte Carlo yield of the whole chain (part tolerances, each transistor's hFE and "
                f"VBE spread, one temperature for both stages): {yield_text(sheet.design)}.")
    return f"Monte Carlo yield (part tolerances, hFE, VBE spread, temperature): {yield_text(sheet.design)}."


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
