"""The netlist of a chain design (README "The netlist of a design", the same contract as one stage).

Nodes: `in` (after the source resistance) and `out` (the load) as for one stage, `x` the
interstage node (the first stage's output, before CIN_B), the first stage's own nodes with the
suffix 1 (base1, emit1, coll1, mid1) and the second's with 2.  Element lines are named after their
positions (R1, R1_2 …, then R1_B, R1_B_2 …, CIN_B the interstage capacitor), the transistors Q1
and Q2, each line tagged `; line N`.

An all-PNP chain's net is its NPN mirror (chain/polarity.py): its deck is the real PNP circuit,
with the stages' 0 and vcc swapped, each capacitor's + lead where the real DC is higher, and the
PNP `.model` cards of its lines.
"""

from __future__ import annotations

import numpy as np

from optimizer.chain import polarity
from optimizer.chain.circuit import Chain, Net, build_net, operating_point
from optimizer.physics.deck import _leaves_between, model_name, spice_value

RANK = ("0", "vcc", "in", "out", "x")
SURROUNDINGS = ("RS", "RL")


def deck_nodes(net: Net) -> dict[str, str]:
    """Net node → deck node after merging the shorts (ranked names win, then the plainest); the real
    circuit's names, so an all-PNP chain's 0 and vcc swap."""
    group = {n: {n} for n in net.nodes}
    for a, b in net.shorts:
        merged = group[a] | group[b]
        for n in merged:
            group[n] = merged
    out = {}
    for n in net.nodes:
        ranked = [m for m in group[n] if m in RANK]
        out[n] = min(ranked, key=RANK.index) if ranked else min(group[n], key=lambda m: (len(m), m))
    return {n: polarity.real_node(m, net.mirror_v) for n, m in out.items()}


def positive_nodes(net: Net, op) -> dict[str, str]:
    """Capacitor name → the net node of its + lead (the higher DC voltage in real polarity; deck_nodes
    gives the node's name in the real circuit)."""
    v = net.real(np.atleast_2d(op))[0]
    i = net.nodes.index
    return {p.name: (p.a if v[i(p.a)] >= v[i(p.b)] else p.b) for p in net.parts if p.kind == "C"}


def chain_netlist(chain: Chain, parts: dict, *, title: str | None = None) -> str:
    """The chain design's deck; parts = the design JSON's "parts" (suffixed positions, Q1 and Q2)."""
    net = build_net(chain)
    plus = positive_nodes(net, operating_point(net))
    name = deck_nodes(net)
    lines = [f"* {title or f'drawerfit {chain.kind} chain on a {spice_value(chain.first.supply_v)} V supply'}",
             "* The chain's own parts and supply only. To simulate: add a source into node in through its",
             "* resistance, a load from out to 0, analyses and .end (README, \"Running a design's netlist\")."]
    for p in net.parts:
        if p.name in SURROUNDINGS:
            continue
        a, b = name[p.a], name[p.b]
        if a == b:
            continue
        if p.kind == "C" and plus.get(p.name) == p.b:
            a, b = b, a
        unit = "ohms" if p.kind == "R" else "farads"
        node = (parts.get(p.name) or {}).get("network") or {"line": 0, unit: p.value}
        _leaves_between(node, a, b, p.name, unit, lines, {"parts": 0, "nodes": 0})
    models = {}
    for q, (c, b, e), stage in zip(("Q1", "Q2"), net.qs, (chain.first, chain.second), strict=True):
        line = int((parts.get(q) or {}).get("line", 0))
        lines.append(f"{q} {name[c]} {name[b]} {name[e]} {model_name(line)} ; line {line}")
        models.setdefault(line, stage.transistor)
    lines.append(f"VCC vcc 0 DC {spice_value(chain.first.supply_v)}")
    lines += [t.spice_model(model_name(line)) for line, t in models.items()]
    lines.append(".end")
    return "\n".join(lines) + "\n"


def chain_of_design(design: dict, spec: dict) -> Chain:
    """The Chain of a chain design document entry (values from its parts, the saved spec's supply,
    source and load; Q1's model from "hfe", Q2's from "hfe_b", each at its typical hFE)."""
    from dataclasses import replace

    from optimizer.physics.deck import transistor_of_design
    from optimizer.physics.stage import Stage

    load = spec.get("load_ohms")
    stages = []
    for k, s in enumerate(design["stages"]):
        res, caps = {}, {}
        for pos in s["positions"]:
            own = "Q1" if pos == "Q2" else (pos[:-2] if pos.endswith("_B") else pos)
            part = design["parts"][pos]
            if "ohms" in part:
                res[own] = float(part["ohms"])
            elif "farads" in part:
                caps[own] = float(part["farads"])
        if k == 0:
            t = transistor_of_design(design)
        else:
            t = transistor_of_design({"parts": {"Q1": design["parts"]["Q2"]}, "hfe": design.get("hfe_b") or {}})
        stages.append(Stage(s["kind"], res, caps, float(spec["supply_v"]),
                            float(spec.get("source_ohms") or 0.0) if k == 0 else 0.0,
                            float("inf") if k == 0 or load is None else float(load), t, 27.0))
    return Chain(design["topology"], stages[0], replace(stages[1], supply_v=stages[0].supply_v))
