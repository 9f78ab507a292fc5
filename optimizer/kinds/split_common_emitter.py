"""The split-supply common emitter: RB returns the base to ground, RC from the positive rail,
emitter resistance RE1 (unbypassed) over RE2 to the negative rail, CE from the RE1–RE2 node
to ground (ground and the negative rail are both signal ground; to ground the capacitor holds
only the ~1 V below ground there, not the whole negative rail), output at the collector,
inverting.  With the base near 0 V the emitter sits one VBE below ground and
IE ≈ (|VEE| − VBE)/(RE1 + RE2): the bias hardly depends on hFE.  A ground-referenced source
may be joined to the base directly (`--dc-input`, no CIN): its resistance then returns the
base to ground alongside RB.

Node voltages are relative to ground; r["vee"] (< 0) is the negative rail and r["dc"] the
DC-coupled source (registry.Kind).  Hand formulas (textbook): IE ≈ (|VEE| − VBE)/(RE + RB/β),
A ≈ −(RC‖RL)/(re' + RE1), rin ≈ RB‖(β+1)(re' + RE1), rout ≈ RC.
"""

from __future__ import annotations

import math

import numpy as np

from optimizer.physics import swing as loadline
from optimizer.search.seed import MIN_IC_A, SWING_ROOM, VBE_V
from optimizer.physics.transistor import thermal_voltage
from optimizer.kinds import blocks as b
from optimizer.kinds import spec_limits as lim
from optimizer.kinds.registry import Kind, hooks, register
from optimizer.kinds.split_bounds import split_ce_chunks

NAME = "split-common-emitter"


