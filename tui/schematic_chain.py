"""The text drawing of a two-stage chain: each stage drawn as one stage (tui/schematic.py), one
above the other, the first stage's output capacitor slot holding the interstage CIN_B.  Text only."""

from __future__ import annotations

from .schematic import draw_stage


def stage_designs(design: dict) -> list[dict]:
    """Each stage of a chain design as a one-stage design (positions without the suffix)."""
    parts = design.get("parts", {})
    stages = design.get("stages") or []
    out = []
    for k, stage in enumerate(stages):
        sub = {}
        for pos in stage.get("positions") or []:
            if pos not in parts:
                continue
            own = "Q1" if pos == "Q2" else (pos[:-2] if pos.endswith("_B") else pos)
            sub[own] = parts[pos]
        if k == 0 and "CIN_B" in parts:
            sub["COUT"] = parts["CIN_B"]  # drawn where the first stage's output capacitor would be
        out.append({"topology": stage.get("kind", "common-emitter"), "parts": sub})
    return out


def draw_chain(design: dict, *, supply_v=None, source_ohms=None, load_ohms=None, polarised=frozenset()) -> str:
    """Both stages of a chain design as text; stage 2's positions carry the suffix _B in the parts list."""
    one, two = stage_designs(design)
    first = draw_stage(one, supply_v=supply_v, source_ohms=source_ohms, load_ohms=None,
                       polarised=frozenset(p for p in polarised if not p.endswith("_B")) | (
                           {"COUT"} if "CIN_B" in polarised else set()))
    first = first.replace("COUT", "CIN_B").replace("○ out", "○ x").replace("load", "to stage 2")
    second = draw_stage(two, supply_v=supply_v, source_ohms=None, load_ohms=load_ohms,
                        polarised=frozenset(p[:-2] for p in polarised if p.endswith("_B")) - {"CIN"})
    second = second.replace("in ○", "x  ○")
    return ("Stage 1 (" + one["topology"] + "); its output x feeds stage 2 through CIN_B\n" + first
            + "\n\nStage 2 (" + two["topology"] + "); every position here carries _B in the parts list, Q1 is Q2, "
            "its input is x\n" + second)
