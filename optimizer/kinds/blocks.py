"""Building blocks several kinds share: the bias divider, the collector load, the split
emitter resistance with its bypass, and their formulas.  Pure functions of ohms arrays;
each kind module puts them together and registers the result."""

from __future__ import annotations

import math

import numpy as np

from optimizer.physics import swing as loadline
from optimizer.physics.bias import Network, thevenin
from optimizer.search.seed import MIN_IC_A, capped, divider
from optimizer.physics.smallsignal import SHORT_S, conductance, parallel
from optimizer.physics.transistor import thermal_voltage

SHORT = SHORT_S


def combine(v1, r1, v2, r2):
    """Thevenin (V, Ω) of two sources (v1 behind r1, v2 behind r2) joined at one node; r2 may be 0."""
    return (v1 * r2 + v2 * r1) / (r1 + r2), r1 * r2 / (r1 + r2)


def inv(z):
    """1/Z (S) with Z = 0 a short (`SHORT`); complex or real arrays."""
    z = np.asarray(z, dtype=complex)
    return np.where(z == 0, SHORT, 1.0 / np.where(z == 0, 1.0, z))


def parallel_rc(r, c, omega):
    """R ‖ C impedance (Ω); C = inf → 0 (bypassed), R = 0 → 0."""
    c = np.asarray(c, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        z = r / (1.0 + 1j * omega * r * np.where(np.isinf(c), 1.0, c))
    return np.where(np.isinf(c) | (r == 0), 0.0, z)


# --- wiring (circuit.build's `two(name, kind, a, b, value)`) -------------------------------------

def wire_divider(stage, two):
    two("R1", "R", "vcc", "base", stage.r("R1"))
    two("R2", "R", "base", "0", stage.r("R2"))


def wire_split_emitter(stage, two):
    """RE1 (unbypassed) over RE2, CE across RE2 when RE2 is fitted."""
    two("RE1", "R", "emit", "mid", stage.r("RE1"))
    two("RE2", "R", "mid", "0", stage.r("RE2"))
    if stage.r("RE2") > 0:
        two("CE", "C", "mid", "0", stage.capacitors.get("CE", 0.0))


# --- the collector-output stages with a split emitter (common emitter, collector feedback) -------

def split_emitter_ac(r, bypassed):
    """(RE at signal frequencies, RE2) in ohms: RE2 drops out where CE bypasses it."""
    re2 = r["RE2"]
    return r["RE1"] + np.where(bypassed, 0.0, re2), re2


def collector_dissipation(r, ie, ic_rc):
    """p_RC (from the current RC carries), p_RE1, p_RE2 (W)."""
    return {"p_RC": ic_rc ** 2 * r["RC"], "p_RE1": ie ** 2 * r["RE1"], "p_RE2": ie ** 2 * r["RE2"]}


def held_emitter(r, op, bypassed, zero):
    """(e0, re) of the emitter side with CE held at its DC charge (or unbypassed)."""
    if bypassed:
        return op["vn"] + zero, r.get("RE1", 0.0) + zero
    return zero, r.get("RE1", 0.0) + r.get("RE2", 0.0) + zero


def held_collector(r, supply_v, load_ohms, op):
    """(c0, rcc): RC from the supply and the load through COUT held at VC."""
    g_l = 1.0 / np.asarray(load_ohms, dtype=float)
    g_c = 1.0 / r["RC"] + g_l
    return (supply_v / r["RC"] + op["vc"] * g_l) / g_c, 1.0 / g_c


def held_divider_base(r, supply_v, source_ohms, op, emf_v):
    """(b0, rbb): the divider joined with the source behind CIN (held at VB)."""
    vth, rth = thevenin(supply_v, r["R1"], r["R2"])
    return combine(vth, rth, emf_v + op["vb"], source_ohms)


def split_emitter_ac_network(r, omega, ce):
    """The emitter conductance (S) at ω (rad/s) with CE of `ce` farads across RE2."""
    return inv(r["RE1"] + parallel_rc(r["RE2"], ce, omega))


def divider_g(r):
    return 1.0 / thevenin(1.0, r["R1"], r["R2"])[1]


def collector_swing(r_ac, *, ic, ie, vce, vc, vcc, re_ac):
    return loadline.collector_swing(ic=ic, ie=ie, vce=vce, vc=vc, supply_v=vcc, r_ac=r_ac, re_unbypassed=re_ac)


# --- seeds (common practice, no source; see seed.py) --------------------------------------------

def collector_seed(spec, swing_room, ic_floor=MIN_IC_A):
    """VE, the collector's room, IC (at least ic_floor, A), RC, RE, RE1 of the textbook collector-output stage."""
    vcc, swing, rl = spec.supply_v, spec.swing_pp / 2.0 * swing_room, spec.load_ohms
    vt = float(thermal_voltage(27.0))
    ve = min(max(1.0, vcc / 10.0), vcc / 4.0)
    low = ve + max(spec.min_vce_v, loadline.VCE_SAT_V + swing)
    vc = (vcc + low) / 2.0
    room = vcc - vc
    need = 1.2 * swing
    ic = need * room / (rl * (room - need)) if room > need and math.isfinite(rl) else MIN_IC_A
    ic = capped(max(ic, ic_floor), spec)
    rac = room / ic if not math.isfinite(rl) else (room / ic) * rl / (room / ic + rl)
    re = ve / ic
    re1 = min(max(rac / spec.gain - vt / ic, 0.0), re)
    return {"ve": ve, "vc": vc, "room": room, "ic": ic, "re": re, "re1": re1, "vt": vt}


__all__ = ["Network", "SHORT", "capped", "conductance", "divider", "parallel", "thevenin"]
