"""The plain-text build sheet of one design and the table of the top designs (CLI and app).

Reads only the design result document (DEVELOPERS.md); no physics here.
"""

from __future__ import annotations

from inventory.values import format_capacitance, format_resistance, format_si

ORDER = ("R1", "R2", "RB", "RC", "RE", "RE1", "RE2", "CIN", "COUT", "CE", "Q1")
GENERAL_CAUTIONS = (
    "Work with the supply off while fitting parts; set the bench supply's current limit low for the first power-up.",
    "These are low-voltage bench circuits; for anything mains-powered, local codes and licensed practice apply.",
)


def node_text(node: dict) -> str:
    """A network as text: 10k, (4k7 + 5k6), (22k ‖ 22k)."""
    if "series" in node or "parallel" in node:
        sep = " + " if "series" in node else " ‖ "
        return "(" + sep.join(node_text(n) for n in node.get("series", node.get("parallel"))) + ")"
    if "ohms" in node:
        return f"{format_resistance(node['ohms'])} [line {node['line']}]"
    return f"{format_capacitance(node['farads'])} [line {node['line']}]"


def _value(pos: str, part: dict) -> str:
    if pos == "Q1":
        return part.get("part", "?")
    if "ohms" in part:
        return format_resistance(part["ohms"])
    return format_capacitance(part["farads"])


def _pct(x) -> str:
    return "n/a" if x is None else f"{100 * x:.1f} %"


def table(doc: dict) -> str:
    """One line per design: parts, values, gain at the hFE ends, swing, yield."""
    rows = ["#  parts  gain (hFE min…max)   swing   f_low    yield   values"]
    for i, d in enumerate(doc.get("designs", []), 1):
        at = d.get("at_hfe", {})
        g = (f"{at['min']['gain']:+.2f}…{at['max']['gain']:+.2f}" if at else f"{d['predicted']['gain']:+.2f}")
        vals = " ".join(f"{p}={_value(p, d['parts'][p])}" for p in ORDER if p in d["parts"])
        p = d.get("predicted", {})
        rows.append(f"{i:<2} {d.get('score', {}).get('parts', '?'):>5}  {g:<20} {p.get('swing_pp', 0):5.2f} V "
                    f"{p.get('f_low', 0):6.2f} Hz {_pct(d.get('yield')):>7}   {vals}")
    return "\n".join(rows)


def sheet(design: dict, spec: dict | None = None) -> str:
    """The build sheet of one design."""
    p = design["predicted"]
    out = ["BUILD SHEET — " + design["topology"]]
    if spec:
        out.append(f"  for: gain {spec.get('gain')} ±{100 * spec.get('gain_tol', 0):g} %, "
                   f"{spec.get('supply_v')} V supply, load {format_si(spec.get('load_ohms'), 'Ω')}, "
                   f"source {format_si(spec.get('source_ohms'), 'Ω')}, {spec.get('swing_pp')} V p-p, "
                   f"f_low ≤ {spec.get('low_cut_hz')} Hz, Rin ≥ {format_si(spec.get('min_rin_ohms'), 'Ω')}")
    out.append("")
    out.append("Parts (pull from):")
    loc = design.get("locations", {})
    for pos in ORDER:
        part = design["parts"].get(pos)
        if part is None:
            continue
        if pos == "Q1":
            where = loc.get(str(part["line"]), "")
            out.append(f"  {pos:<5} {part['part']:<10} line {part['line']}" + (f", {where}" if where else ""))
            continue
        lines = sorted(_lines(part["network"]))
        wheres = ", ".join(f"line {n}" + (f" ({loc[str(n)]})" if loc.get(str(n)) else "") for n in lines)
        extra = ""
        if part.get("polarised"):
            extra = f"  polarised, {part.get('voltage_v', 0):g} V"
        out.append(f"  {pos:<5} {_value(pos, part):<10} {node_text(part['network'])}{extra}")
        out.append(f"        from {wheres}")
    out.append("")
    out.append("Check with a meter (DC, to ground, supply on, no signal):")
    out.append(f"  VB ≈ {p['vb']:.2f} V   VE ≈ {p['ve']:.2f} V   VC ≈ {p['vc']:.2f} V   IC ≈ {p['ic'] * 1e3:.3g} mA")
    out.append("")
    out.append("Predicted (typical hFE):")
    out.append(f"  gain {p['gain']:+.3f}   Rin {format_si(p['rin'], 'Ω')}   Rout {format_si(p['rout'], 'Ω')}   "
               f"f_low {p['f_low']:.3g} Hz   clip-free swing {p['swing_pp']:.2f} V p-p")
    thd = p.get("thd")
    out.append("  THD at the required swing: " + ("n/a" if thd is None else f"{100 * thd:.2f} %"))
    for c, a in design.get("at_hfe", {}).items():
        out.append(f"  at hFE {c}: gain {a['gain']:+.3f}, VC {a['vc']:.2f} V, swing {a['swing_pp']:.2f} V p-p, "
                   f"f_low {a['f_low']:.3g} Hz, Rin {format_si(a['rin'], 'Ω')}")
    out.append(f"  Monte Carlo yield (tolerances, hFE, VBE, temperature): {_pct(design.get('yield'))}")
    if design.get("warnings"):
        out.append("")
        out.append("Warnings:")
        out += [f"  ! {w}" for w in design["warnings"]]
    out.append("")
    out.append("Safety:")
    out += [f"  * {c}" for c in list(design.get("cautions", [])) + list(GENERAL_CAUTIONS)]
    return "\n".join(out)


def _lines(node: dict) -> set:
    if "series" in node or "parallel" in node:
        return set().union(*(_lines(n) for n in node.get("series", node.get("parallel"))))
    return {int(node["line"])}


def reasons(doc: dict) -> str:
    out = ["No design meets the specification:"] + [f"  - {w}" for w in doc.get("why", [])]
    hints = [h for h in doc.get("hints", []) if h.get("buy")]
    if hints:
        out.append("Shopping hint:")
        out += [f"  + buy {h['buy']}" + (f" (for {h['position']})" if h.get("position") else "") + f": {h['effect']}"
                for h in hints]
    return "\n".join(out)