def base_return(r):
    """RTH (Ω) of the base's DC return to ground: RB, in parallel with RS when the source is DC-coupled."""
    rb, rs = np.asarray(r["RB"], dtype=float), np.asarray(r["rs"], dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        both = np.where(rb + rs > 0, rb * rs / np.where(rb + rs > 0, rb + rs, 1.0), 0.0)
    return np.where(np.asarray(r.get("dc", 0.0)) > 0, both, rb)


def wire_emitter_to_rail(stage, two):
    """RE1 over RE2 down to the negative rail, CE from their junction to ground (signal ground)."""
    if stage.r("RE2") > 0:
        two("RE1", "R", "emit", "mid", stage.r("RE1"))
        two("RE2", "R", "mid", "vee", stage.r("RE2"))
        two("CE", "C", "mid", "0", stage.capacitors.get("CE", 0.0))
    else:
        two("RE1", "R", "emit", "vee", stage.r("RE1"))


def wire(stage, two, short):
    two("RB", "R", "base", "0", stage.r("RB"))
    two("RC", "R", "vcc", "coll", stage.r("RC"))
    wire_emitter_to_rail(stage, two)


def bias_network(r, supply_v):
    """VB = −RTH·IB (RTH = RB, ‖ RS when DC-coupled), VC = VCC − RC·IC, VE = VEE + (RE1 + RE2)·IE."""
    zero = np.zeros_like(supply_v)
    return b.Network(zero, base_return(r) + zero, zero, supply_v + zero, zero, r["RC"] + zero,
                     r["vee"] + zero, r["RE1"] + r["RE2"])


def ac_terms(r, net, bypassed):
    re_ac, re2 = b.split_emitter_ac(r, bypassed)
    return {"rc": r["RC"], "re_ac": re_ac, "re2": re2, "r_bias": r["RB"], "rb": np.inf}


def supply_current(r, vcc, vb, ic, ib):
    """The larger rail current: the negative rail carries IE (the positive one IC)."""
    return ic + ib


def swing(r, *, ic, ie, vce, vc, vcc, rl, re_ac, a_bc):
    return b.collector_swing(b.parallel(r["RC"], rl), ic=ic, ie=ie, vce=vce, vc=vc, vcc=vcc, re_ac=re_ac)


def dissipation(r, *, vcc, vb, vc, ie, ic, ib):
    return {"p_RB": vb ** 2 / r["RB"], **b.collector_dissipation(r, ie, ic)}


def textbook(*, re_prime, beta, r_bias, re_ac, rc, rb, rl, rs):
    gain = -b.parallel(rc, rl) / (re_prime + re_ac)
    return gain, b.parallel(r_bias, (beta + 1.0) * (re_prime + re_ac)), np.asarray(rc, dtype=float)


def held_base(r, source_ohms, op, emf_v):
    """(b0, rbb): RB to ground joined with the source: behind CIN held at VB, or direct (DC input)."""
    dc = np.asarray(r.get("dc", 0.0)) > 0
    return b.combine(0.0, r["RB"], emf_v + np.where(dc, 0.0, op["vb"]), source_ohms)


def held_network(r, *, supply_v, source_ohms, load_ohms, op, emf_v, bypassed=True):
    zero = 0.0 * (emf_v + op["vb"])
    if bypassed:  # CE holds the RE1–RE2 node at its DC voltage
        e0, re = op["vn"] + zero, r["RE1"] + zero
    else:
        e0, re = r["vee"] + zero, r["RE1"] + r["RE2"] + zero
    c0, rcc = b.held_collector(r, supply_v, load_ohms, op)
    b0, rbb = held_base(r, source_ohms, op, emf_v)
    return b.Network(b0 + zero, rbb + zero, zero, c0 + zero, zero, rcc, e0, re)


def ac_network(r, omega, ce):
    return 1.0 / r["RB"], 0.0, 1.0 / r["RC"], b.split_emitter_ac_network(r, omega, ce), "c"


def ideal_values(spec, hfe_min, hfe_typ, ic_floor=MIN_IC_A):
    """Emitter one VBE below ground, the collector centred between it and the top rail for the
    swing, IC from the swing into RC‖RL, RE from |VEE| − VBE, RE1 from the gain, RB stiff
    (IB·RB ≤ a tenth of the RE drop) but above the Rin floor.  Common practice, no source."""
    vcc, vee, rl = spec.supply_v, spec.negative_supply_v, spec.load_ohms
    swing_pk = spec.swing_pp / 2.0 * SWING_ROOM
    vt = float(thermal_voltage(27.0))
    ve = -VBE_V
    low = ve + max(spec.min_vce_v, loadline.VCE_SAT_V + swing_pk)
    vc = (vcc + low) / 2.0
    room = vcc - vc
    need = 1.2 * swing_pk
    ic = need * room / (rl * (room - need)) if room > need and math.isfinite(rl) else MIN_IC_A
    ic = b.capped(max(ic, ic_floor), spec)
    rac = room / ic if not math.isfinite(rl) else (room / ic) * rl / (room / ic + rl)
    re = max(ve - vee, 0.1) / ic
    re1 = min(max(rac / spec.gain - vt / ic, 0.0), re)
    rb = max(0.1 * hfe_min * re, 2.0 * spec.rin_floor)
    return {"RB": rb, "RC": room / ic, "RE1": re1, "RE2": re - re1}


def spec_bounds(sol, spec) -> dict[str, str]:
    """The spec-level bounds that rule out every split-supply common emitter at once, in words, by name.
    The emitter sits no lower than the negative rail, so the collector's room is at most the span less
    VCE(sat) and half the swing."""
    return lim.collect(
        gain=lim.gain_bound(spec, spec.span_v - loadline.VCE_SAT_V - spec.swing_pp / 2,
                            "VCC − VEE − VCE(sat) − swing/2"),
        current=lim.current_bound(spec), rin=lim.rin_bound(sol, spec, "ground"))


KIND = register(Kind(
    name=NAME,
    resistors=("RB", "RC", "RE1", "RE2"),
    capacitors=("CIN", "COUT", "CE"),
    optional=("RE1", "RE2", "CE"),
    output="c",
    inverting=True,
    bias="ground",
    emitter=("RE1", "RE2"),
    cap_nodes={"CIN": "vb", "COUT": "vc", "CE": "vn"},
    cap_sides={"CIN": ("the base", "the source"), "COUT": ("the collector", "the load"),
               "CE": ("the emitter resistors", "ground")},
    **hooks(globals()),
    boxes=split_ce_chunks,
    spec_bounds=spec_bounds,
    summary="gain on split supplies: base returned to ground, emitter to the negative rail",
    rails=2,
))
