"""The netlist of a design: a SPICE deck of the stage's own parts and its supply (README, a fixed contract).

Unlike netlist.py's complete test bench, this deck holds no source, source
resistance, load or analysis: the user (or crosscheck.py) adds them.  The signal
source connects to node `in` through its resistance and the load hangs from
`out` to ground `0`.  Every physical part of a network is its own element line,
named after its position (R1, R1_2, R1_3 …), with internal nodes between them,
and each line ends with `; line N`, the drawer line the part comes from.
Polarised capacitors are written + lead first, as the analysis orients them.
"""

from __future__ import annotations

from optimizer.physics.circuit import NODES, build
from optimizer.physics.stage import Stage
from optimizer.physics.transistor import Transistor
from optimizer.physics import polarity

# Which name a group of shorted nodes keeps (earlier wins): `in` and `out` must survive a merge,
# since the surroundings attach there.  "src" is the source's own node: never in the deck.
RANK = ("0", "vcc", "in", "out", "base", "emit", "coll", "mid")
SURROUNDINGS = ("RS", "RL")
# SPICE scale suffixes (case-insensitive in SPICE, hence "meg", never "M").
SUFFIXES = ((1e6, "meg"), (1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "u"), (1e-9, "n"), (1e-12, "p"))


def spice_value(x: float) -> str:
    """A value as SPICE reads it: 68000 → "68k", 4.7e-6 → "4.7u", 2.2e6 → "2.2meg", 12 → "12"."""
    x = float(x)
    if x == 0:
        return "0"
    for scale, suffix in SUFFIXES:
        if abs(x) >= scale * (1 - 1e-12):
            return f"{x / scale:.9g}{suffix}"
    return f"{x:.9g}"


def deck_nodes(stage: Stage) -> dict[str, str]:
    """Circuit node (circuit.NODES) → deck node name, after merging the shorts of absent parts."""
    group = {n: {n} for n in NODES}
    for a, b in build(stage).shorts:
        merged = group[a] | group[b]
        for n in merged:
            group[n] = merged
    out = {}
    for n in NODES:
        ranked = [m for m in group[n] if m in RANK]
        out[n] = min(ranked, key=RANK.index) if ranked else n
    return polarity.real_deck_names(stage, out)  # a PNP stage's parts: 0 and vcc swap


def model_name(line: int) -> str:
    """The .model name of a drawer line's transistor."""
    return f"QLINE{int(line)}"


def _leaves_between(node: dict, a: str, b: str, position: str, unit: str, out: list, state: dict) -> None:
    """Element lines of one network node between deck nodes a and b (a first: the + lead for capacitors)."""
    if "series" in node:
        parts = node["series"]
        ends = [a] + [_internal(position, state) for _ in parts[1:]] + [b]
        for k, part in enumerate(parts):
            _leaves_between(part, ends[k], ends[k + 1], position, unit, out, state)
        return
    if "parallel" in node:
        for part in node["parallel"]:
            _leaves_between(part, a, b, position, unit, out, state)
        return
    state["parts"] += 1
    k = state["parts"]
    name = position if k == 1 else f"{position}_{k}"
    out.append(f"{name} {a} {b} {spice_value(node[unit])} ; line {int(node['line'])}")


def _internal(position: str, state: dict) -> str:
    state["nodes"] += 1
    return f"{position.lower()}_n{state['nodes']}"


def design_netlist(stage: Stage, parts: dict, positive_nodes: dict | None = None, *, title: str | None = None) -> str:
    """The design's deck.

    stage: the design at its typical hFE (values, supply, transistor model);
    parts: the design JSON's "parts" (position → {"network": …} and "Q1": {"line": …});
    positive_nodes: capacitor position → circuit node of its + lead (analysis.Report.capacitors'
    "positive_node"); computed from the analysis when not given.
    """
    if positive_nodes is None:
        from optimizer.physics.analysis import analyze

        positive_nodes = {p: c["positive_node"] for p, c in analyze(stage).capacitors.items()}
    else:
        positive_nodes = {p: (c["positive_node"] if isinstance(c, dict) else c) for p, c in positive_nodes.items()}
    name = deck_nodes(stage)
    circuit = build(stage)
    lines = [f"* {title or f'drawerfit {stage.topology} stage on a {spice_value(stage.supply_v)} V supply'}",
             "* The stage's own parts and supply only. To simulate: add a source into node in through its",
             "* resistance, a load from out to 0, analyses and .end (README, \"Running a design's netlist\")."]
    for p in circuit.parts:
        if p.name in SURROUNDINGS:
            continue
        a, b = name[p.a], name[p.b]
        if a == b:
            continue  # shorted out by an absent neighbour (e.g. CE across a missing RE2)
        if p.kind == "C" and positive_nodes.get(p.name) == polarity.real_node(p.b, polarity.mirrored(stage)):
            a, b = b, a
        node = (parts.get(p.name) or {}).get("network") or {"line": 0, ("ohms" if p.kind == "R" else "farads"): p.value}
        _leaves_between(node, a, b, p.name, "ohms" if p.kind == "R" else "farads", lines, {"parts": 0, "nodes": 0})
    q_line = int((parts.get("Q1") or {}).get("line", 0))
    c, b, e = (name[n] for n in circuit.q)
    lines.append(f"Q1 {c} {b} {e} {model_name(q_line)} ; line {q_line}")
    lines.append(f"VCC vcc 0 DC {spice_value(stage.supply_v)}")
    lines.append(stage.transistor.spice_model(model_name(q_line)))
    lines.append(".end")
    return "\n".join(lines) + "\n"


def transistor_of_design(design: dict, bf: float | None = None) -> Transistor:
    """The transistor model of a saved design: the drawer line's hFE range, the model's other defaults
    (as candidates.transistor_of builds it), at `bf` (default the typical hFE)."""
    hfe = design.get("hfe") or {}
    q = design["parts"]["Q1"]
    typical = float(hfe.get("typical") or 0) or Transistor().bf
    return Transistor(name=q.get("part") or f"line {q.get('line')}", polarity=str(q.get("polarity", "NPN")).upper(),
                      bf=float(bf if bf is not None else typical), hfe_min=hfe.get("min"), hfe_max=hfe.get("max"))


def stage_of_design(design: dict, spec: dict, *, bf: float | None = None, temp_c: float = 27.0) -> Stage:
    """The Stage of a design document entry (with the saved spec's supply, source and load)."""
    res = {p: float(v["ohms"]) for p, v in design["parts"].items() if "ohms" in v}
    caps = {p: float(v["farads"]) for p, v in design["parts"].items() if "farads" in v}
    load = spec.get("load_ohms")
    return Stage(design["topology"], res, caps, float(spec["supply_v"]), float(spec.get("source_ohms") or 0.0),
                 float("inf") if load is None else float(load), transistor_of_design(design, bf), float(temp_c))


def netlist_of(design: dict, spec: dict) -> str:
    """The design's deck: the saved one, else built from its parts (files saved before decks existed)."""
    return design.get("netlist") or design_netlist(stage_of_design(design, spec), design["parts"])
