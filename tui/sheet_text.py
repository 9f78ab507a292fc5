"""The plain-text build sheet of one design and the table of the top designs (CLI and app).

Reads only the design result document (DEVELOPERS.md); no physics here.  Figures are
spelled by `widgets.figures` (part values RKM, everything else SI with units).
"""

from __future__ import annotations

from .widgets import figures

ORDER = ("R1", "R2", "RB", "RC", "RE", "RE1", "RE2", "CIN", "COUT", "CE", "Q1")
# A chain's second stage: its positions with the suffix _B (CIN_B the interstage capacitor), Q2.
ORDER = ORDER + tuple(p + "_B" for p in ORDER[:-1]) + ("Q2",)
TRANSISTORS = ("Q1", "Q2")
FIT_WITH_POWER_OFF = ("Work with the supply off while fitting parts; set the bench supply's current limit low "
                      "for the first power-up.")
LOCAL_CODES = "These are low-voltage bench circuits; for anything mains-powered, local codes and licensed practice apply."
# What a design's own cautions say when they already cover the local-codes line (solver wording varies).
_CODES_WORDS = ("local codes", "licensed practice")
BEST_FOR = {"parts": "fewest parts", "clean": "cleanest", "robust": "most robust", "frugal": "least current",
            "balanced": "balanced"}


def cautions(design: dict) -> list[str]:
    """The safety lines for a sheet: the design's own, then the general ones it does not already say."""
    out: list[str] = []
    for c in [*design.get("cautions", []), FIT_WITH_POWER_OFF]:
        if isinstance(c, str) and c not in out:
            out.append(c)
    if not any(w in c.lower() for c in out for w in _CODES_WORDS):
        out.append(LOCAL_CODES)
    return out


def leaves(node: dict) -> list[dict]:
    """The drawer parts of a network node, in drawing order."""
    if "series" in node or "parallel" in node:
        return [leaf for n in node.get("series", node.get("parallel", [])) for leaf in leaves(n)]
    return [node]


def network_text(node: dict) -> str:
    """A network in RKM: 10k, 4k7+220R, 22k‖22k, (1k+220R)‖4k7."""
    if "series" in node or "parallel" in node:
        kind = "series" if "series" in node else "parallel"
        inner = [network_text(n) for n in node[kind]]
        if kind == "parallel":
            inner = [f"({t})" if "+" in t else t for t in inner]
        return ("+" if kind == "series" else "‖").join(inner)
    return figures.part_value(node)


def position_value(pos: str, part: dict) -> str:
    if pos in TRANSISTORS:
        return str(part.get("part", "?"))
    return figures.part_value(part)


def best_for_text(design: dict) -> str:
    """The trade words of a design's "best_for" labels: "fewest parts, cleanest"."""
    return ", ".join(BEST_FOR.get(b, str(b)) for b in design.get("best_for") or [])


def table(doc: dict) -> str:
    """One line per design: parts, values, gain at the hFE ends, swing, THD, yield, what it is best at."""
    rows = ["#  parts  gain over hFE     swing      f_low      THD      yield    best for / values"]
    for i, d in enumerate(doc.get("designs", []), 1):
        at = d.get("at_hfe") or {}
        p = d.get("predicted", {})
        g = (figures.span(at["min"].get("gain"), at["max"].get("gain"), lambda v: f"{v:+.2f}")
             if "min" in at and "max" in at else figures.gain(p.get("gain")))
        vals = " ".join(f"{pos}={position_value(pos, d['parts'][pos])}" for pos in ORDER if pos in d.get("parts", {}))
        best = best_for_text(d)
        rows.append(f"{i:<2} {(d.get('score') or {}).get('parts', '?'):>5}  {g:<17} {figures.volts(p.get('swing_pp')):<10} "
                    f"{figures.hertz(p.get('f_low')):<10} {figures.percent(p.get('thd'), 2):<8} "
                    f"{figures.percent(d.get('yield')):<8} " + (f"[{best}] " if best else "") + vals)
    return "\n".join(rows)


def spec_line(spec: dict) -> str:
    """The request as one line, SI with units."""
    rin = figures.ohms(spec.get("rin_floor_ohms", spec.get("min_rin_ohms")))
    if spec.get("rin_floor_is_default"):
        rin += " (default floor)"
    gain_tol = figures.percent(spec.get("gain_tol"), 0) if spec.get("gain_tol") is not None else figures.DASH
    rails = f"{figures.volts(spec.get('supply_v'))} supply"
    if spec.get("negative_supply_v"):
        rails = f"{figures.volts(spec.get('supply_v'))} / {figures.volts(spec.get('negative_supply_v'))} supplies"
    return (f"  for: gain {figures.plain(spec.get('gain'))} ±{gain_tol}, {rails}, "
            f"load {figures.ohms(spec.get('load_ohms'))}, source {figures.ohms(spec.get('source_ohms'))}, "
            f"{figures.volts(spec.get('swing_pp'))} p-p, f_low ≤ {figures.hertz(spec.get('low_cut_hz'))}, "
            f"Rin ≥ {rin}")


