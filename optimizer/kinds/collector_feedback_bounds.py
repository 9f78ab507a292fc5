"""Collector-feedback value tuples (RB, RC, RE1, RE2) by branch and bound over boxes of sorted values.

Bias (bias.py): RC carries IE = IB + IC, RB carries IB from the collector to the base, so
the base loop VCC = RC·IE + RB·IB + VBE + RE·IE (RE = RE1 + RE2) is, with IC = k·IBE and
IB = IBE/BF, the common emitter's loop (decompose.ibe_bracket) with VTH = VCC, RTH = RB
and RC + RE in place of RE.  The root falls as RB, RC or RE grows, so over a box
ic_bracket at (RB, RC, RE max) with `upper=` at (RB, RC, RE min) brackets IC for every
tuple in it.  VBC = −RB·IB ≤ 0, and RB·IB = VC − VB ≤ VCC: 1 ≤ k ≤ 1 + VCC/VAF
(box_search.reverse_bc_kw).  A design meeting the spec inverts (gain < 0), so the
base-to-collector gain A = vc/vb is negative, and |A| ≥ |gain| ≥ G_min because
vb/EMF = D = Rin/(Rin + RS) ≤ 1.  At each hFE corner, with R' = RC‖RL‖RB (SI units):

  * Rin ≤ RB/(1 + |A|): RB carries vb·(1 + |A|)/RB; so RB ≥ Rin_min·(1 + G_min);
  * swing up ≤ IC·Rac, Rac = 1/(1/RC + 1/RL + (1 + 1/|A|)/RB) ≤ R' (swing.py): IC high, R' max;
  * swing down = (VCE − VCE(sat))·Rac/(Rac + RE1/α) ≤ (VCE − VCE(sat))·R'/(R' + RE1) with
    VCE = VCC − IE·(RC + RE) ≤ VCC − IC·(RC + RE): IC low, RC and RE min, R' max, RE1 min;
    its first factor ≥ swing/2 is also "not saturated";
  * collector node: vc·(1/RC + 1/RL + 1/RB + go + gμ) = vb·(1/RB + gμ) − gm·vbe + go·ve, and the
    emitter gives vb/(1 + (gm + gπ)·RE1) ≤ vbe ≤ vb/(1 + gm·RE1) (go terms aside), so
      |A| ≤ gm·R'/(1 + gm·RE1)                                  (IC high, R' max, RE1 min),
      |A| ≥ (gm/(1 + gm·(1 + 1/β)·RE1) − go − 1/RB − gμ)/(1/RC + 1/RL + 1/RB + go + gμ)
            (IC low, RE1 max, RB and RC min; go ≤ IC high/VAF, gμ ≤ IS/(Vt·BR) with VBC ≤ 0),
    each widened by decompose.GAIN_SAFETY as the common emitter's bounds are;
  * |gain| = D·|A|: D ≤ Rin_max/(Rin_max + RS) with Rin_max = RB/(1 + G_min), and
    D ≥ 1/(1 + RS·Yin_max), Yin = (1/RB + gμ)·(1 + |A|) + gπ·vbe/vb ≤ (1/RB + gμ)(1 + |A|max) + gm/β;
  * not cut off (IC high ≥ 1 µA), supply current IE ≥ IC low ≤ the limit, IC(max) ≥ IC low,
    PD: VCE·IC ≥ vce_min·IC low ≤ the derated PD.
gm = IC/Vt within decompose.BRACKET_SLACK (the exact y-parameters differ by IS and Vt/VAF terms).
"""

from __future__ import annotations

import numpy as np

from optimizer.physics import swing as loadline
from optimizer.search.box_search import boxes, limits_ok, reverse_bc_kw
from optimizer.search.decompose import BRACKET_SLACK, GAIN_SAFETY, ic_bracket
from optimizer.physics.screen import CUTOFF_A
from optimizer.physics.smallsignal import parallel

DIMS = ("RB", "RC", "RE1", "RE2")
ROUND = 1e-9  # relative room for rounding in the comparisons with the spec


def feedback_chunks(g: dict, spec, transistor, betas):
    """Yield dicts position → ohms arrays: the tuples of groups `g` that survive the bounds."""
    g_min = spec.gain * (1 - spec.gain_tol) * (1 - ROUND)
    g_max = spec.gain * (1 + spec.gain_tol) * (1 + ROUND)
    half = spec.swing_pp / 2.0
    vce_min = loadline.VCE_SAT_V + half
    if vce_min >= spec.supply_v or (transistor.vceo_v and transistor.vceo_v < spec.supply_v):
        return
    kw, br = reverse_bc_kw(spec, transistor)
    vt, vcc, rl, rs = kw["vt"], spec.supply_v, spec.load_ohms, spec.source_ohms
    g_mu = kw["is_a"] / (vt * br)
    vaf = transistor.vaf_v

    def box_ok(a, b, point):
        (rba, rca, e1a, e2a), (rbb, rcb, e1b, e2b) = a, b
        ok = rbb >= spec.rin_floor * (1 + g_min) * (1 - ROUND)
        ua, ub = e1a + e2a, e1b + e2b
        upper = None if point else (vcc, rba, rca + ua)
        rp_hi = parallel(rcb, rl, rbb)
        rin_max = rbb / (1 + g_min)
        d_hi = rin_max / (rin_max + rs)
        for beta in betas:
            ic_lo, ic_hi = ic_bracket(vcc, rbb, rcb + ub, bf=beta, upper=upper, **kw)
            ok &= ic_hi >= CUTOFF_A * (1 - ROUND)
            ok &= ic_hi * rp_hi >= half * (1 - ROUND)
            head = vcc - loadline.VCE_SAT_V - ic_lo * (rca + ua)
            ok &= head >= half * (1 - ROUND)
            ok &= head * rp_hi / (rp_hi + e1a) >= half * (1 - ROUND)
            gm_hi, gm_lo = ic_hi / vt * (1 + BRACKET_SLACK), ic_lo / vt * (1 - BRACKET_SLACK)
            go = ic_hi * (1 + BRACKET_SLACK) / vaf
            a_hi = gm_hi * rp_hi / (1 + gm_hi * e1a) * (1 + GAIN_SAFETY)
            num = gm_lo / (1 + gm_lo * (1 + 1 / beta) * e1b) - go - 1 / rba - g_mu
            a_lo = np.maximum(num, 0.0) / (1 / rca + 1 / rl + 1 / rba + go + g_mu) * (1 - GAIN_SAFETY)
            y_in = (1 / rba + g_mu) * (1 + a_hi) + gm_hi / beta
            d_lo = 1 / (1 + rs * y_in)
            ok &= (d_hi * a_hi >= g_min) & (d_lo * a_lo <= g_max)
            ok &= rbb / (1 + np.maximum(a_lo, g_min)) >= spec.rin_floor * (1 - ROUND)
            ok &= limits_ok(ic_lo, ic_lo, vce_min, spec, transistor, ROUND)
        return ok

    yield from boxes(g, DIMS, box_ok)
