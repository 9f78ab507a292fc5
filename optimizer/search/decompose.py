"""Common emitter: the divider and total emitter resistance fix the bias, then RC and the RE split.

For a bias sub-tuple (R1, R2, RE = RE1 + RE2) the collector current is bracketed
exactly, whatever RC turns out to be.  With IBE the forward diode current and
k = 1 − VBC/VAF the Early factor (transistor.py), IC = k·IBE and IB = IBE/BF, and
the base loop  VTH = RTH·IB + VBE + RE·(IB + IC)  has, for fixed k, one root in
IBE (every term rises with it).  A larger k lowers IBE but raises IC = k·IBE, so
IC lies between the roots at the smallest and largest k a design meeting the spec
can have: VCB ≤ VCC gives k ≤ 1 + VCC/VAF; VCE ≥ VCE(sat) gives
VCE ≥ VCE(sat) + swing/2 (needed for the swing down) gives VBC ≤ VBE_max − VCE_min,
so k ≥ 1 − (VBE_max − VCE_min)/VAF.  The reverse diode terms are negligible while
VBC ≤ REVERSE_DIODE_V; beyond it no lower bound is used.

With IC in [IC_lo, IC_hi] at each hFE corner, an RC can only work when
  * swing up ≤ IC·(RC‖RL)  (swing.py)            → RC‖RL ≥ swing/(2·IC_hi);
  * |gain| ≤ (RC‖RL)/(RE1 + 1/gm), gm ≤ IC/Vt       → RC‖RL ≥ G_min·(RE1 + Vt/IC_hi);
  * swing down ≤ VCE − VCE(sat), VCE ≤ VCC − IC·(RC + RE) → RC ≤ (VCC − VCE(sat) − swing/2)/IC_lo − RE.
Those give an interval of RC per (bias, split), looked up with searchsorted.
"""

from __future__ import annotations

import numpy as np

from optimizer.search.stopwatch import poll
from optimizer.physics import swing as loadline
from optimizer.parts.network_table import ragged

BRACKET_SLACK = 0.01  # widen [IC_lo, IC_hi] by 1 % each way: rounding, reverse-diode terms, gm ≈ IC/Vt
NEWTON_STEPS = 60
CONTRACTIONS = 3  # bound pairs from the resistor map; each shrinks a bracket by (Vt / resistor drop)²
BRACKET_WIDTH = 1e-4  # relative width the IBE bracket is closed to (BRACKET_SLACK dwarfs it)
MAP_ROUNDING = 8 * np.finfo(float).eps  # relative rounding error of VTH − Vt·ln(1 + x/IS), generously
REVERSE_DIODE_V = 0.25  # IS·exp(0.25/Vt) is ~1e-10 of a milliamp collector current


def ibe_bracket(vth, rth, re, bf, k, is_a, vt, steps=CONTRACTIONS, close=True):
    """(low, high) bounds (A) on the IBE solving RTH·IBE/BF + Vt·ln(1 + IBE/IS) + RE·IBE·(1/BF + k) = VTH.

    With a = RTH/BF + RE·(1/BF + k) the root is the fixed point of the decreasing map
    T(x) = (VTH − Vt·ln(1 + x/IS))/a, which turns a bound from above into one from below
    and back; VBE ≥ 0 gives the first upper bound VTH/a.  T contracts by Vt/(a·x), so a
    few steps close the bracket wherever the resistors drop more than a few Vt; the rest
    (starved stages) are closed by Newton from above.  Every iterate is a true bound.
    """
    vth, rth, re, k = np.broadcast_arrays(vth, rth, re, k)
    a = rth / bf + re * (1.0 / bf + k)  # Ω
    hi = np.minimum(vth / a, is_a * np.expm1(np.minimum(vth / vt, 700.0)))  # each term alone reaches VTH
    lo = np.zeros_like(hi)
    for _ in range(steps):
        lo = np.maximum(lo, _resistor_map(hi, vth, a, is_a, vt, -1.0))
        hi = np.minimum(hi, _resistor_map(lo, vth, a, is_a, vt, +1.0))
    if close:
        _newton_from_above(lo, hi, a, vth, is_a, vt)
    return lo, hi


def _resistor_map(x, vth, a, is_a, vt, side):
    """T(x) = (VTH − Vt·ln(1 + x/IS))/a (A), moved by its rounding error toward `side` (−1 down, +1 up).

    VTH and the diode term nearly cancel when a is tiny (a huge hFE with no emitter resistor makes
    a ≈ RTH/BF): the difference is then rounding noise / a, which could pass the other bound, cross
    the bracket and turn the next log1p into NaN.  Moved by the noise, T stays a true bound.
    """
    drop = vt * np.log1p(x / is_a)
    return (vth - drop + side * MAP_ROUNDING * (np.abs(vth) + drop)) / a


