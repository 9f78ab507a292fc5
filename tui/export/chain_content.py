"""What a two-stage chain's build sheet holds, for every output format (content.Sheet with `chain` set).

The chain is read back from the design document (optimizer.chain.deck.chain_of_design); the meter
ranges (optimizer.chain.meter) and the capacitors' + leads (optimizer.chain.deck.positive_nodes)
come from the optimizer.  Each stage is also given as a one-stage sheet (`StageView`) so the
one-stage drawing (schematic_svg) draws it: its positions under their own names, its parts
labelled with the chain's names (R1_B, R1_B_2 …, Q2), stage 1's output and stage 2's input
the interstage node x, with CIN_B drawn as stage 2's input capacitor.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from optimizer.chain.circuit import build_net, operating_point
from optimizer.chain.deck import chain_of_design, deck_nodes, positive_nodes
from optimizer.chain.meter import chain_meter_checks
from optimizer.chain.names import split
from optimizer.chain.polarity import real_node
from optimizer.physics.stage import Stage

from .content import Sheet, SheetInputError, _parts_tree, _why, pick_list

INTERSTAGE = "x"  # the deck's name of the node joining the stages


@dataclass
class StageView:
    """One stage of a chain as schematic_svg.schematic reads a sheet."""

    index: int  # 0 first stage, 1 second
    design: dict  # {"topology", "parts"}: the stage's own position names (Q1 for either transistor)
    networks: dict  # own position → network of content.Part leaves named as in the chain's deck
    positive: dict  # own capacitor position → the stage's node of its + lead (in, out, base, mid, 0, vcc)
    stage: Stage
    q_name: str
    in_label: str
    out_label: str
    positions: list = field(default_factory=list)  # the chain's position names of this stage


def _stage_node(node: str, index: int) -> str:
    """A chain net node as the one-stage drawing names it (x is stage 1's out, stage 2's in)."""
    if node == INTERSTAGE:
        return "out" if index == 0 else "in"
    if node in ("0", "vcc", "in", "out"):
        return node
    return node[:-1] if node[-1:] in "12" else node


def hfe_corners(hfe: dict | None, typical: float) -> tuple[float, ...]:
    hfe = hfe or {}
    return tuple(float(hfe[k]) for k in ("min", "typical", "max") if hfe.get(k)) or (typical,)


def build_chain_sheet(design: dict, spec: dict, pick: int, source: str) -> Sheet:
    try:
        chain = chain_of_design(design, spec)
        parts = design["parts"]
        networks = {pos: _parts_tree(part["network"], pos, "ohms" if "ohms" in part else "farads", [0])
                    for pos, part in parts.items() if "network" in part}
        lo, hi = spec.get("temp_range_c") or (27.0, 27.0)
        temps = tuple(sorted({float(lo), 27.0, float(hi)}))
        meters = chain_meter_checks(chain, hfe_corners(design.get("hfe"), chain.first.transistor.bf),
                                    hfe_corners(design.get("hfe_b"), chain.second.transistor.bf), temps)
        net = build_net(chain)
        plus = positive_nodes(net, operating_point(net))
        names = deck_nodes(net)
        views = []
        for k, (stage_doc, stage) in enumerate(zip(design["stages"], (chain.first, chain.second), strict=True)):
            own_parts, own_nets, own_plus = {}, {}, {}
            for pos in stage_doc["positions"]:
                _, own = split(pos)
                own_parts[own] = parts[pos]
                if pos in networks:
                    own_nets[own] = networks[pos]
                if pos in plus:  # the real circuit's node (an all-PNP chain's 0 and vcc swap)
                    own_plus[own] = _stage_node(real_node(plus[pos], net.mirror_v), k)
            views.append(StageView(k, {"topology": stage_doc["kind"], "parts": own_parts}, own_nets, own_plus, stage,
                                   "Q1" if k == 0 else "Q2", "in" if k == 0 else INTERSTAGE,
                                   INTERSTAGE if k == 0 else "out", list(stage_doc["positions"])))
    except (KeyError, TypeError, ValueError, RuntimeError, AttributeError, IndexError) as exc:
        raise SheetInputError(f"{source}: design {pick} cannot be read back ({_why(exc)})") from None
    positive = {pos: names.get(node, node) for pos, node in plus.items()}
    return Sheet(source, pick, design, spec, chain.first, design["netlist"], networks, positive,
                 pick_list(design, networks), meters, chain=chain, views=tuple(views))


def stage_rows(sheet: Sheet) -> list[tuple[str, ...]]:
    """(stage, kind, gain within the chain, Rin, Rout, IC, clip-free swing, positions) per stage, typical hFE.

    Each stage's gain is as the chain sees it: the first from the source's EMF to x, the second from x to
    the load (their product is the chain's gain)."""
    from inventory.values import format_si

    out = []
    for k, s in enumerate(sheet.design.get("stages") or [], 1):
        p = s.get("predicted") or {}

        def si(key, unit, p=p):
            return format_si(p[key], unit) if isinstance(p.get(key), (int, float)) else "–"

        gain = f"{p['gain']:+.3g}" if isinstance(p.get("gain"), (int, float)) else "–"
        swing = f"{p['swing_pp']:.3g} V p-p" if isinstance(p.get("swing_pp"), (int, float)) else "–"
        out.append((str(k), str(s.get("kind", "?")), gain, si("rin", "Ω"), si("rout", "Ω"), si("ic", "A"), swing,
                    ", ".join(s.get("positions") or [])))
    return out


def hfe_text(design: dict) -> str:
    """"Q1 100…300, Q2 100…300" (each transistor line's own hFE spread)."""
    bits = []
    for q, key in (("Q1", "hfe"), ("Q2", "hfe_b")):
        h = design.get(key) or {}
        bits.append(f"{q} {h['min']:g}…{h['max']:g}" if h.get("min") and h.get("max") else f"{q} as stocked")
    return ", ".join(bits)
