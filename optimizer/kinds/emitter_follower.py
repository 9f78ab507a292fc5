"""The emitter follower: divider bias R1/R2, collector at the supply, RE to ground, output at
the emitter; gain just under 1, non-inverting, a high input and low output resistance.

Hand formulas (textbook): A ≈ (RE‖RL)/(re' + RE‖RL), rin ≈ R1‖R2‖(β+1)(re' + RE‖RL),
rout ≈ RE‖(re' + (RS‖R1‖R2)/(β+1)).
"""

from __future__ import annotations

import math

import numpy as np

from optimizer.kinds import emitter_follower_bounds as follower_boxes
from optimizer.physics import swing as loadline
from optimizer.search.seed import MIN_IC_A, SWING_ROOM, VBE_V
from optimizer.kinds import blocks as b
from optimizer.kinds import spec_limits as lim
from optimizer.kinds.registry import Kind, hooks, register

NAME = "emitter-follower"


def wire(stage, two, short):
    b.wire_divider(stage, two)
    two("RE", "R", "emit", "0", stage.r("RE"))
    short("coll", "vcc")  # the collector sits on the supply


def bias_network(r, supply_v):
    """VB = VTH − RTH·IB, VC = VCC, VE = RE·IE."""
    zero = np.zeros_like(supply_v)
    vth, rth = b.thevenin(supply_v, r["R1"], r["R2"])
    return b.Network(vth, rth, zero, supply_v + zero, zero, zero, zero, r["RE"])


def ac_terms(r, net, bypassed):
    return {"rc": 0.0, "re_ac": r["RE"], "re2": 0.0, "r_bias": net.rbb, "rb": np.inf}


def supply_current(r, vcc, vb, ic, ib):
    return (vcc - vb) / r["R1"] + ic


def swing(r, *, ic, ie, vce, vc, vcc, rl, re_ac, a_bc):
    return loadline.follower_swing(ie=ie, vce=vce, r_ac=b.parallel(re_ac, rl))


def dissipation(r, *, vcc, vb, vc, ie, ic, ib):
    return {"p_R1": (vcc - vb) ** 2 / r["R1"], "p_R2": vb ** 2 / r["R2"], "p_RE": ie ** 2 * r["RE"]}


def textbook(*, re_prime, beta, r_bias, re_ac, rc, rb, rl, rs):
    r_e = b.parallel(re_ac, rl)
    gain = r_e / (re_prime + r_e)
    rin = b.parallel(r_bias, (beta + 1.0) * (re_prime + r_e))
    rout = b.parallel(re_ac, re_prime + b.parallel(rs, r_bias) / (beta + 1.0))
    return gain, rin, rout


def held_network(r, *, supply_v, source_ohms, load_ohms, op, emf_v, bypassed=True):
    """The emitter sees RE and the load through COUT held at VE; the collector the supply."""
    zero = 0.0 * (emf_v + op["vb"])
    g_l = 1.0 / np.asarray(load_ohms, dtype=float)
    e0 = op["ve"] * g_l / (1.0 / r["RE"] + g_l)
    re = 1.0 / (1.0 / r["RE"] + g_l)
    b0, rbb = b.held_divider_base(r, supply_v, source_ohms, op, emf_v)
    return b.Network(b0, rbb, zero, supply_v + zero, zero, zero, e0, re)


def ac_network(r, omega, ce):
    return b.divider_g(r), 0.0, b.SHORT, 1.0 / r["RE"], "e"


def ideal_values(spec, hfe_min, hfe_typ, ic_floor=MIN_IC_A):
    """The emitter at about half the supply; IE so it can fall the asked half-swing into RE‖RL."""
    vcc, swing_pk, rl = spec.supply_v, spec.swing_pp / 2.0 * SWING_ROOM, spec.load_ohms
    ve = max(vcc / 2.0 - VBE_V / 2.0, 0.5)
    ie = swing_pk / (rl * (1.0 - swing_pk / ve)) if swing_pk < ve and math.isfinite(rl) else MIN_IC_A
    ie = b.capped(max(ie, ic_floor), spec)
    r1, r2 = b.divider(vcc, ve + VBE_V, ie, hfe_min, hfe_typ, ve / ie, spec)
    return {"R1": r1, "R2": r2, "RE": ve / ie}


def spec_bounds(sol, spec) -> dict[str, str]:
    """The spec-level bounds that rule out every emitter follower at once, in words, by name."""
    return lim.collect(current=lim.current_bound(spec), rin=lim.rin_bound(sol, spec, "divider"))


KIND = register(Kind(
    name=NAME,
    resistors=("R1", "R2", "RE"),
    capacitors=("CIN", "COUT"),
    optional=(),
    output="e",
    inverting=False,
    max_gain=1.0,
    # Just under 1 by nature: a request asks 0.95 ± 5 % (0.90…1.00).  Common practice, no source.
    preset_gain=0.95,
    bias="divider",
    emitter=("RE",),
    cap_nodes={"CIN": "vb", "COUT": "ve"},
    cap_sides={"CIN": ("the base", "the source"), "COUT": ("the emitter", "the load")},
    **hooks(globals()),
    boxes=follower_boxes.follower_chunks,
    spec_bounds=spec_bounds,
    summary="a buffer: gain just under 1, high input and low output resistance",
))
