"""Saved chain design files for the sheet and app tests, without a search: one design of each chain
kind, made of our own hand-picked values (tests/chain_designs.py, some positions made up as series
and parallel networks), written by the production code (optimizer.chain.result.design_json on a
Candidate whose verdict is optimizer.chain.check.check_chain's and yield chain_yield's) with the spec
and the stock fingerprint `design --save` writes.  Each kind's file also holds the drawer it was made from.
`save_chains(folder, "PNP")` makes the same chains with two PNP lines instead (all-PNP chains on the
same +12 V supply, emitter sides to +V).
"""

from __future__ import annotations

import json
from collections import Counter
from pathlib import Path
from types import SimpleNamespace

from optimizer.chain.analysis import analyze_chain
from optimizer.chain.check import check_chain
from optimizer.chain.circuit import Chain
from optimizer.chain.result import chain_yield, design_json, tolerances
from optimizer.chain.search import Candidate
from optimizer.physics.stage import Stage
from optimizer.search.candidates import usable_transistors
from optimizer.search.result import spec_json
from optimizer.spec import Spec
from tests.chain_designs import CE_A, CE_B, EF_A, EF_B, KINDS

# Our own drawer: every value the designs below use, a location each, two transistor lines with
# different hFE spreads (so Q2's spread is its own).
DRAWER_ROWS = [
    ("resistor", "220"), ("resistor", "330"), ("resistor", "680"), ("resistor", "1k2"), ("resistor", "3k3"),
    ("resistor", "6k8"), ("resistor", "8k2"), ("resistor", "10k"), ("resistor", "15k"), ("resistor", "27k"),
    ("resistor", "33k"), ("resistor", "47k"), ("resistor", "68k"), ("resistor", "330k"), ("resistor", "680k"),
    ("resistor", "1M5"), ("capacitor", "470n"), ("capacitor", "2u2"), ("capacitor", "4u7"), ("capacitor", "10u"),
    ("capacitor", "100u"),
]
HEADER = "kind,value,qty,tolerance,power,voltage,dielectric,part,polarity,hfe_min,hfe_max,vceo,ic_max,pd_max,location,notes"
TRANSISTOR_ROWS = ["transistor,,3,,,,,BC547B,NPN,200,450,45V,100mA,500mW,T2,chain sheet tests",
                   "transistor,,3,,,,,2N3904,NPN,100,300,40V,200mA,625mW,T1,chain sheet tests"]
# Positions made up as networks (our own choices): (stage index, kind, position) → (shape, values).
NETWORKS = {(0, "common-emitter", "R1"): ("series", (68e3, 15e3)),
            (0, "emitter-follower", "R1"): ("series", (680e3, 330e3)),
            (1, "common-emitter", "RC"): ("parallel", (6.8e3, 6.8e3)),
            (1, "emitter-follower", "RE"): ("parallel", (3.3e3, 3.3e3)),
            (1, "common-emitter", "CE"): ("parallel", (100e-6, 100e-6))}
# The PNP drawer's transistors (datasheet-typical hFE spreads, from memory): the same roles as the NPN pair.
PNP_TRANSISTOR_ROWS = ["transistor,,3,,,,,BC557B,PNP,220,475,45V,100mA,500mW,T2,chain sheet tests",
                       "transistor,,3,,,,,2N3906,PNP,100,300,40V,200mA,625mW,T1,chain sheet tests"]
SOURCE_OHMS, LOAD_OHMS, SWING_PP = 1e3, 10e3, 1.0


def write_drawer(folder: Path, polarity: str = "NPN") -> Path:
    rows = [HEADER]
    for k, (kind, value) in enumerate(DRAWER_ROWS):
        loc = f"{'R' if kind == 'resistor' else 'C'}{k // 4 + 1}"
        if kind == "resistor":
            rows.append(f"resistor,{value},6,1%,0.25W,,,,,,,,,,{loc},")
        else:
            elec = value in ("10u", "100u")
            rows.append(f"capacitor,{value},6,20%,,{'25V' if elec else '63V'},{'electrolytic' if elec else 'film'},"
                        f",,,,,,,{loc},")
    rows += PNP_TRANSISTOR_ROWS if polarity == "PNP" else TRANSISTOR_ROWS
    path = folder / ("chain_sheet_drawer.csv" if polarity == "NPN" else f"chain_sheet_drawer_{polarity.lower()}.csv")
    path.write_text("\n".join(rows) + "\n")
    return path


def _node(drawer, unit: str, value: float) -> dict:
    for p in drawer.parts:
        if p.kind == ("resistor" if unit == "ohms" else "capacitor") and abs(p.value - value) <= 1e-9 * value:
            return {"line": int(p.line), unit: float(p.value)}
    raise LookupError(f"no drawer line of {value:g} {unit}")