def _newton_from_above(lo, hi, a, vth, is_a, vt):
    """Close the brackets still open (resistor drop ≈ Vt), in place.

    f(L) = a·e^L + Vt·ln(1 + e^L/IS) − VTH is increasing and convex in L = ln x, so
    Newton steps from an upper bound stay upper bounds and fall onto the root; the
    contracting map of the last one gives the lower bound.
    """
    live = np.flatnonzero(hi - lo > BRACKET_WIDTH * hi)
    if not len(live):
        return
    av, v = a.ravel()[live], vth.ravel()[live]
    x = hi.ravel()[live]
    for _ in range(NEWTON_STEPS):
        f = av * x + vt * np.log1p(x / is_a) - v
        step = f / (av * x + vt * x / (is_a + x))  # f / (df/dL) ≥ 0 from above
        x = x * np.exp(-np.maximum(step, 0.0))
        if np.all(np.abs(step) < 1e-12):
            break
    by_t = av * (is_a + x) >= vt
    low = np.where(by_t, _resistor_map(x, v, av, is_a, vt, -1.0),
                   is_a * np.expm1(np.minimum((v - av * x) / vt, 700.0)))
    hi.ravel()[live] = np.minimum(hi.ravel()[live], x)
    lo.ravel()[live] = np.maximum(lo.ravel()[live], low)


def ic_bracket(vth, rth, re, *, bf, is_a, vaf_v, vt, supply_v, vce_min, steps=None, upper=None):
    """(IC_lo, IC_hi) in amperes over every RC giving VCE ≥ vce_min (V).

    steps: contraction steps of ibe_bracket; given, the bracket is left as they leave it
    (true, cheaper, looser); by default it is closed to BRACKET_WIDTH.
    upper: (vth, rth, re) of a second point whose IBE root is at least the first's; the
    bracket then covers both points and every point between (ce_boxes.py).

    The IBE root x(k) falls and IC(k) = k·x(k) rises with the Early factor k, so with
    [x_lo, x_hi] bracketing x(k_hi): IC ≤ k_hi·x_hi;  IC ≥ k_lo·x(k_lo) ≥ k_lo·x_lo;  and
    x(k) ≤ x_hi·k_hi/k for the VBE bound.  When VBC could exceed REVERSE_DIODE_V the
    base–collector diode may carry real current, and no lower bound is claimed (IC_lo = 0).
    """
    vaf = float(vaf_v)
    k_hi = 1.0 + supply_v / vaf
    k_floor = 1.0 - 1.0 / vaf  # VBC ≤ 1 V: a first, safe floor for k
    kw = {} if steps is None else {"steps": steps, "close": False}
    x_lo, x_hi = ibe_bracket(vth, rth, re, bf, k_hi, is_a, vt, **kw)
    if upper is not None:
        x_hi = ibe_bracket(*upper, bf, k_hi, is_a, vt, **kw)[1]
    vbe_hi = vt * np.log1p(x_hi * (k_hi / k_floor) / is_a)
    vbc_max = vbe_hi - vce_min
    k_lo = 1.0 - np.maximum(vbc_max, 0.0) / vaf
    ic_lo = np.where(vbc_max <= REVERSE_DIODE_V, k_lo * x_lo, 0.0)
    return ic_lo * (1 - BRACKET_SLACK), k_hi * x_hi * (1 + BRACKET_SLACK)


def bracket_kw(spec, transistor, vce_min) -> dict:
    """ic_bracket's keywords for `transistor` at 27 °C (the hFE corners are given at 27 °C)."""
    is_a, _, _, vt = (float(x) for x in transistor.at(27.0))
    return {"is_a": is_a, "vaf_v": transistor.vaf_v, "vt": vt, "supply_v": spec.supply_v, "vce_min": vce_min}


def rc_interval(ic_lo, ic_hi, re1, re_total, spec, vt):
    """[RC_lo, RC_hi] (Ω) outside which no RC can meet gain and swing (see module docstring)."""
    g_min = spec.gain * (1 - spec.gain_tol) * (1 - BRACKET_SLACK)
    half = spec.swing_pp / 2.0
    rcl = np.maximum(half / ic_hi, g_min * (re1 + vt / ic_hi))
    rl = spec.load_ohms
    with np.errstate(divide="ignore", invalid="ignore"):
        # RC with RC‖RL = rcl; an open load (RL = inf) leaves RC itself
        rc_lo = np.where(np.isinf(rl), rcl, np.where(rcl < rl, rcl * rl / (rl - rcl), np.inf))
        rc_hi = (spec.supply_v - loadline.VCE_SAT_V - half) / ic_lo - re_total
    return rc_lo * (1 - 1e-9), rc_hi * (1 + 1e-9)


