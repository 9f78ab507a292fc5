"""Common-emitter value tuples by branch and bound over boxes of sorted values.

A box is a range of consecutive sorted values at each bias position (R1, R2, RE1,
RE2; RC is looked up afterwards).  The IBE root x of the base loop (decompose.py)
falls as R1 grows, as RE = RE1 + RE2 grows, and rises as R2 grows: with F the loop
equation, ∂F/∂R1 > 0, ∂F/∂RE > 0 and ∂F/∂R2 = R1·(IB·R1 − VCC)/(R1 + R2)² < 0,
IB·R1 being less than VCC at any root.  So the corner (R1 max, R2 min, RE max)
bounds IC from below over the whole box and (R1 min, R2 max, RE min) from above,
and every test of decompose.py is monotone in the other values:

  * Rin ≤ R1‖R2, largest at (R1 max, R2 max); the Rin bound grows with RTH and RE1;
  * the RC window's lower end grows with RE1 and falls with IC, its upper end falls
    with IC and with RE;
  * (RE1 + RE2)·swing/(2·RL) ≤ VCC − VCE_min, smallest at (RE1 min, RE2 min).

A box whose window holds no RC at either hFE corner, or that fails Rin or the
emitter headroom, holds no tuple meeting the spec and is dropped whole.  The rest
are halved along the range whose values spread most (by ratio) until they hold at
most LEAF tuples, which go through the exact per-tuple bounds (decompose.exact_tuples).  An infeasible
spec is thus answered from a few boxes, and a 10⁵-value group costs about the
surface of its feasible region, not its volume.
"""

from __future__ import annotations

import numpy as np

from optimizer.search.stopwatch import poll

from optimizer.physics import swing as loadline
from optimizer.physics.bias import thevenin
from optimizer.search.decompose import BRACKET_SLACK, bracket_kw, exact_tuples, ic_bracket, rc_window
from optimizer.parts.network_table import ragged

LEAF = 64  # tuples (R1, R2, RE1, RE2) in a box handed to the exact bounds
FRONTIER = 200_000  # boxes evaluated per call
CHUNK = 100_000  # tuples per call of the exact bounds (a call then holds well under 100 MB)
BOX_STEPS = 3  # contraction steps for a box's corners: true bounds, left open (a box spans far more than they)
DIMS = ("R1", "R2", "RE1", "RE2")


def ce_tuples(g: dict, spec, transistor, betas, emit):
    """Common-emitter value tuples of the groups `g` (position → sorted ohms) that survive the bounds.

    `emit(chunk)` receives dicts position → ohms arrays.  betas: the hFE corners (at 27 °C).
    """
    for chunk in ce_chunks(g, spec, transistor, betas):
        emit(chunk)


def ce_chunks(g: dict, spec, transistor, betas):
    """`ce_tuples` as a generator: the surviving tuples stream through, never all in memory at once."""
    if not all(len(g[p]) for p in ("R1", "R2", "RC", "RE1", "RE2")):
        return
    # |gain| < (RC‖RL)/RE1 < RL/RE1 bounds RE1 alone; the capacitors' floors (spec.Bounds) RC and RE2.
    re1 = g["RE1"][g["RE1"] * spec.gain * (1 - spec.gain_tol) * (1 - BRACKET_SLACK) < spec.load_ohms]
    re2 = np.asarray(g["RE2"])
    re2 = re2[(re2 == 0) | (re2 >= getattr(spec, "min_re2_ohms", 0.0) * (1 - 1e-12))]
    rc = np.asarray(g["RC"])
    rc = rc[rc >= getattr(spec, "min_rc_ohms", 0.0) * (1 - 1e-12)]
    vals = [np.asarray(g["R1"]), np.asarray(g["R2"]), re1, re2]
    if not (len(re1) and len(re2) and len(rc)):
        return
    ctx = _Context(spec, transistor, betas, rc)
    lo = np.zeros((1, 4), dtype=np.int64)
    hi = np.array([[len(v) - 1 for v in vals]], dtype=np.int64)
    while len(lo):
        poll()
        keep = np.concatenate([_box_ok(vals, lo[s:s + FRONTIER], hi[s:s + FRONTIER], ctx)
                               for s in range(0, len(lo), FRONTIER)])
        lo, hi = lo[keep], hi[keep]
        size = np.prod(hi - lo + 1, axis=1)
        leaf = size <= LEAF
        if leaf.any():
            yield from _leaves(vals, lo[leaf], hi[leaf], ctx)
        lo, hi = halve(vals, lo[~leaf], hi[~leaf])


