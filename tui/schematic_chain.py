"""The text drawing of a two-stage chain: each stage drawn as one stage (tui/schematic.py), one
above the other, with the names of the chain's sheet (R1_B …, Q2, CIN_B): stage 1's output is the
node x, which stage 2 takes through CIN_B.  Text only."""

from __future__ import annotations

from optimizer import kinds

from .schematic import draw_stage


def own_name(pos: str) -> str:
    """A chain position's name within its stage: "R1_B" → "R1", "Q2" → "Q1"."""
    return "Q1" if pos == "Q2" else (pos[:-2] if pos.endswith("_B") else pos)


def stage_designs(design: dict) -> list[dict]:
    """Each stage of a chain design as a one-stage design (positions without the suffix), with
    "names": each own position → its name on the chain's sheet."""
    parts = design.get("parts", {})
    out = []
    for stage in design.get("stages") or []:
        sub, names = {}, {}
        for pos in stage.get("positions") or []:
            if pos in parts:
                sub[own_name(pos)] = parts[pos]
                names[own_name(pos)] = pos
        out.append({"topology": stage.get("kind", "common-emitter"), "parts": sub, "names": names,
                    "predicted": stage.get("predicted") or {}})
    return out


def draw_chain(design: dict, *, supply_v=None, source_ohms=None, load_ohms=None, polarised=frozenset()) -> str:
    """Both stages of a chain design as text, labelled with the chain's position names."""
    one, two = stage_designs(design)
    # x rests at the first stage's output (its collector, or its emitter for a follower): CIN_B's other side.
    out = "ve" if kinds.get(one["topology"]).output == "e" else "vc"
    x_volts = one["predicted"].get(out)
    drawings = []
    for k, stage in enumerate((one, two)):
        own_polarised = frozenset(own for own, pos in stage["names"].items() if pos in polarised)
        drawings.append(draw_stage(stage, supply_v=supply_v, source_ohms=source_ohms if k == 0 else None,
                                   load_ohms=load_ohms if k == 1 else None, polarised=own_polarised,
                                   names=stage["names"], q_name="Q1" if k == 0 else "Q2",
                                   in_label="in" if k == 0 else "x", out_label="x" if k == 0 else "out",
                                   open_output=k == 0,
                                   in_volts=x_volts if k == 1 and isinstance(x_volts, (int, float)) else 0.0))
    return ("Stage 1 (" + one["topology"] + "); its output x feeds stage 2 through CIN_B\n" + drawings[0]
            + "\n\nStage 2 (" + two["topology"] + "); its positions end in _B, its input is x\n" + drawings[1])