PAIR_CHUNK = 500_000  # (entry, RC) pairs through the gain bounds at a time (bounds the memory of a call)
GAIN_SAFETY = 0.03  # the gain bounds leave out ro feedback and gμ; 3 % covers them with room to spare


def _rin(gm, beta, re1, rth):
    """RTH ‖ (rπ + (β + 1)·RE1) with rπ = β/gm (Ω)."""
    return 1.0 / (1.0 / rth + 1.0 / (beta / gm + (beta + 1.0) * re1))


def rin_high(ic_lo, beta, re1, rth, vt):
    """The Rin high bound of gain_bounds alone (Ω), for tests that need nothing else."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return _rin(ic_lo / vt * (1 - BRACKET_SLACK), beta, re1, rth) * (1 + GAIN_SAFETY)


def gain_bounds(ic_lo, ic_hi, beta, rc, re1, rth, spec, vt, vaf_v):
    """(|gain| low, |gain| high, Rin high) bounds (V/V, Ω) of a common emitter with IC in [ic_lo, ic_hi].

    Hybrid-π with gm = IC/Vt, rπ = β/gm:  |A| = D·gm·R'/(1 + gm·(1 + 1/β)·RE1),
    D = Rin/(Rin + RS), Rin = RTH ‖ (rπ + (β + 1)·RE1), R' = RC‖RL (‖ ro ≥ VAF/IC for the low bound).
    Each factor is monotone in gm, so the IC ends bound it; GAIN_SAFETY covers the terms left out.
    """
    rl = spec.load_ohms
    rcl = rc if np.isinf(rl) else rc * rl / (rc + rl)  # RC‖RL; an open load leaves RC
    gm_lo, gm_hi = ic_lo / vt * (1 - BRACKET_SLACK), ic_hi / vt * (1 + BRACKET_SLACK)
    with np.errstate(divide="ignore", invalid="ignore"):
        rin_hi = _rin(gm_lo, beta, re1, rth)
        rin_lo = 1.0 / (1.0 / rth + 1.0 / (beta / gm_hi + (beta + 1.0) * re1))
        rs = spec.source_ohms
        d_hi, d_lo = rin_hi / (rin_hi + rs), rin_lo / (rin_lo + rs)
        ro = vaf_v / ic_hi if np.isfinite(vaf_v) else np.inf
        r_lo = 1.0 / (1.0 / rcl + 1.0 / ro)
        k = 1.0 + 1.0 / beta
        a_hi = d_hi * gm_hi * rcl / (1.0 + gm_hi * re1)
        a_lo = d_lo * gm_lo * r_lo / (1.0 + gm_lo * k * re1)
    return a_lo * (1 - GAIN_SAFETY), a_hi * (1 + GAIN_SAFETY), rin_hi * (1 + GAIN_SAFETY)


def rc_window(brackets, betas, re1_lo, re1_hi, u, rth, spec, vt):
    """[RC_lo, RC_hi] (Ω) for IC brackets at each hFE corner, an empty window where Rin must fall short.

    re1_lo/re1_hi bound RE1 over the tuples considered: the RC need grows with RE1 and the Rin
    bound too, so the least RE1 gives the widest window and the largest one the best Rin.
    rth: the largest RTH (Rin grows with it).
    """
    lo = np.full(np.shape(brackets[0][0]), -np.inf)
    hi = np.full_like(lo, np.inf)
    cap = ic_cap(re1_lo, u, spec, vt)
    for beta, (ic_lo, ic_hi) in zip(betas, brackets, strict=True):
        a, z = rc_interval(ic_lo, ic_hi, re1_lo, u, spec, vt)
        rin_hi = rin_high(ic_lo, beta, re1_hi, rth, vt)  # RC does not enter it
        lo = np.maximum(lo, a)
        hi = np.minimum(hi, np.where((rin_hi >= spec.rin_floor) & (cap > 0) & (ic_lo <= cap), z, -np.inf))
    return lo, hi


def ic_cap(re1, u, spec, vt):
    """The most collector current (A) any RC allows with RE1 ≥ re1 and RE ≥ u; −1 when none can do.

    The gain needs RC ≥ RC‖RL ≥ G·(RE1 + Vt/IC) and the swing down VCE ≥ vce_min, so
    RC ≤ H/IC − RE (H = VCC − vce_min, IE ≥ IC); together IC·(G·RE1 + RE) ≤ H − G·Vt, which
    no IC > 0 meets once G·Vt ≥ H (too much gain for the supply).  The supply current
    (given a limit) is at least IC.  When the cap falls below the least IC the swing and
    gain need, nothing fits.  G = G_min less BRACKET_SLACK, as in rc_interval.
    """
    g = spec.gain * (1 - spec.gain_tol) * (1 - BRACKET_SLACK)
    room = spec.supply_v - loadline.VCE_SAT_V - spec.swing_pp / 2.0 - g * vt
    re1 = np.asarray(re1)
    with np.errstate(divide="ignore", invalid="ignore"):
        cap = np.where(room > 0, room / (g * re1 + u), -1.0) * (1 + BRACKET_SLACK)
        # and the least IC: swing up ≤ IC·(RC‖RL) < IC·RL; RL > RC‖RL ≥ G·(RE1 + Vt/IC)
        rl = spec.load_ohms
        need = np.maximum(spec.swing_pp / (2 * rl), np.where(g * re1 < rl, g * vt / (rl - g * re1), np.inf))
    if spec.max_supply_a is not None:
        cap = np.minimum(cap, spec.max_supply_a * (1 + BRACKET_SLACK))
    return np.where(cap >= need * (1 - BRACKET_SLACK), cap, -1.0)


def exact_tuples(r1, r2, re1, re2, rc, spec, transistor, betas, vce_min, emit):
    """Value tuples from aligned bias arrays (R1, R2, RE1, RE2 per entry) and the sorted RC group.

    Per entry: Rin ≤ R1‖R2, the emitter headroom, the IC bracket at each hFE corner and the RC
    window (module docstring); then per (entry, RC in the window) the gain bounds.
    """
    keep = r1 * r2 / (r1 + r2) >= spec.rin_floor * (1 - 1e-12)
    u = re1 + re2
    if spec.swing_pp > 0:
        keep &= u * spec.swing_pp / (2 * spec.load_ohms) <= spec.supply_v - vce_min
    r1, r2, re1, re2, u = r1[keep], r2[keep], re1[keep], re2[keep], u[keep]
    if not len(r1):
        return
    from optimizer.physics.bias import thevenin

    vth, rth = thevenin(spec.supply_v, r1, r2)
    kw = bracket_kw(spec, transistor, vce_min)
    vt = kw["vt"]
    # A coarse pass first (one contraction step: true, looser, cheaper brackets) drops most entries.
    coarse = [ic_bracket(vth, rth, u, bf=beta, steps=1, **kw) for beta in betas]
    lo, hi = rc_window(coarse, betas, re1, re1, u, rth, spec, vt)
    live = np.searchsorted(rc, lo, "left") < np.searchsorted(rc, hi, "right")
    r1, r2, re1, re2, u, vth, rth = (x[live] for x in (r1, r2, re1, re2, u, vth, rth))
    brackets = [ic_bracket(vth, rth, u, bf=beta, **kw) for beta in betas]
    lo, hi = rc_window(brackets, betas, re1, re1, u, rth, spec, vt)
    first, last = np.searchsorted(rc, lo, "left"), np.searchsorted(rc, hi, "right")
    g_min, g_max = spec.gain * (1 - spec.gain_tol), spec.gain * (1 + spec.gain_tol)
    # (entry, RC) pairs a slice at a time: a wide RC window on many entries would otherwise
    # expand to tens of millions of pairs at once.
    ends = np.cumsum(np.maximum(last - first, 0))
    start = 0
    while start < len(first):
        poll()
        stop = max(start + 1, int(np.searchsorted(ends, (ends[start - 1] if start else 0) + PAIR_CHUNK, "right")))
        owner, idx = ragged(first[start:stop], last[start:stop])
        owner = owner + start
        if len(idx):
            ok = np.ones(len(idx), dtype=bool)
            for beta, (ic_lo, ic_hi) in zip(betas, brackets, strict=True):
                a_lo, a_hi, _ = gain_bounds(ic_lo[owner], ic_hi[owner], beta, rc[idx], re1[owner], rth[owner], spec,
                                            vt, transistor.vaf_v)
                ok &= (a_lo <= g_max) & (a_hi >= g_min)
            owner, idx = owner[ok], idx[ok]
            if len(idx):
                emit({"R1": r1[owner], "R2": r2[owner], "RC": rc[idx], "RE1": re1[owner], "RE2": re2[owner]})
        start = stop
