"""Hand-made designs with every network shape, one or more per topology, for the deck and sheet tests.

Values are our own picks (biased to sensible points by hand); the networks cover a single part,
series, parallel, a+b+c, a‖b‖c, (a+b)‖c and (a‖b)+c, and capacitor pairs, some polarised.
"""

from __future__ import annotations

import math

from optimizer.parts import network_tree

SPEC = {"supply_v": 12.0, "source_ohms": 1e3, "load_ohms": 22e3, "swing_pp": 2.0, "temp_range_c": [0.0, 50.0],
        "gain": 5.0, "gain_tol": 0.1, "low_cut_hz": 50.0}


def L(line: int, value: float) -> dict:
    """A leaf; resistor or capacitor is decided by the position it is put in."""
    return {"line": line, "v": value}


def S(*nodes) -> dict:
    return {"series": list(nodes)}


def P(*nodes) -> dict:
    return {"parallel": list(nodes)}


def _unit(node: dict, unit: str) -> dict:
    if "series" in node or "parallel" in node:
        key = "series" if "series" in node else "parallel"
        return {key: [_unit(n, unit) for n in node[key]]}
    return {"line": node["line"], unit: float(node["v"])}


def design(topology: str, nets: dict, polarised=(), q_line=109, hfe=(200.0, 450.0), part="BC547B") -> dict:
    parts = {}
    for pos, net in nets.items():
        unit = "farads" if pos.startswith("C") else "ohms"
        node = _unit(net, unit)
        value = float(network_tree.evaluate(network_tree.from_json(node, unit_key=unit),
                                            "capacitor" if unit == "farads" else "resistor"))
        parts[pos] = {unit: value, "network": node}
        if unit == "farads":
            parts[pos].update({"polarised": pos in polarised, "voltage_v": 25.0})
    parts["Q1"] = {"line": q_line, "part": part}
    return {"topology": topology, "parts": parts,
            "hfe": {"min": hfe[0], "typical": math.sqrt(hfe[0] * hfe[1]), "max": hfe[1]}}


DESIGNS = {
    "common-emitter": design("common-emitter", {
        "R1": S(L(50, 47e3), L(40, 10e3)), "R2": P(L(44, 22e3), L(44, 22e3)),
        "RC": P(S(L(33, 4.7e3), L(24, 1e3)), L(39, 10e3)), "RE1": L(20, 470.0),
        "RE2": S(P(L(24, 1e3), L(24, 1e3)), L(14, 180.0)),
        "CIN": L(95, 4.7e-6), "COUT": L(96, 10e-6), "CE": P(L(98, 100e-6), L(98, 100e-6))},
        polarised=("CIN", "COUT", "CE")),
    "emitter-follower": design("emitter-follower", {
        "R1": S(L(39, 10e3), L(39, 10e3), L(29, 2.2e3)), "R2": P(L(48, 47e3), L(48, 47e3), L(48, 47e3)),
        "RE": S(L(29, 2.2e3), L(29, 2.2e3)), "CIN": L(92, 1e-6), "COUT": P(L(96, 10e-6), L(96, 10e-6))},
        polarised=("COUT",)),
    "collector-feedback": design("collector-feedback", {
        "RB": P(S(L(53, 100e3), L(53, 100e3)), L(55, 220e3)), "RC": L(33, 4.7e3), "RE1": L(15, 220.0),
        "RE2": L(20, 470.0), "CIN": L(92, 1e-6), "COUT": L(90, 470e-9), "CE": L(97, 47e-6)},
        polarised=("CE",)),
    # No emitter resistors, CE or COUT: the emitter is ground and the load couples directly (merged node names).
    "collector-feedback-bare": design("collector-feedback", {
        "RB": L(60, 1e6), "RC": S(L(33, 4.7e3), L(33, 4.7e3)), "CIN": L(92, 1e-6)}, hfe=(160.0, 400.0),
        q_line=111, part="BC337-25"),
}


def full_design(d: dict, spec: dict = SPEC, mc: dict | None = None) -> dict:
    """A design document entry for a hand-made design: the analysis' figures at typical hFE and both ends,
    its response, warnings and cautions, and its deck, as `design --save` writes them."""
    from optimizer.physics.analysis import analyze
    from optimizer.physics.deck import design_netlist, stage_of_design

    out = dict(d)
    stage = stage_of_design(d, spec)
    report = analyze(stage, spec.get("swing_pp"))
    data = report.to_json()
    out["predicted"] = data["predicted"]
    out["at_hfe"] = {c: analyze(stage_of_design(d, spec, bf=d["hfe"][c]), spec.get("swing_pp")).to_json()["predicted"]
                     for c in ("min", "max")}
    out["response"] = {"freq_hz": data["response"]["freq_hz"], "gain_db": data["response"]["gain_db"]}
    out["warnings"], out["cautions"] = data["warnings"], data["cautions"]
    lines = {}
    for pos, part in d["parts"].items():
        for line in _lines(part.get("network", {"line": part.get("line")})):
            lines[line] = lines.get(line, 0) + 1
    out["uses"] = [{"line": k, "qty": v} for k, v in sorted(lines.items())]
    out["locations"] = {str(k): f"{'ABCD'[k % 4]}{k % 7 + 1}" for k in lines}
    out["yield"], out["mc"] = 0.9, mc
    out["netlist"] = design_netlist(stage, d["parts"], report.capacitors)
    return out


def _lines(node: dict) -> list[int]:
    for key in ("series", "parallel"):
        if key in node:
            return [x for n in node[key] for x in _lines(n)]
    return [int(node["line"])]