def _position(drawer, stage: int, topology: str, pos: str, value: float, unit: str) -> dict:
    key = (stage, topology, pos)
    if key in NETWORKS:
        shape, values = NETWORKS[key]
        return {shape: [_node(drawer, unit, v) for v in values]}
    return _node(drawer, unit, value)


def _total(node: dict, unit: str) -> float:
    """A network's value: resistances add in series, capacitances in parallel (and the reciprocals the other way)."""
    adds = "series" if unit == "ohms" else "parallel"
    for key in ("series", "parallel"):
        if key in node:
            values = [_total(n, unit) for n in node[key]]
            return sum(values) if key == adds else 1.0 / sum(1.0 / v for v in values)
    return float(node[unit])


def _leaves(node: dict):
    for key in ("series", "parallel"):
        if key in node:
            for n in node[key]:
                yield from _leaves(n)
            return
    yield node


def chain_document(kind: str, drawer, drawer_path: Path) -> dict:
    """The saved document of one chain of `kind` (design_json of a hand-made Candidate)."""
    from tui.cmd_design import fingerprint

    qlines, _ = usable_transistors(drawer.transistors())
    q1, q2 = sorted(qlines, key=lambda q: q.name)[:2]  # BC547B first, 2N3904 second: their own spreads
    firsts = kind.split("+")
    values = [EF_A if firsts[0] == "emitter-follower" else CE_A, EF_B if firsts[1] == "emitter-follower" else CE_B]
    parts, uses, ratings, stages = {}, Counter(), {}, []
    for k, ((res, caps), topology, q) in enumerate(zip(values, firsts, (q1, q2), strict=True)):
        own_r, own_c = {}, {}
        for unit, table, own in (("ohms", res, own_r), ("farads", caps, own_c)):
            for pos, value in table.items():
                if k == 0 and pos == "COUT":
                    continue
                node = _position(drawer, k, topology, pos, value, unit)
                own[pos] = _total(node, unit)
                name = pos if k == 0 else pos + "_B"
                entry = {unit: own[pos], "network": node}
                if unit == "farads":
                    line = drawer.part_at(next(_leaves(node))["line"])
                    entry.update(polarised=bool(line.polarised), voltage_v=float(line.voltage_v))
                    ratings[name] = (float(line.voltage_v), bool(line.polarised))
                parts[name] = entry
                uses.update(leaf["line"] for leaf in _leaves(node))
        parts["Q1" if k == 0 else "Q2"] = {"line": int(q.line), "part": q.name}
        uses[int(q.line)] += 1
        stages.append(Stage(topology, own_r, own_c, 12.0, SOURCE_OHMS if k == 0 else 0.0,
                            float("inf") if k == 0 else LOAD_OHMS, q.transistor, 27.0))
    chain = Chain(kind, *stages)
    gain = abs(analyze_chain(chain).predicted["gain"])
    spec = Spec(topology=kind, gain=round(gain, 2), gain_tol=0.2, supply_v=12.0, load_ohms=LOAD_OHMS,
                source_ohms=SOURCE_OHMS, swing_pp=SWING_PP, low_cut_hz=100.0, min_rin_ohms=1e3)
    cand = Candidate(chain, (SimpleNamespace(q=q1), SimpleNamespace(q=q2)), parts, uses, ratings)
    cand.verdict = check_chain(chain, spec, q1, q2, ratings)
    locations = {p.line: p.location for p in drawer.parts}
    yld, mc = chain_yield(cand, spec, tolerances(drawer.resistor_stock()).get)
    design = design_json(cand, spec, labels=("balanced",), locations=locations, mc=mc, yld=yld)
    doc = {"designs": [design], "why": [], "hints": [], "spec": spec_json(spec), "inventory": str(drawer_path),
           "status": "found", "optimal": False, "unexplored": "hand-made chain for the sheet tests"}
    doc["fingerprint"] = fingerprint(drawer, [u["line"] for u in design["uses"]])
    return doc


def save_chains(folder: Path, polarity: str = "NPN") -> dict[str, Path]:
    """kind → saved chain file (all on one drawer, `chain_sheet_drawer.csv` in `folder`; with
    polarity "PNP" all-PNP chains on `chain_sheet_drawer_pnp.csv`, files named `…_pnp.json`)."""
    from inventory.drawer import Drawer

    path = write_drawer(folder, polarity)
    drawer = Drawer.load(path)
    assert not drawer.errors, drawer.errors
    out = {}
    for kind in KINDS:
        doc = chain_document(kind, drawer, path)
        file = folder / (kind.replace("+", "_then_") + ("" if polarity == "NPN" else "_" + polarity.lower()) + ".json")
        file.write_text(json.dumps(doc, indent=1) + "\n")
        out[kind] = file
    return out
