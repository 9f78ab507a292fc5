"""The build sheet as Markdown, for a notebook or a repository (the schematic as a text network list,
the SPICE netlist in a code block)."""

from __future__ import annotations

from .chain_content import stage_rows
from .content import Sheet, figures, spec_line, value_text
from .html_sheet import cautions, figure_head, meter_note, point_text, yield_note


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
    out = [f"# Build sheet: {sheet.what}", "", f"Design {sheet.pick} of `{sheet.source}`, "
           f"for {spec_line(sheet.spec)}.", ""]
    if sheet.chain is not None:
        out += ["## Stages", "", "At typical hFE. Stage 1's output x feeds stage 2 through CIN_B; stage 2's positions "
                "end in _B. Each stage's gain is as the chain sees it (their product is the chain's gain).", ""]
        out += _table(["stage", "kind", "gain", "Rin", "Rout", "IC", "clip-free swing", "positions"], stage_rows(sheet))
        out += ["", "## Schematic", "", "```text", _text_drawing(sheet), "```", ""]
    out += ["## Positions", ""]
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
    out += ["", "## Meter checks", "", f"DC volts to ground, supply on, no signal. {meter_note(sheet)}", ""]
    out += _table(["test point", "expect", "range", "read"],
                  [[point_text(m), f"{m['typical']:.2f} V", f"{m['low']:.2f} V … {m['high']:.2f} V",
                    "[ ]"] for m in sheet.meters])
    out += ["", "## Predicted figures" + (" of the whole chain" if sheet.chain is not None else ""), ""]
    out += _table(figure_head(sheet), figures(sheet))
    out += ["", yield_note(sheet)]
    if d.get("warnings"):
        out += ["", "## Warnings", ""] + [f"- {w}" for w in d["warnings"]]
    out += ["", "## Safety", ""] + [f"- {c}" for c in cautions(sheet)]
    out += ["", "## SPICE netlist", "", f"The {'chain' if sheet.chain is not None else 'stage'}'s own parts and supply; add a source, a load and analyses to "
            "simulate it (see drawerfit's README).", "", "```spice", sheet.netlist.rstrip(), "```", ""]
    return "\n".join(out)


def _text_drawing(sheet: Sheet) -> str:
    """A chain's two stages as text (tui/schematic_chain.py, the app's drawing)."""
    from ..schematic_chain import draw_chain

    polarised = frozenset(p for p, part in sheet.design["parts"].items() if part.get("polarised"))
    return draw_chain(sheet.design, supply_v=sheet.spec.get("supply_v"), source_ohms=sheet.spec.get("source_ohms"),
                      load_ohms=sheet.spec.get("load_ohms"), polarised=polarised)
