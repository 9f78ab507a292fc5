"""The plan of a chain search: which stage is designed first, and the spec each stage is asked for.

Shares of the chain's spec (gain split, gain tolerance, THD, low cut-off) only steer the two
single-stage searches; the whole chain is checked exactly afterwards (check.py).  See search.py
for the plan per chain kind.
"""

from __future__ import annotations

import math
from dataclasses import replace

import numpy as np

from optimizer.chain.halves import Half
from optimizer.chain.names import CE, CHAINS, EF
from optimizer.physics.circuit import build, operating_point
from optimizer.physics.response import midband
from optimizer.spec import OPEN_LOAD_OHMS

FREE_GAIN = (0.5, 0.99)  # a follower's gain left free: 0.005 … 0.995
THD_SHARE = {f"{EF}+{CE}": (0.1, 0.9), f"{CE}+{CE}": (0.4, 0.6), f"{CE}+{EF}": (0.5, 0.5)}  # (stage 1, stage 2)
CE_SPLITS = (0.5, 0.4, 0.6)  # exponents of G given to the second stage of two common emitters
MIN_TOL = 1e-3  # select.search matches the gain in 0.1 % steps
# The spread allowances in second_plan are bounds; when they leave less than this share of the chain's tolerance
# the second stage gets this share all the same, and the whole-chain check decides.
FLOOR_TOL_SHARE = 0.25


def first_plan(spec, kind, split, rin2_floor):
    """(index of the stage designed first, its Spec)."""
    k1, k2 = CHAINS[kind]
    t1, t2 = THD_SHARE[kind]
    base = dict(max_supply_a=None, low_cut_hz=spec.low_cut_hz / 2)
    if k1 == EF:
        g_est = max(spec.gain / 0.5, 1.0)
        return 0, replace(spec, topology=EF, gain=FREE_GAIN[0], gain_tol=FREE_GAIN[1], load_ohms=rin2_floor,
                          swing_pp=spec.swing_pp / g_est, max_thd=t1 * spec.max_thd, min_rin_ohms=spec.rin_floor,
                          **base)
    if k2 == EF:
        return 1, replace(spec, topology=EF, gain=FREE_GAIN[0], gain_tol=FREE_GAIN[1], source_ohms=0.0,
                          max_thd=t2 * spec.max_thd, min_rin_ohms=rin2_floor, **base)
    # The source loses to the chain's input resistance (about twice its floor, common practice, no
    # source) before any gain: the split shares the gain the transistors must make, G / loss.
    floor = max(spec.rin_floor, 1.0)
    loss = 2 * floor / (2 * floor + spec.source_ohms)
    g2 = (spec.gain / loss) ** split
    return 1, replace(spec, topology=CE, gain=g2, gain_tol=max(MIN_TOL, spec.gain_tol / 3), source_ohms=0.0,
                      max_thd=t2 * spec.max_thd, min_rin_ohms=rin2_floor, **base)


def spread_of(gains):
    """(centre, relative half-spread) of a set of gain magnitudes: centre √(lo·hi), hi/centre − 1."""
    mags = np.abs(np.asarray(gains, dtype=float))
    lo, hi = float(mags.min()), float(mags.max())
    c = math.sqrt(lo * hi)
    return c, hi / c - 1.0


def tol_left(tol, spread):
    """The tolerance left for one stage when the other's gain spreads by ±`spread` (relative)."""
    return min((1 + tol) / (1 + spread) - 1, 1 - (1 - tol) * (1 + spread))


def corner_midband(half: Half, spec, *, source_ohms, load_ohms):
    """Exact midband (gain, Rin, Rout) of one stage at its hFE ends × the spec's temperatures."""
    out = []
    for b in (half.q.transistor.hfe_min, half.q.transistor.hfe_max):
        for t in spec.temps_c:
            c = build(half.stage(spec, source_ohms=source_ohms, load_ohms=load_ohms, bf=b, temp_c=t))
            m = midband(c, operating_point(c))
            out.append((m.gain, m.rin_ohms, m.rout_ohms))
    return np.array(out)