def part_lines(design: dict) -> list[str]:
    """One line per position: its value, and where each of its drawer parts comes from."""
    loc = design.get("locations", {})

    def where(line) -> str:
        place = loc.get(str(line))
        return f"line {line}" + (f" ({place})" if place else "")

    out = []
    for pos in ORDER:
        part = design.get("parts", {}).get(pos)
        if part is None:
            continue
        if pos in TRANSISTORS:
            out.append(f"  {pos:<5} {part.get('part', '?'):<12} {where(part.get('line'))}")
            continue
        node = part.get("network") or {}
        pieces = leaves(node) if node else []
        if len(pieces) == 1:
            source = where(pieces[0].get("line"))
        else:
            source = ", ".join(f"{figures.part_value(leaf)} {where(leaf.get('line'))}" for leaf in pieces)
        extra = ""
        if part.get("polarised"):
            extra = f"; polarised, rated {figures.volts(part.get('voltage_v'))}"
        value = network_text(node) if node else position_value(pos, part)
        out.append(f"  {pos:<5} {value:<12} {source}{extra}")
    return out


def meter_lines(design: dict) -> list[str]:
    """The DC voltages to check, with their range over the hFE spread, low end first."""
    if design.get("stages"):
        return chain_meter_lines(design)
    p = design.get("predicted", {})
    at = design.get("at_hfe") or {}
    out = []
    for name, key in (("VB", "vb"), ("VE", "ve"), ("VC", "vc")):
        text = f"  {name} ≈ {figures.volts(p.get(key))}"
        if "min" in at and "max" in at:
            text += f"   ({figures.span(at['min'].get(key), at['max'].get(key), figures.volts)} over the hFE range)"
        out.append(text)
    out.append(f"  IC ≈ {figures.amps(p.get('ic'))}")
    return out


def chain_meter_lines(design: dict) -> list[str]:
    """A chain's meter checks: VB, VE, VC of each transistor, with the range over every corner
    (both transistors' hFE ends and the temperatures), low end first."""
    corners = list((design.get("corners") or {}).values())
    out = []
    for k, (q, stage) in enumerate(zip(TRANSISTORS, design.get("stages") or [])):
        p = stage.get("predicted") or {}
        suffix = "" if k == 0 else "_b"
        for name, key in (("VB", "vb"), ("VE", "ve"), ("VC", "vc")):
            text = f"  {q} {name} ≈ {figures.volts(p.get(key))}"
            values = [c.get(key + suffix) for c in corners if isinstance(c.get(key + suffix), (int, float))]
            if values:
                text += f"   ({figures.span(min(values), max(values), figures.volts)} over hFE and temperature)"
            out.append(text)
        out.append(f"  {q} IC ≈ {figures.amps(p.get('ic'))}")
    return out


def stage_lines(design: dict) -> list[str]:
    """One line per stage of a chain: its kind, gain within the chain, Rin, Rout (typical hFE)."""
    out = []
    for k, stage in enumerate(design.get("stages") or [], 1):
        p = stage.get("predicted") or {}
        out.append(f"  stage {k}: {stage.get('kind', '?')}  gain {figures.gain(p.get('gain'))}  "
                   f"Rin {figures.ohms(p.get('rin'))}  Rout {figures.ohms(p.get('rout'))}  "
                   f"({', '.join(stage.get('positions') or [])})")
    return out


def sheet(design: dict, spec: dict | None = None) -> str:
    """The build sheet of one design."""
    p = design.get("predicted", {})
    out = ["BUILD SHEET — " + str(design.get("topology", ""))]
    if spec:
        out.append(spec_line(spec))
    best = best_for_text(design)
    if best:
        out.append(f"  best for: {best}")
    if design.get("stages"):
        out += ["", "Stages (the second stage's positions end in _B; CIN_B couples stage 1 to stage 2):",
                *stage_lines(design)]
    out += ["", "Parts (value, then where to take it from):", *part_lines(design)]
    out += ["", "Check with a meter (DC, to 0 V, supply on, no signal):", *meter_lines(design)]
    out += ["", "Predicted (typical hFE):"]
    out.append(f"  gain {figures.gain(p.get('gain'))}   Rin {figures.ohms(p.get('rin'))}   "
               f"Rout {figures.ohms(p.get('rout'))}   f_low {figures.hertz(p.get('f_low'))}   "
               f"clip-free swing {figures.volts(p.get('swing_pp'))} p-p")
    out.append(f"  THD at the required swing: {figures.percent(p.get('thd'), 2)}")
    for corner, a in (design.get("at_hfe") or {}).items():
        out.append(f"  at hFE {corner}: gain {figures.gain(a.get('gain'))}, VC {figures.volts(a.get('vc'))}, "
                   f"swing {figures.volts(a.get('swing_pp'))} p-p, f_low {figures.hertz(a.get('f_low'))}, "
                   f"Rin {figures.ohms(a.get('rin'))}")
    out.append(f"  Monte Carlo yield (tolerances, hFE, VBE, temperature): {figures.percent(design.get('yield'))}")
    if design.get("warnings"):
        out += ["", "Warnings:", *(f"  ! {w}" for w in design["warnings"])]
    out += ["", "Safety:", *(f"  * {c}" for c in cautions(design))]
    return "\n".join(out)


def reasons(doc: dict) -> str:
    out = ["No design meets the specification:"] + [f"  - {w}" for w in doc.get("why", [])]
    hints = [h for h in doc.get("hints", []) if h.get("buy")]
    if hints:
        out.append("Shopping hint:")
        out += [f"  + buy {h['buy']}" + (f" (for {h['position']})" if h.get("position") else "") + f": {h['effect']}"
                for h in hints]
    return "\n".join(out)
