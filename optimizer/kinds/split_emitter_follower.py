"""The split-supply emitter follower: RB returns the base to ground, the collector sits on the
positive rail, RE from the emitter to the negative rail, output at the emitter; gain just under
1, non-inverting.  The emitter rests one VBE below ground, so the output can swing both ways
about ground; a ground-referenced source may be joined to the base directly (`--dc-input`).

Node voltages are relative to ground; r["vee"] (< 0) is the negative rail and r["dc"] the
DC-coupled source (registry.Kind).  Hand formulas (textbook): IE ≈ (|VEE| − VBE)/(RE + RB/β),
A ≈ (RE‖RL)/(re' + RE‖RL), rin ≈ RB‖(β+1)(re' + RE‖RL), rout ≈ RE‖(re' + (RS‖RB)/(β+1)).
"""

from __future__ import annotations

import math

import numpy as np

from optimizer.physics import swing as loadline
from optimizer.search.seed import MIN_IC_A, SWING_ROOM, VBE_V
from optimizer.kinds import blocks as b
from optimizer.kinds import spec_limits as lim
from optimizer.kinds.registry import Kind, hooks, register
from optimizer.kinds.split_bounds import split_follower_chunks
from optimizer.kinds.split_common_emitter import base_return, held_base

NAME = "split-emitter-follower"


def wire(stage, two, short):
    two("RB", "R", "base", "0", stage.r("RB"))
    two("RE", "R", "emit", "vee", stage.r("RE"))
    short("coll", "vcc")  # the collector sits on the positive rail


def bias_network(r, supply_v):
    """VB = −RTH·IB, VC = VCC, VE = VEE + RE·IE."""
    zero = np.zeros_like(supply_v)
    return b.Network(zero, base_return(r) + zero, zero, supply_v + zero, zero, zero, r["vee"] + zero, r["RE"])


def ac_terms(r, net, bypassed):
    return {"rc": 0.0, "re_ac": r["RE"], "re2": 0.0, "r_bias": r["RB"], "rb": np.inf}


def supply_current(r, vcc, vb, ic, ib):
    """The larger rail current: the negative rail carries IE."""
    return ic + ib


def swing(r, *, ic, ie, vce, vc, vcc, rl, re_ac, a_bc):
    return loadline.follower_swing(ie=ie, vce=vce, r_ac=b.parallel(re_ac, rl))


def dissipation(r, *, vcc, vb, vc, ie, ic, ib):
    return {"p_RB": vb ** 2 / r["RB"], "p_RE": ie ** 2 * r["RE"]}


def textbook(*, re_prime, beta, r_bias, re_ac, rc, rb, rl, rs):
    r_e = b.parallel(re_ac, rl)
    gain = r_e / (re_prime + r_e)
    rin = b.parallel(r_bias, (beta + 1.0) * (re_prime + r_e))
    rout = b.parallel(re_ac, re_prime + b.parallel(rs, r_bias) / (beta + 1.0))
    return gain, rin, rout


def held_network(r, *, supply_v, source_ohms, load_ohms, op, emf_v, bypassed=True):
    """The emitter sees RE to the negative rail and the load through COUT held at VE."""
    zero = 0.0 * (emf_v + op["vb"])
    g_l = 1.0 / np.asarray(load_ohms, dtype=float)
    g_e = 1.0 / r["RE"] + g_l
    e0 = (r["vee"] / r["RE"] + op["ve"] * g_l) / g_e
    b0, rbb = held_base(r, source_ohms, op, emf_v)
    return b.Network(b0 + zero, rbb + zero, zero, supply_v + zero, zero, zero, e0 + zero, 1.0 / g_e + zero)


def ac_network(r, omega, ce):
    return 1.0 / r["RB"], 0.0, b.SHORT, 1.0 / r["RE"], "e"


def ideal_values(spec, hfe_min, hfe_typ, ic_floor=MIN_IC_A):
    """Emitter one VBE below ground; IE so it can fall the asked half-swing into RE‖RL; RB stiff
    (IB·RB ≤ a tenth of the RE drop) but above the Rin floor.  Common practice, no source."""
    swing_pk, rl = spec.swing_pp / 2.0 * SWING_ROOM, spec.load_ohms
    drop = max(-VBE_V - spec.negative_supply_v, 0.1)
    ie = swing_pk / (rl * (1.0 - swing_pk / drop)) if swing_pk < drop and math.isfinite(rl) else MIN_IC_A
    ie = b.capped(max(ie, ic_floor), spec)
    re = drop / ie
    return {"RB": max(0.1 * hfe_min * re, 2.0 * spec.rin_floor), "RE": re}


def spec_bounds(sol, spec) -> dict[str, str]:
    """The spec-level bounds that rule out every split-supply follower at once, in words, by name."""
    return lim.collect(current=lim.current_bound(spec), rin=lim.rin_bound(sol, spec, "ground"))


KIND = register(Kind(
    name=NAME,
    resistors=("RB", "RE"),
    capacitors=("CIN", "COUT"),
    optional=(),
    output="e",
    inverting=False,
    max_gain=1.0,
    # Just under 1 by nature: a request asks 0.95 ± 5 % (0.90…1.00).  Common practice, no source.
    preset_gain=0.95,
    bias="ground",
    emitter=("RE",),
    cap_nodes={"CIN": "vb", "COUT": "ve"},
    cap_sides={"CIN": ("the base", "the source"), "COUT": ("the emitter", "the load")},
    **hooks(globals()),
    boxes=split_follower_chunks,
    spec_bounds=spec_bounds,
    summary="a buffer on split supplies: output resting near ground, gain just under 1",
    rails=2,
))
