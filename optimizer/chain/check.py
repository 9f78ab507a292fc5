"""The spec check of a whole chain at every corner, exactly.

Corners: hFE min and max of Q1 × hFE min and max of Q2 × the spec's temperature corners (both
transistors at the same temperature), nominal part values.  At each: both transistors biased
(neither cut off, VCE ≥ --min-vce), the chain's gain with its sign and within the tolerance,
Rin ≥ the floor, the supply current, f_low ≤ the low cut-off and the passband a decade above it
within 1 % of midband (optimizer/physics/lowcut.py's rule for one stage, here on the whole chain),
the asked swing reached at the load without either transistor saturating or cutting off,
THD ≤ --max-thd (large-signal solve of the whole chain), each capacitor rated for ≥ 1.5 × its DC voltage with a polarised one never reversed,
and each transistor within its ratings (PD ≤ 50 % of PD(max), IC ≤ IC(max), VCEO ≥ the supply).
Resistor dissipation is the stages' own (the stages are AC-coupled, so each stage's DC is its
own) and was checked by the single-stage search at the same corners.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from optimizer.chain.circuit import Chain
from optimizer.chain.figures import Figures, figures, transfer
from optimizer.parts.capchoice import (
    CAP_VOLTAGE_MARGIN as RATING_FACTOR,  # rating ≥ 1.5 × the DC across, as for one stage
)
from optimizer.physics.analysis import CUTOFF_A
from optimizer.physics.lowcut import CHECKS
from optimizer.search.feasible import TRANSISTOR_PD_DERATING

SIGN = {"emitter-follower+common-emitter": -1, "common-emitter+common-emitter": 1,
        "common-emitter+emitter-follower": -1}


def corners(q1, q2, spec) -> dict[str, tuple[float, float, float]]:
    """Corner name ("min.max_lo": Q1 end, Q2 end, temperature tag) → (BF1, BF2, °C)."""
    out = {}
    for e1, b1 in (("min", q1.transistor.hfe_min), ("max", q1.transistor.hfe_max)):
        for e2, b2 in (("min", q2.transistor.hfe_min), ("max", q2.transistor.hfe_max)):
            for t in spec.temps_c:
                tag = "" if t == 27.0 else ("_lo" if t < 27.0 else "_hi")
                out[f"{e1}.{e2}{tag}"] = (float(b1), float(b2), float(t))
    return out


@dataclass
class Verdict:
    ok: bool
    failed: list = field(default_factory=list)  # names of the limits broken (at some corner)
    figures: Figures | None = None
    names: list = field(default_factory=list)  # corner names, in the figures' order
    thd: float = float("inf")  # worst corner
    robustness: float = 0.0
    supply_a: float = float("inf")


def passband_holds(f: Figures, low_cut_hz: float) -> np.ndarray:
    """Per corner: |H(m·f_cut)|² ≥ p·|H_mid|² for every (m, p) of lowcut.CHECKS (the −3 dB point at
    f_cut and the passband a decade above it within 1 % of midband), on the whole chain."""
    ok = np.ones(len(f.gain), dtype=bool)
    for factor, power in CHECKS:
        h = transfer(f.net, f.op, [factor * low_cut_hz])[:, 0]
        ok &= np.abs(h) ** 2 >= power * f.gain ** 2 * (1 - 1e-12)
    return ok


def check_chain(chain: Chain, spec, q1, q2, ratings: dict, *, points: int = 64) -> Verdict:
    """Verdict for `chain` (with transistor lines q1, q2) against `spec` at every corner.

    ratings: capacitor name in the chain (CIN, CE, CIN_B …) → (voltage rating V or NaN, polarised).
    """
    cs = corners(q1, q2, spec)
    try:
        f = figures(chain, list(cs.values()), spec.swing_pp if spec.swing_pp > 0 else None, points=points)
    except RuntimeError:
        return Verdict(False, ["bias"])
    fails = {}
    floor = spec.rin_floor
    mag = np.abs(f.gain)
    fails["gain"] = (np.sign(f.gain) != SIGN[chain.kind]) | (np.abs(mag / spec.gain - 1) > spec.gain_tol + 1e-12)
    vces = []
    bias = np.zeros(len(mag), dtype=bool)
    rating = np.zeros(len(mag), dtype=bool)
    for (c, b, e), ic, ib, stage in zip(f.net.qs, f.ic, f.ib, (chain.first, chain.second), strict=True):
        vce = f.node(c) - f.node(e)  # the solved net's: VEC of a PNP chain (its mirror), as every limit reads it
        vces.append(vce)
        bias |= (ic < CUTOFF_A) | (vce < 0.2)
        t = stage.transistor
        p_q = vce * ic + (f.node(b) - f.node(e)) * ib
        if t.pd_max_w:
            rating |= p_q > TRANSISTOR_PD_DERATING * t.pd_max_w
        if t.ic_max_a:
            rating |= ic > t.ic_max_a
        if t.vceo_v and t.vceo_v < spec.supply_v:
            rating |= True
    fails["bias"] = bias
    fails["vce"] = np.min(vces, axis=0) < spec.min_vce_v
    fails["rin"] = f.rin < floor
    if spec.max_supply_a is not None:
        fails["current"] = f.i_supply > spec.max_supply_a
    fails["low_cut"] = f.f_low > spec.low_cut_hz
    fails["low_cut"] |= ~passband_holds(f, spec.low_cut_hz)
    i = f.net.nodes.index
    real = f.net.real(f.op)  # the DC across CIN and COUT_B differs between a PNP chain and its mirror
    for p in f.net.parts:
        if p.kind != "C" or p.name not in ratings:
            continue
        volts, polarised = ratings[p.name]
        dv = real[:, i(p.a)] - real[:, i(p.b)]
        if np.isfinite(volts):
            rating |= RATING_FACTOR * np.abs(dv) > volts
        if polarised and (dv.min() < 0 < dv.max()):
            rating |= True  # the + lead would face the lower voltage at some corner
    fails["ratings"] = rating
    if spec.swing_pp > 0:
        fails["swing"] = f.clips
        fails["thd"] = ~(f.thd <= spec.max_thd)
        thd = float(np.max(f.thd))
    else:
        thd = 0.0
    failed = [k for k, v in fails.items() if np.any(v)]
    margin = np.ones(len(mag))
    if spec.swing_pp > 0:
        margin = np.minimum(margin, 1.0 - f.thd / spec.max_thd)
    margin = np.minimum(margin, 1.0 - np.abs(mag / spec.gain - 1.0) / spec.gain_tol)
    if floor > 0:
        margin = np.minimum(margin, (f.rin - floor) / floor)
    if spec.min_vce_v > 0:
        margin = np.minimum(margin, (np.min(vces, axis=0) - spec.min_vce_v) / spec.min_vce_v)
    rob = float(np.clip(np.min(margin), 0.0, 1.0))
    return Verdict(not failed, failed, f, list(cs), thd, rob, float(np.max(f.i_supply)))
