"""The largest clip-free output swing at the load, from the AC load line.

Midband, the coupling capacitors hold their DC charge and CE holds the voltage
of the RE1–RE2 node, so around the operating point the collector (or, for the
follower, the emitter) moves along the AC load line rather than the DC one.
Two things end a clean half-cycle: the transistor running out of current
(cut-off) and VCE reaching VCE(sat) ≈ 0.2 V (common practice, no source).

Common emitter (output at the collector; Rac = RC‖RL, RE1 unbypassed):
  * output rising means collector current falling.  The collector node is
    linear in IC, so with IC → 0 it rises by exactly IC·Rac; that is also
    below the supply (VCC − VC = IC·RC ≥ IC·Rac), the supply limit is kept
    explicitly all the same.   swing_up = min(IC·Rac, VCC − VC).
  * output falling means the current rises by ΔIC; the collector drops ΔIC·Rac
    while the emitter rises ΔIE·RE1 = ΔIC·RE1/α (RE2 stays put, held by CE),
    so VCE falls by ΔIC·(Rac + RE1/α).  Saturation at VCE(sat) gives
    swing_down = (VCE − VCE(sat))·Rac/(Rac + RE1/α),  α = IC/IE at the bias point.
Collector feedback: as above, but the collector also feeds RB, whose far end
  (the base) moves by vc/A with A the small-signal base-to-collector gain, so
  the collector sees Rac = 1/(1/RC + 1/RL + (1 − 1/A)/RB).
Emitter follower (output at the emitter; Rac = RE‖RL, collector at the supply):
  * output falling: the emitter current runs out; at IE → 0 the emitter falls
    by exactly IE·Rac.           swing_down = IE·Rac.
  * output rising: the emitter can rise until VCE = VCE(sat).
                                 swing_up = VCE − VCE(sat).
All swings are positive peak volts at the load; swing_pp = 2·min(up, down).
"""

from __future__ import annotations

import numpy as np

VCE_SAT_V = 0.2  # common practice, no source
CUTOFF_FRACTION = 0.05  # ic below 5 % of its quiescent value = cut off (common practice, no source)


def collector_swing(*, ic, ie, vce, vc, supply_v, r_ac, re_unbypassed, vce_sat=VCE_SAT_V):
    """(swing_up, swing_down) in volts peak for a stage with its output at the collector.

    ic, ie in A; vce, vc, supply_v in V; r_ac the AC load on the collector (Ω);
    re_unbypassed the emitter resistance not held by CE (Ω).
    """
    # α = IC/IE of an amplifying transistor; held in [0.5, 1] so cut-off candidates stay finite.
    alpha = np.clip(np.nan_to_num(ic / ie, nan=1.0), 0.5, 1.0)
    up = np.minimum(np.maximum(ic, 0.0) * r_ac, np.maximum(supply_v - vc, 0.0))
    down = np.maximum(vce - vce_sat, 0.0) * r_ac / (r_ac + re_unbypassed / alpha)
    return up, down


def follower_swing(*, ie, vce, r_ac, vce_sat=VCE_SAT_V):
    """(swing_up, swing_down) in volts peak at the emitter of a follower (r_ac = RE‖RL, Ω)."""
    return np.maximum(vce - vce_sat, 0.0), np.maximum(ie, 0.0) * r_ac


def feedback_load(rc, rl, rb, gain_base_to_collector):
    """AC load (Ω) on the collector of a collector-feedback stage, RB's far end moving by vc/A."""
    g = 1.0 / rc + 1.0 / rl + (1.0 - 1.0 / gain_base_to_collector) / rb
    return 1.0 / g
