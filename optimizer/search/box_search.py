"""Branch and bound over boxes of sorted values, for any number of positions.

A box is a range of consecutive indices into each position's sorted values.  The
caller's test `box_ok(a, b, point)` gets the values at each box's low and high
indices (lists of arrays, one per position) and says which boxes may still hold a
tuple meeting the spec; it must be a necessary condition for every tuple of the
box, i.e. built from bounds monotone in each value.  Surviving boxes are halved
along the position whose values spread most by ratio (hi/lo: the bounds loosen with
the ratio, not with the index count, so a 60-value group is split as early as a
270 000-value one; halving by count made a depth-3 profile cost 10⁵–10⁶ boxes instead
of a few hundred) until they hold at most `leaf` tuples; those are tested once more
as single points (a = b, point=True) and the survivors yielded, about ce_boxes.CHUNK
at a time.  The common-emitter search (ce_boxes.py) is the same loop with its own
leaf step.
"""

from __future__ import annotations

import numpy as np

from optimizer.search.stopwatch import poll

from optimizer.kinds.common_emitter_bounds import CHUNK, FRONTIER, LEAF, halve
from optimizer.search.decompose import bracket_kw
from optimizer.search.feasible import TRANSISTOR_PD_DERATING
from optimizer.parts.network_table import ragged


def boxes(groups: dict, dims, box_ok, leaf=LEAF):
    """Yield dicts position → ohms arrays (aligned): the tuples of `groups` passing `box_ok` as points.

    dims: the positions, in the order box_ok receives their values.
    """
    for cols in _search([np.asarray(groups[p]) for p in dims], box_ok, leaf):
        yield dict(zip(dims, cols, strict=True))


def _search(vals, box_ok, leaf):
    if not all(len(v) for v in vals):
        return
    lo = np.zeros((1, len(vals)), dtype=np.int64)
    hi = np.array([[len(v) - 1 for v in vals]], dtype=np.int64)
    while len(lo):
        poll()
        keep = np.concatenate([_test(vals, lo[s:s + FRONTIER], hi[s:s + FRONTIER], box_ok)
                               for s in range(0, len(lo), FRONTIER)])
        lo, hi = lo[keep], hi[keep]
        small = np.prod(hi - lo + 1, axis=1) <= leaf
        if small.any():
            yield from _points(vals, lo[small], hi[small], box_ok)
        lo, hi = halve(vals, lo[~small], hi[~small])


def _test(vals, lo, hi, box_ok):
    a = [v[lo[:, k]] for k, v in enumerate(vals)]
    b = [v[hi[:, k]] for k, v in enumerate(vals)]
    return np.asarray(box_ok(a, b, False), dtype=bool)


def _points(vals, lo, hi, box_ok):
    """Every tuple of the leaf boxes (mixed radix, last position fastest), tested as a point."""
    n = hi - lo + 1
    size = np.prod(n, axis=1)
    ends = np.cumsum(size)
    first = 0
    while first < len(size):
        done = ends[first - 1] if first else 0
        last = max(first + 1, int(np.searchsorted(ends, done + CHUNK, "right")))
        owner, t = ragged(np.zeros(last - first, dtype=np.int64), size[first:last])
        cols = [None] * len(vals)
        for k in reversed(range(len(vals))):
            nk = n[first:last][owner, k]
            cols[k] = vals[k][lo[first:last][owner, k] + t % nk]
            t = t // nk
        ok = np.asarray(box_ok(cols, cols, True), dtype=bool)
        if ok.any():
            yield [c[ok] for c in cols]
        first = last


def reverse_bc_kw(spec, transistor) -> tuple[dict, float]:
    """ic_bracket keywords (27 °C) for stages whose base–collector junction is never forward biased.

    The follower's collector sits at the supply (VBC = VB − VCC ≤ 0) and collector feedback
    has VBC = −RB·IB ≤ 0, so the Early factor k = 1 − VBC/VAF is at least 1.  ic_bracket takes
    k ≥ 1 − max(VBE_max − vce_min, 0)/VAF; with vce_min = VCC that is k ≥ 1 (any supply above
    VBE_max), true here, and its reverse-diode test (VBC ≤ REVERSE_DIODE_V) holds as well.
    """
    return bracket_kw(spec, transistor, spec.supply_v), float(transistor.at(27.0)[2])



def limits_ok(i_supply_lo, ic_lo, vce_min, spec, transistor, rounding=1e-9):
    """Bool: may a design whose supply current is ≥ i_supply_lo and IC ≥ ic_lo (A) meet the limits?

    feasible.py: supply current ≤ spec.max_supply_a; IC ≤ IC(max); VCE·IC + VBE·IB ≤ the derated
    PD, where VCE ≥ vce_min (V) for any design meeting the swing.
    """
    ok = np.ones(np.shape(ic_lo), dtype=bool)
    if spec.max_supply_a is not None:
        ok &= i_supply_lo <= spec.max_supply_a * (1 + rounding)
    if transistor.ic_max_a:
        ok &= ic_lo <= transistor.ic_max_a * (1 + rounding)
    if transistor.pd_max_w:
        ok &= vce_min * ic_lo <= TRANSISTOR_PD_DERATING * transistor.pd_max_w * (1 + rounding)
    return ok
