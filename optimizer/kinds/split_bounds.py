"""Branch and bound for the split-supply kinds (RB to ground, the emitter to the negative rail).

Seen from the negative rail (every voltage shifted up by |VEE|) the base loop is the common
emitter's (decompose.ibe_bracket) with VTH = |VEE| (ground), RTH = RB (‖ RS when the source
is DC-coupled) and RE = RE1 + RE2 (the follower: RE), on a supply of span = VCC − VEE.  The
IBE root falls as RTH or RE grows, so over a box ic_bracket at (RB, RE max) with `upper=` at
(RB, RE min) brackets IC for every tuple in it.  VB ≥ VEE + VBE, so VCB ≤ span and the Early
factor k ≤ 1 + span/VAF.  At signal frequencies RB and the source see the base exactly as a
divider's RTH does, so the common emitter's gain bounds (decompose.gain_bounds' formulas,
GAIN_SAFETY) and the follower's (follower_boxes.py) hold with RTH = RB.  Tests, each
necessary for a design meeting the spec at the hFE corner tested (27 °C; SI units):

  common emitter (RB, RC, RE1, RE2), R' = RC‖RL:
  * Rin ≤ RB ‖ (rπ + (β+1)·RE1): RB max, IC low, RE1 max ≥ the floor;
  * swing up ≤ IC·R': IC high, RC max;
  * VCE = span − RC·IC − RE·IE ≤ span − IC·(RC + RE) must leave VCE(sat) + swing/2 (and the
    swing down (VCE − VCE(sat))·R'/(R' + RE1/α) ≥ swing/2 with α ≤ 1): IC low, RC, RE min;
  * |gain| ≤ D·gm·R'/(1 + gm·RE1), D ≤ RB/(RB + RS)  (IC high, RC max, RE1 min, RB max);
    |gain| ≥ D·gm·(R'‖ro)/(1 + gm·(1 + 1/β)·RE1), D ≥ Rin_lo/(Rin_lo + RS)  (IC low, RC min,
    RE1 max, RB min), each widened by GAIN_SAFETY;
  follower (RB, RE): follower_boxes.py's tests with R1‖R2 → RB and VCC → span.
  Both: not cut off (IC high ≥ 1 µA), the rail current IE ≥ IC low, IC(max), PD.
"""

from __future__ import annotations

import numpy as np

from optimizer.physics import swing as loadline
from optimizer.search.box_search import boxes, limits_ok
from optimizer.search.decompose import BRACKET_SLACK, GAIN_SAFETY, bracket_kw, ic_bracket
from optimizer.physics.screen import CUTOFF_A
from optimizer.physics.smallsignal import parallel

ROUND = 1e-9  # relative room for rounding in the comparisons with the spec


def _rth(rb, spec):
    """The base's DC return (Ω): RB, ‖ RS when the source is DC-coupled."""
    if not spec.dc_input:
        return rb
    rs = spec.source_ohms
    return rb * rs / (rb + rs) if rs > 0 else 0.0 * rb


def _undecided(*figures):
    """Where a bound is not a number (RTH = RE = 0 makes the IC bracket infinite): no test may prune there."""
    out = False
    for f in figures:
        out = out | ~np.isfinite(f)
    return out


def _kw(spec, transistor, vce_min):
    kw = bracket_kw(spec, transistor, vce_min)
    kw["supply_v"] = spec.span_v
    return kw


def _common(spec, transistor):
    half = spec.swing_pp / 2.0
    vce_min = loadline.VCE_SAT_V + half
    span = spec.span_v
    dead = vce_min >= span or (transistor.vceo_v and transistor.vceo_v < span) or not spec.negative_supply_v < 0
    return half, vce_min, span, dead


