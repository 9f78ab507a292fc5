"""Common emitter: the divider and total emitter resistance fix the bias, then RC and the RE split.

For a bias sub-tuple (R1, R2, RE = RE1 + RE2) the collector current is bracketed
exactly, whatever RC turns out to be.  With IBE the forward diode current and
k = 1 − VBC/VAF the Early factor (transistor.py), IC = k·IBE and IB = IBE/BF, and
the base loop  VTH = RTH·IB + VBE + RE·(IB + IC)  has, for fixed k, one root in
IBE (every term rises with it).  A larger k lowers IBE but raises IC = k·IBE, so
IC lies between the roots at the smallest and largest k a design meeting the spec
can have: VCB ≤ VCC gives k ≤ 1 + VCC/VAF; VCE ≥ VCE(sat) gives
VBC ≤ VBE − VCE(sat), so k ≥ 1 − (VBE_max − VCE(sat))/VAF.  (The reverse diode
terms, ~IS, are below 1e-12 of IC and are covered by BRACKET_SLACK.)

With IC in [IC_lo, IC_hi] at each hFE corner, an RC can only work when
  * swing up ≤ IC·(RC‖RL)  (swing.py)            → RC‖RL ≥ swing/(2·IC_hi);
  * |gain| ≤ (RC‖RL)/(RE1 + 1/gm), gm ≤ IC/Vt       → RC‖RL ≥ G_min·(RE1 + Vt/IC_hi);
  * swing down ≤ VCE − VCE(sat), VCE ≤ VCC − IC·(RC + RE) → RC ≤ (VCC − VCE(sat) − swing/2)/IC_lo − RE.
Those give an interval of RC per (bias, split), looked up with searchsorted.
"""

from __future__ import annotations

import numpy as np

from . import swing as loadline

BRACKET_SLACK = 0.01  # widen [IC_lo, IC_hi] by 1 % each way: rounding, reverse-diode terms, gm ≈ IC/Vt
NEWTON_STEPS = 60


def _root_ibe(vth, rth, re, bf, k, is_a, vt):
    """IBE (A) solving RTH·IBE/BF + Vt·ln(1 + IBE/IS) + RE·IBE·(1/BF + k) = VTH (vectorised).

    Newton in ln(IBE) from the right of the root: the left side is increasing and
    convex in ln(IBE), so the iterates fall monotonically onto the root.
    """
    a = rth / bf + re * (1.0 / bf + k)  # Ω
    start = np.minimum(vth / a, is_a * np.expm1(np.minimum(vth / vt, 700.0)))  # each term alone reaches VTH
    lx = np.log(np.maximum(start, 1e-300))
    for _ in range(NEWTON_STEPS):
        x = np.exp(lx)
        f = a * x + vt * np.log1p(x / is_a) - vth
        df = a * x + vt * x / (is_a + x)  # d f / d ln x
        step = f / df
        lx = lx - step
        if np.all(np.abs(step) < 1e-13):
            break
    return np.exp(lx)


def ic_bracket(vth, rth, re, *, bf, is_a, vaf_v, vt, supply_v):
    """(IC_lo, IC_hi) in amperes over every RC giving VCE ≥ VCE(sat)."""
    vaf = float(vaf_v)
    k_hi = 1.0 + supply_v / vaf
    k_floor = 1.0 - 1.0 / vaf  # VBC ≤ 1 V: a first, safe floor for k
    vbe_hi = vt * np.log1p(_root_ibe(vth, rth, re, bf, k_floor, is_a, vt) / is_a)
    k_lo = 1.0 - np.maximum(vbe_hi - loadline.VCE_SAT_V, 0.0) / vaf
    ic_lo = k_lo * _root_ibe(vth, rth, re, bf, k_lo, is_a, vt)
    ic_hi = k_hi * _root_ibe(vth, rth, re, bf, k_hi, is_a, vt)
    return ic_lo * (1 - BRACKET_SLACK), ic_hi * (1 + BRACKET_SLACK)


def rc_interval(ic_lo, ic_hi, re1, re_total, spec, vt):
    """[RC_lo, RC_hi] (Ω) outside which no RC can meet gain and swing (see module docstring)."""
    g_min = spec.gain * (1 - spec.gain_tol) * (1 - BRACKET_SLACK)
    half = spec.swing_pp / 2.0
    rcl = np.maximum(half / ic_hi, g_min * (re1 + vt / ic_hi))
    rl = spec.load_ohms
    with np.errstate(divide="ignore", invalid="ignore"):
        rc_lo = np.where(rcl < rl, rcl * rl / (rl - rcl), np.inf)
        rc_hi = (spec.supply_v - loadline.VCE_SAT_V - half) / ic_lo - re_total
    return rc_lo * (1 - 1e-9), rc_hi * (1 + 1e-9)


def ragged(start, stop):
    """Flat (owner, index) for index ranges [start[k], stop[k])."""
    n = np.maximum(stop - start, 0)
    owner = np.repeat(np.arange(len(n)), n)
    offset = np.cumsum(n) - n
    idx = np.arange(int(n.sum()), dtype=np.int64) - np.repeat(offset - start, n)
    return owner, idx
