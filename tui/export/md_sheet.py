"""The build sheet as Markdown, for a notebook or a repository (the schematic as a text network list,
the SPICE netlist in a code block)."""

from __future__ import annotations

from .content import Sheet, figures, spec_line, value_text, yield_text
from .html_sheet import cautions


def _cell(text) -> str:
    return str(text).replace("|", "\\|").replace("\n", " ")


def _table(head, rows) -> list[str]:
    out = ["| " + " | ".join(head) + " |", "|" + "|".join("---" for _ in head) + "|"]
    out += ["| " + " | ".join(_cell(c) for c in r) + " |" for r in rows]
    return out


def network_text(node: dict) -> str:
    """R1 47k + R1_2 10k, (RC 4k7 + RC_2 1k) ‖ RC_3 10k."""
    for key, sep in (("series", " + "), ("parallel", " ‖ ")):
        if key in node:
            inner = [network_text(n) for n in node[key]]
            return sep.join(f"({t})" if (" + " in t or " ‖ " in t) else t for t in inner)
    return f"{node['part'].name} {node['part'].value}"


def render(sheet: Sheet) -> str:
    d = sheet.design
    out = [f"# Build sheet: {d['topology']} stage", "", f"Design {sheet.pick} of `{sheet.source}`, "
           f"for {spec_line(sheet.spec)}.", "", "## Positions", ""]
    rows = []
    for pos in sheet.positions():
        part = d["parts"][pos]
        how = network_text(sheet.networks[pos]) if pos in sheet.networks else f"line {part.get('line')}"
        extra = "polarised, + toward " + sheet.positive.get(pos, "?") if part.get("polarised") else ""
        rows.append([pos, value_text(pos, part), how, extra])
    out += _table(["position", "value", "made of", "note"], rows)
    out += ["", "## Pick list (by drawer location)", ""]
    out += _table(["location", "line", "part", "value", "qty", "for", "taken"],
                  [[r["location"] or "–", r["line"], r["part"], r["value"], r["qty"], r["positions"], "[ ]"]
                   for r in sheet.picks])
    out += ["", "## Meter checks", "", "DC volts to ground, supply on, no signal; the range covers hFE and "
            "temperature with nominal parts.", ""]
    out += _table(["test point", "expect", "range", "read"],
                  [[f"{m['point']} ({m['node']})", f"{m['typical']:.2f} V", f"{m['low']:.2f} V … {m['high']:.2f} V",
                    "[ ]"] for m in sheet.meters])
    out += ["", "## Predicted figures", ""]
    out += _table(["figure", "at hFE min", "typical", "at hFE max"], figures(sheet))
    out += ["", f"Monte Carlo yield (part tolerances, hFE, VBE spread, temperature): {yield_text(d)}."]
    if d.get("warnings"):
        out += ["", "## Warnings", ""] + [f"- {w}" for w in d["warnings"]]
    out += ["", "## Safety", ""] + [f"- {c}" for c in cautions(sheet)]
    out += ["", "## SPICE netlist", "", "The stage's own parts and supply; add a source, a load and analyses to "
            "simulate it (see drawerfit's README).", "", "```spice", sheet.netlist.rstrip(), "```", ""]
    return "\n".join(out)