def split_ce_chunks(g: dict, spec, transistor, betas):
    """Yield dicts position → ohms arrays: the (RB, RC, RE1, RE2) tuples of `g` that survive."""
    half, vce_min, span, dead = _common(spec, transistor)
    if dead:
        return
    g_min = spec.gain * (1 - spec.gain_tol) * (1 - ROUND)
    g_max = spec.gain * (1 + spec.gain_tol) * (1 + ROUND)
    kw = _kw(spec, transistor, vce_min)
    vt, rl, rs, vth = kw["vt"], spec.load_ohms, spec.source_ohms, -spec.negative_supply_v
    vaf = transistor.vaf_v
    head_need = max(vce_min, spec.min_vce_v)

    def box_ok(a, b, point):
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):  # RTH = RE = 0: a short, no root
            return _ce_ok(a, b, point)

    def _ce_ok(a, b, point):
        (rba, rca, e1a, e2a), (rbb, rcb, e1b, e2b) = a, b
        ok = rbb >= spec.rin_floor * (1 - ROUND)
        unknown = np.zeros(np.shape(ok), dtype=bool)
        ua, ub = e1a + e2a, e1b + e2b
        upper = None if point else (vth, _rth(rba, spec), ua)
        rp_hi, rp_lo = parallel(rcb, rl), parallel(rca, rl)
        for beta in betas:
            ic_lo, ic_hi = ic_bracket(vth, _rth(rbb, spec), ub, bf=beta, upper=upper, **kw)
            ok &= ic_hi >= CUTOFF_A * (1 - ROUND)
            ok &= ic_hi * rp_hi >= half * (1 - ROUND)
            head = span - ic_lo * (rca + ua)
            ok &= head >= head_need * (1 - ROUND)
            ok &= (head - loadline.VCE_SAT_V) * rp_hi / (rp_hi + e1a) >= half * (1 - ROUND)
            gm_lo, gm_hi = ic_lo / vt * (1 - BRACKET_SLACK), ic_hi / vt * (1 + BRACKET_SLACK)
            rin_hi = parallel(rbb, beta / np.maximum(gm_lo, 1e-30) + (beta + 1.0) * e1b)
            rin_lo = parallel(rba, beta / gm_hi + (beta + 1.0) * e1a)
            ok &= rin_hi * (1 + GAIN_SAFETY) >= spec.rin_floor * (1 - ROUND)
            d_hi = rbb / (rbb + rs)
            d_lo = rin_lo / (rin_lo + rs)
            ro = vaf / (ic_hi * (1 + BRACKET_SLACK))
            a_hi = d_hi * gm_hi * rp_hi / (1.0 + gm_hi * e1a) * (1 + GAIN_SAFETY)
            a_lo = d_lo * gm_lo * parallel(rp_lo, ro) / (1.0 + gm_lo * (1 + 1 / beta) * e1b) * (1 - GAIN_SAFETY)
            ok &= (a_hi >= g_min) & (a_lo <= g_max)
            ok &= limits_ok(ic_lo, ic_lo, vce_min, spec, transistor, ROUND)
            unknown |= _undecided(ic_lo, ic_hi, rin_hi, a_hi, a_lo)
        return (ok | unknown) & (rbb >= spec.rin_floor * (1 - ROUND))

    yield from boxes(g, ("RB", "RC", "RE1", "RE2"), box_ok)


def split_follower_chunks(g: dict, spec, transistor, betas):
    """Yield dicts position → ohms arrays: the (RB, RE) tuples of `g` that survive the bounds."""
    half, vce_min, span, dead = _common(spec, transistor)
    g_min = spec.gain * (1 - spec.gain_tol) * (1 - ROUND)
    if dead or g_min >= 1.0:
        return
    g_max = spec.gain * (1 + spec.gain_tol) * (1 + ROUND)
    # The collector is on the top rail and the base at or below ground: VBC ≤ 0, so k ≥ 1
    # (vce_min = span makes ic_bracket take k ≥ 1, as box_search.reverse_bc_kw does).
    kw = _kw(spec, transistor, span)
    br = float(transistor.at(27.0)[2])
    vt, rl, rs, vth = kw["vt"], spec.load_ohms, spec.source_ohms, -spec.negative_supply_v
    g_mu = kw["is_a"] / (vt * br)

    def box_ok(a, b, point):
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):  # RTH = 0: a short
            return _follower_ok(a, b, point)

    def _follower_ok(a, b, point):
        (rba, rea), (rbb, reb) = a, b
        ok = rbb >= spec.rin_floor * (1 - ROUND)
        unknown = np.zeros(np.shape(ok), dtype=bool)
        upper = None if point else (vth, _rth(rba, spec), rea)
        r_ac = parallel(reb, rl)
        d_hi = rbb / (rbb + rs)
        for beta in betas:
            ic_lo, ic_hi = ic_bracket(vth, _rth(rbb, spec), reb, bf=beta, upper=upper, **kw)
            ie_hi = ic_hi * (1 + 1 / beta)
            ok &= ic_hi >= CUTOFF_A * (1 - ROUND)
            ok &= ie_hi * r_ac >= half * (1 - ROUND)
            ok &= ic_lo * rea <= (span - max(vce_min, spec.min_vce_v)) * (1 + ROUND)
            y = ie_hi / vt * (1 + BRACKET_SLACK) * r_ac
            ok &= d_hi * y / (1 + y) >= g_min
            go = ic_hi * (1 + BRACKET_SLACK) / transistor.vaf_v
            y_lo = ic_lo / vt * (1 - BRACKET_SLACK) / (1 / rea + 1 / rl + go)
            g_pi = ic_hi * (1 + BRACKET_SLACK) / (beta * vt)
            d_lo = 1 / (1 + rs * (1 / rba + g_pi / (1 + y_lo) + g_mu))
            ok &= d_lo * y_lo / (1 + y_lo) <= g_max
            ok &= limits_ok(ic_lo, ic_lo, vce_min, spec, transistor, ROUND)
            unknown |= _undecided(ic_lo, ic_hi, y, y_lo, d_lo)
        return (ok | unknown) & (rbb >= spec.rin_floor * (1 - ROUND))

    yield from boxes(g, ("RB", "RE"), box_ok)
