"""Emitter-follower value tuples (R1, R2, RE) by branch and bound over boxes of sorted values.

The base loop is the common emitter's (decompose.py) with RE in place of RE1 + RE2 and
the collector at the supply, so the IBE root falls as R1 or RE grows and rises with R2
(ce_boxes.py): over a box, ic_bracket at (R1 max, R2 min, RE max) with `upper=` at
(R1 min, R2 max, RE min) brackets IC for every tuple in it.  VBC = VB − VCC ≤ 0, so
1 ≤ k ≤ 1 + VCC/VAF (box_search.reverse_bc_kw).  IB ≤ IC/β gives IE ≤ IC·(1 + 1/β).
Every test below holds for each design meeting the spec at the hFE corner tested
(swing.py and feasible.py are the truth; SI units):

  * gain: the emitter node gives ve·(1/RE + 1/RL + go) = (gm + gπ)·(vb − ve) (collector at
    signal ground), so ve/vb = y/(1 + y), y = (gm + gπ)/(1/RE + 1/RL + go); the base node
    gives vb/EMF = D = 1/(1 + RS·Yin), Yin = 1/RTH + gπ/(1 + y) + gμ.  So exactly
    A = D·y/(1 + y) < 1, and with gm + gπ ≤ IE/Vt, gm ≥ IC/Vt (within BRACKET_SLACK),
    go ≤ IC/VAF, gμ ≤ IS/(Vt·BR) (VBC ≤ 0):
      A ≤ RTH/(RTH + RS) · y_hi/(1 + y_hi),  y_hi = IE_hi/Vt·(RE‖RL)   (R1, R2, RE max; IC high),
      A ≥ D_lo · y_lo/(1 + y_lo),  y_lo = (IC_lo/Vt)/(1/RE_min + 1/RL + IC_hi/VAF),
      D_lo = 1/(1 + RS·(1/RTH_min + gπ_hi/(1 + y_lo) + gμ)), gπ_hi = IC_hi/(β·Vt);
    G_min ≥ 1 fails at once;
  * Rin ≤ R1‖R2, largest at (R1 max, R2 max);
  * swing down = IE·(RE‖RL) ≥ swing/2: IE high and RE max;
  * swing up = VCE − VCE(sat) ≥ swing/2 with VCE = VCC − IE·RE, so IC·RE ≤ VCC − vce_min
    (vce_min = VCE(sat) + swing/2; also "not saturated" when swing is 0): IC low, RE min;
  * not cut off: IC high ≥ 1 µA (screen.CUTOFF_A);
  * supply current (VCC − VB)/R1 + IC ≥ VCC/(R1 + R2) + IC (VB ≤ VTH: IB ≥ 0) ≤ the limit:
    R1, R2 max, IC low;  IC(max) ≥ IC;  PD: VCE·IC ≥ vce_min·IC low ≤ the derated PD.
"""

from __future__ import annotations

from optimizer.physics import swing as loadline
from optimizer.physics.bias import thevenin
from optimizer.search.box_search import boxes, limits_ok, reverse_bc_kw
from optimizer.search.decompose import BRACKET_SLACK, ic_bracket
from optimizer.physics.screen import CUTOFF_A
from optimizer.physics.smallsignal import parallel

DIMS = ("R1", "R2", "RE")
ROUND = 1e-9  # relative room for rounding in the comparisons with the spec


def follower_chunks(g: dict, spec, transistor, betas):
    """Yield dicts position → ohms arrays: the tuples of groups `g` that survive the bounds."""
    g_min = spec.gain * (1 - spec.gain_tol) * (1 - ROUND)
    half = spec.swing_pp / 2.0
    vce_min = loadline.VCE_SAT_V + half
    if g_min >= 1.0 or vce_min >= spec.supply_v or (transistor.vceo_v and transistor.vceo_v < spec.supply_v):
        return
    g_max = spec.gain * (1 + spec.gain_tol) * (1 + ROUND)
    kw, br = reverse_bc_kw(spec, transistor)
    vt, vcc, rl, rs = kw["vt"], spec.supply_v, spec.load_ohms, spec.source_ohms
    g_mu = kw["is_a"] / (vt * br)

    def box_ok(a, b, point):
        (r1a, r2a, rea), (r1b, r2b, reb) = a, b
        rth_top = r1b * r2b / (r1b + r2b)
        ok = rth_top >= spec.rin_floor * (1 - ROUND)
        vth_x, rth_x = thevenin(vcc, r1b, r2a)  # the least IBE root
        upper = None if point else (*thevenin(vcc, r1a, r2b), rea)
        r_ac = parallel(reb, rl)
        d_hi = rth_top / (rth_top + rs)
        rth_min = r1a * r2a / (r1a + r2a)
        for beta in betas:
            ic_lo, ic_hi = ic_bracket(vth_x, rth_x, reb, bf=beta, upper=upper, **kw)
            ie_hi = ic_hi * (1 + 1 / beta)
            ok &= ic_hi >= CUTOFF_A * (1 - ROUND)
            ok &= ie_hi * r_ac >= half * (1 - ROUND)
            ok &= ic_lo * rea <= (vcc - vce_min) * (1 + ROUND)
            y = ie_hi / vt * (1 + BRACKET_SLACK) * r_ac
            ok &= d_hi * y / (1 + y) >= g_min
            go = ic_hi * (1 + BRACKET_SLACK) / transistor.vaf_v
            y_lo = ic_lo / vt * (1 - BRACKET_SLACK) / (1 / rea + 1 / rl + go)
            g_pi = ic_hi * (1 + BRACKET_SLACK) / (beta * vt)
            d_lo = 1 / (1 + rs * (1 / rth_min + g_pi / (1 + y_lo) + g_mu))
            ok &= d_lo * y_lo / (1 + y_lo) <= g_max
            ok &= limits_ok(vcc / (r1b + r2b) * (1 - 1e-6) + ic_lo, ic_lo, vce_min, spec, transistor, ROUND)
        return ok

    yield from boxes(g, DIMS, box_ok)