class _Context:
    def __init__(self, spec, transistor, betas, rc):
        self.spec, self.transistor, self.betas, self.rc = spec, transistor, betas, rc
        self.vce_min = loadline.VCE_SAT_V + spec.swing_pp / 2.0
        self.kw = bracket_kw(spec, transistor, self.vce_min)
        self.vt = self.kw["vt"]


def _box_ok(vals, lo, hi, ctx) -> np.ndarray:
    """Bool per box: may it hold a tuple meeting the spec (see the module docstring)?"""
    spec = ctx.spec
    (r1a, r2a, e1a, e2a), (r1b, r2b, e1b, e2b) = ([v[i[:, k]] for k, v in enumerate(vals)] for i in (lo, hi))
    ok = r1b * r2b / (r1b + r2b) >= spec.rin_floor * (1 - 1e-12)  # Rin ≤ R1‖R2
    ua, ub = e1a + e2a, e1b + e2b
    if spec.swing_pp > 0:
        ok &= ua * spec.swing_pp / (2 * spec.load_ohms) <= spec.supply_v - ctx.vce_min
    vth_x, rth_x = thevenin(spec.supply_v, r1b, r2a)  # the least IBE root
    vth_y, rth_y = thevenin(spec.supply_v, r1a, r2b)  # the largest
    rth_top = r1b * r2b / (r1b + r2b)
    brackets = [ic_bracket(vth_x, rth_x, ub, bf=beta, upper=(vth_y, rth_y, ua), steps=BOX_STEPS, **ctx.kw)
                for beta in ctx.betas]
    w_lo, w_hi = rc_window(brackets, ctx.betas, e1a, e1b, ua, rth_top, spec, ctx.vt)
    return ok & (np.searchsorted(ctx.rc, w_lo, "left") < np.searchsorted(ctx.rc, w_hi, "right"))


def halve(vals, lo, hi):
    """Split each box in two along the position of the largest value ratio (hi/lo).

    The bounds loosen with the ratio a box spans, not with its index count (box_search.py).
    """
    if not len(lo):
        return lo, hi
    with np.errstate(divide="ignore", invalid="ignore"):
        spread = np.column_stack([np.where(hi[:, k] > lo[:, k], v[hi[:, k]] / v[lo[:, k]], 0.0)
                                  for k, v in enumerate(vals)])
    spread = np.nan_to_num(spread, nan=np.inf)  # a 0 Ω (absent) low end: split there first
    k = np.argmax(spread, axis=1)
    rows = np.arange(len(lo))
    n = hi[rows, k] - lo[rows, k] + 1
    mid = lo[rows, k] + n // 2  # first index of the upper half
    lo2, hi1 = lo.copy(), hi.copy()
    hi1[rows, k] = mid - 1
    lo2[rows, k] = mid
    return np.concatenate([lo, lo2]), np.concatenate([hi1, hi])


def _leaves(vals, lo, hi, ctx):
    """Every tuple of the leaf boxes, through the exact per-tuple bounds, about CHUNK at a time."""
    n = hi - lo + 1
    size = np.prod(n, axis=1)
    ends = np.cumsum(size)
    first = 0
    while first < len(size):
        last = max(first + 1, int(np.searchsorted(ends, (ends[first - 1] if first else 0) + CHUNK, "right")))
        sl = slice(first, last)
        owner, t = ragged(np.zeros(last - first, dtype=np.int64), size[sl])
        cols = []
        for k in reversed(range(4)):  # mixed radix, RE2 fastest
            nk = n[sl][owner, k]
            cols.append(vals[k][lo[sl][owner, k] + t % nk])
            t = t // nk
        re2, re1, r2, r1 = cols
        out = []
        exact_tuples(r1, r2, re1, re2, ctx.rc, ctx.spec, ctx.transistor, ctx.betas, ctx.vce_min, out.append)
        yield from out
        first = last
