"""The common-emitter stage: divider bias R1/R2, collector resistor RC, emitter resistance
RE1 (unbypassed) over RE2 (bypassed by CE), output at the collector, inverting.

Hand formulas (textbook): A ≈ −(RC‖RL)/(re' + RE1), rin ≈ R1‖R2‖(β+1)(re' + RE1), rout ≈ RC.
"""

from __future__ import annotations

import numpy as np

from inventory.values import format_capacitance, format_resistance

from optimizer.kinds import common_emitter_bounds as ce_boxes
from optimizer.physics import swing as loadline
from optimizer.search.seed import MIN_IC_A, SWING_ROOM, VBE_V
from optimizer.kinds import blocks as b
from optimizer.kinds import spec_limits as lim
from optimizer.kinds.registry import Kind, hooks, register

NAME = "common-emitter"


def wire(stage, two, short):
    b.wire_divider(stage, two)
    two("RC", "R", "vcc", "coll", stage.r("RC"))
    b.wire_split_emitter(stage, two)


def bias_network(r, supply_v):
    """VB = VTH − RTH·IB, VC = VCC − RC·IC, VE = (RE1 + RE2)·IE."""
    zero = np.zeros_like(supply_v)
    vth, rth = b.thevenin(supply_v, r["R1"], r["R2"])
    return b.Network(vth, rth, zero, supply_v + zero, zero, r["RC"], zero, r["RE1"] + r["RE2"])


def ac_terms(r, net, bypassed):
    re_ac, re2 = b.split_emitter_ac(r, bypassed)
    return {"rc": r["RC"], "re_ac": re_ac, "re2": re2, "r_bias": net.rbb, "rb": np.inf}


def supply_current(r, vcc, vb, ic, ib):
    """The divider's top current and IC (A)."""
    return (vcc - vb) / r["R1"] + ic


def swing(r, *, ic, ie, vce, vc, vcc, rl, re_ac, a_bc):
    return b.collector_swing(b.parallel(r["RC"], rl), ic=ic, ie=ie, vce=vce, vc=vc, vcc=vcc, re_ac=re_ac)


def dissipation(r, *, vcc, vb, vc, ie, ic, ib):
    return {"p_R1": (vcc - vb) ** 2 / r["R1"], "p_R2": vb ** 2 / r["R2"], **b.collector_dissipation(r, ie, ic)}


def textbook(*, re_prime, beta, r_bias, re_ac, rc, rb, rl, rs):
    gain = -b.parallel(rc, rl) / (re_prime + re_ac)
    return gain, b.parallel(r_bias, (beta + 1.0) * (re_prime + re_ac)), np.asarray(rc, dtype=float)


def held_network(r, *, supply_v, source_ohms, load_ohms, op, emf_v, bypassed=True):
    zero = 0.0 * (emf_v + op["vb"])
    e0, re = b.held_emitter(r, op, bypassed, zero)
    c0, rcc = b.held_collector(r, supply_v, load_ohms, op)
    b0, rbb = b.held_divider_base(r, supply_v, source_ohms, op, emf_v)
    return b.Network(b0, rbb, zero, c0 + zero, zero, rcc, e0, re)


def ac_network(r, omega, ce):
    return b.divider_g(r), 0.0, 1.0 / r["RC"], b.split_emitter_ac_network(r, omega, ce), "c"


def ideal_values(spec, hfe_min, hfe_typ, ic_floor=MIN_IC_A):
    s = b.collector_seed(spec, SWING_ROOM, ic_floor)
    out = {"RC": s["room"] / s["ic"], "RE1": s["re1"], "RE2": s["re"] - s["re1"]}
    out["R1"], out["R2"] = b.divider(spec.supply_v, s["ve"] + VBE_V, s["ic"], hfe_min, hfe_typ,
                                     s["re1"] + s["vt"] / s["ic"], spec)
    return out


def spec_bounds(sol, spec) -> dict[str, str]:
    """The spec-level bounds that rule out every common-emitter value tuple at once, in words, by name."""
    out = lim.collect(
        gain=lim.gain_bound(spec, spec.supply_v - loadline.VCE_SAT_V - spec.swing_pp / 2,
                            "VCC − VCE(sat) − swing/2"),
        current=lim.current_bound(spec))
    b = sol.bounds
    if b is not None and sol.options is not None and len(sol.options):
        c_max = float(sol.options.value.max())
        r = b.min_re2_ohms
        if r - spec.source_ohms > max(spec.rin_floor, 0.0) or r > spec.load_ohms:
            out["low_cut"] = (f"low cut-off binds: the largest capacitance on hand, {format_capacitance(c_max)}, "
                              f"meets {spec.low_cut_hz:g} Hz only where it sees ≥ {format_resistance(r)} (corner "
                              f"1/(2π·R·C)): CIN needs RS + Rin and COUT needs RC + RL at least that, which no stage "
                              f"here reaches")
    out.update(lim.collect(rin=lim.rin_bound(sol, spec, "divider")))
    return out


KIND = register(Kind(
    name=NAME,
    resistors=("R1", "R2", "RC", "RE1", "RE2"),
    capacitors=("CIN", "COUT", "CE"),
    optional=("RE1", "RE2", "CE"),
    output="c",
    inverting=True,
    bias="divider",
    emitter=("RE1", "RE2"),
    cap_nodes={"CIN": "vb", "COUT": "vc", "CE": "vn"},
    cap_sides={"CIN": ("the base", "the source"), "COUT": ("the collector", "the load"),
               "CE": ("the emitter resistors", "ground")},
    **hooks(globals()),
    boxes=ce_boxes.ce_chunks,
    spec_bounds=spec_bounds,
    summary="gain from a divider-biased stage with emitter degeneration",
))
