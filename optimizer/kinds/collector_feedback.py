"""The collector-feedback stage: RB from the collector to the base carries the base current,
RC from the supply carries IC + IB, emitter resistance RE1 over RE2 (bypassed by CE), output
at the collector, inverting.  The feedback steadies the bias against hFE.

Hand formulas (textbook): A ≈ −(RC‖RL‖RB)/(re' + RE1), rin ≈ RB/(1 + |A|) ‖ (β+1)(re' + RE1)
(Miller), rout ≈ RC‖RB (the feedback lowers it further; the exact solve has it).
"""

from __future__ import annotations

import numpy as np

from optimizer.kinds import collector_feedback_bounds as feedback_boxes
from optimizer.physics import swing as loadline
from optimizer.search.seed import MIN_IC_A, SWING_ROOM, VBE_V
from optimizer.kinds import blocks as b
from optimizer.kinds import spec_limits as lim
from optimizer.kinds.registry import Kind, hooks, register

NAME = "collector-feedback"


def wire(stage, two, short):
    two("RB", "R", "coll", "base", stage.r("RB"))
    two("RC", "R", "vcc", "coll", stage.r("RC"))
    b.wire_split_emitter(stage, two)


def bias_network(r, supply_v):
    """RC carries IC + IB, RB carries IB from the collector to the base."""
    rc, rb = r["RC"], r["RB"]
    zero = np.zeros_like(supply_v)
    return b.Network(supply_v + zero, rc + rb, rc, supply_v + zero, rc, rc, zero, r["RE1"] + r["RE2"])


def ac_terms(r, net, bypassed):
    re_ac, re2 = b.split_emitter_ac(r, bypassed)
    return {"rc": r["RC"], "re_ac": re_ac, "re2": re2, "r_bias": np.inf, "rb": r["RB"]}


def supply_current(r, vcc, vb, ic, ib):
    """RC carries the whole emitter current."""
    return ic + ib


def swing(r, *, ic, ie, vce, vc, vcc, rl, re_ac, a_bc):
    r_ac = loadline.feedback_load(r["RC"], rl, r["RB"], a_bc)
    return b.collector_swing(r_ac, ic=ic, ie=ie, vce=vce, vc=vc, vcc=vcc, re_ac=re_ac)


def dissipation(r, *, vcc, vb, vc, ie, ic, ib):
    p = {"p_RB": (vc - vb) ** 2 / r["RB"]}
    p.update(b.collector_dissipation(r, ie, ic + ib))
    return p


def textbook(*, re_prime, beta, r_bias, re_ac, rc, rb, rl, rs):
    gain = -b.parallel(rc, rl, rb) / (re_prime + re_ac)
    rin = b.parallel(rb / (1.0 + np.abs(gain)), (beta + 1.0) * (re_prime + re_ac))
    return gain, rin, b.parallel(rc, rb)


def held_network(r, *, supply_v, source_ohms, load_ohms, op, emf_v, bypassed=True):
    """Base and collector joined by RB; written with RS (not 1/RS) so RS = 0 works."""
    v_src = emf_v + op["vb"]
    zero = 0.0 * v_src
    e0, re = b.held_emitter(r, op, bypassed, zero)
    c0, rcc = b.held_collector(r, supply_v, load_ohms, op)
    rs, g_f, g_c = source_ohms, 1.0 / r["RB"], 1.0 / rcc
    det = g_c + g_f + g_f * g_c * rs
    return b.Network(
        b0=(g_f * g_c * c0 * rs + (g_c + g_f) * v_src) / det,
        rbb=(g_c + g_f) * rs / det,
        rbc=g_f * rs / det,
        c0=(g_f * v_src + (g_f * rs + 1.0) * g_c * c0) / det,
        rcb=g_f * rs / det,
        rcc=(g_f * rs + 1.0) / det,
        e0=e0,
        re=re,
    )


def ac_network(r, omega, ce):
    return 0.0, 1.0 / r["RB"], 1.0 / r["RC"], b.split_emitter_ac_network(r, omega, ce), "c"


def ideal_values(spec, hfe_min, hfe_typ, ic_floor=MIN_IC_A):
    """As the common emitter, with RB from the collector feeding the base current at the typical hFE."""
    s = b.collector_seed(spec, SWING_ROOM, ic_floor)
    ic = s["ic"]
    return {"RC": s["room"] / (ic * (1.0 + 1.0 / hfe_typ)), "RE1": s["re1"], "RE2": s["re"] - s["re1"],
            "RB": max(s["vc"] - s["ve"] - VBE_V, 0.1) / (ic / hfe_typ)}


def spec_bounds(sol, spec) -> dict[str, str]:
    """The spec-level bounds that rule out every collector-feedback stage at once, in words, by name."""
    return lim.collect(
        gain=lim.gain_bound(spec, spec.supply_v - loadline.VCE_SAT_V - spec.swing_pp / 2,
                            "VCC − VCE(sat) − swing/2"),
        current=lim.current_bound(spec), rin=lim.rin_bound(sol, spec, "feedback"))


KIND = register(Kind(
    name=NAME,
    resistors=("RB", "RC", "RE1", "RE2"),
    capacitors=("CIN", "COUT", "CE"),
    optional=("RE1", "RE2", "CE"),
    output="c",
    inverting=True,
    bias="feedback",
    emitter=("RE1", "RE2"),
    cap_nodes={"CIN": "vb", "COUT": "vc", "CE": "vn"},
    cap_sides={"CIN": ("the base", "the source"), "COUT": ("the collector", "the load"),
               "CE": ("the emitter resistors", "ground")},
    **hooks(globals()),
    boxes=feedback_boxes.feedback_chunks,
    spec_bounds=spec_bounds,
    summary="gain with the bias steadied by feedback from the collector",
))