def second_plan(spec, kind, first: Half, index, rin2_floor):
    """The Spec of the stage designed second, given the first; None when no tolerance is left."""
    k1, k2 = CHAINS[kind]
    t1, t2 = THD_SHARE[kind]
    base = dict(max_supply_a=None, low_cut_hz=spec.low_cut_hz / 2)
    if index == 0:  # the follower came first: the common emitter is driven by its output
        m = corner_midband(first, spec, source_ohms=spec.source_ohms, load_ohms=OPEN_LOAD_OHMS)
        centre, spread = spread_of(m[:, 0])
        # The second stage is designed for one source resistance; the follower's output resistance
        # moves over its corners, and the second stage's input divider with it.
        r_lo, r_hi = float(m[:, 2].min()), float(m[:, 2].max())
        spread += 0.5 * (r_hi - r_lo) / (rin2_floor + r_lo)
        tol = max(tol_left(spec.gain_tol, spread), spec.gain_tol * FLOOR_TOL_SHARE)
        return replace(spec, topology=k2, gain=spec.gain / centre, gain_tol=tol, source_ohms=math.sqrt(r_lo * r_hi),
                       max_thd=t2 * spec.max_thd, min_rin_ohms=rin2_floor, **base)
    m = corner_midband(first, spec, source_ohms=0.0, load_ohms=spec.load_ohms)
    centre, spread = spread_of(m[:, 0])
    # The first stage is designed for one load; the second stage's input resistance moves over its
    # corners, and the first stage's gain with it (at most half as much when its output resistance is
    # about its load: a bound taken as the allowance, common practice, no source).
    z_lo, z_hi = float(m[:, 1].min()), float(m[:, 1].max())
    spread += 0.5 * (math.sqrt(z_hi / z_lo) - 1.0)
    tol = max(tol_left(spec.gain_tol, spread), spec.gain_tol * FLOOR_TOL_SHARE)
    low = float(np.abs(m[:, 0]).min())
    return replace(spec, topology=k1, gain=spec.gain / centre, gain_tol=tol, load_ohms=math.sqrt(z_lo * z_hi),
                   swing_pp=spec.swing_pp / max(low, 1e-9), max_thd=t1 * spec.max_thd, **base)


def rin2_floor(spec, qlines, kind) -> float:
    """The input resistance the second stage is asked for (Ω).  After a follower, enough that the
    follower's input (about hFE × its load) keeps the chain's Rin floor: 3 × floor / hFE min, held
    within 2.2 kΩ … 100 kΩ (common practice, no source); else 10 kΩ before a follower (a light load
    on the first collector) and 2.2 kΩ before a common emitter."""
    k1, k2 = CHAINS[kind]
    if k1 == EF:
        hfe = max((q.transistor.hfe_min for q in qlines), default=100.0)
        return float(np.clip(3.0 * spec.rin_floor / hfe, 2.2e3, 100e3))
    return 10e3 if k2 == EF else 2.2e3


HIGH_RIN_OHMS = 100e3  # beyond a common emitter's usual input resistance (common practice, no source)
LOW_LOAD_OHMS = 2.2e3  # a load a collector cannot drive cleanly on its own (common practice, no source)


def likely_order(spec, kinds) -> list[str]:
    """The chain kinds of `kinds`, the one most likely to meet `spec` first: a follower in front when
    the input must stay high (Rin floor ≥ 100 kΩ), a follower behind for a low load (≤ 2.2 kΩ), else two
    common emitters; the rest keep their order (common practice, no source)."""
    if spec.rin_floor >= HIGH_RIN_OHMS:
        best = f"{EF}+{CE}"
    elif spec.load_ohms <= LOW_LOAD_OHMS:
        best = f"{CE}+{EF}"
    else:
        best = f"{CE}+{CE}"
    kinds = list(kinds)
    return ([best] if best in kinds else []) + [k for k in kinds if k != best]

