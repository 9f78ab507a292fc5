"""The hand method: the common-emitter stage a person designs on paper, built from the drawer.

Common practice, no source: the usual textbook common-emitter procedure, written here from
general trade knowledge (not copied from any text), as the comparator drawerfit must beat.

  1. VE ≈ VCC/10, and at least 1 V (bias stability against VBE drift).
  2. IC from the swing and the load: the collector can rise by at most IC·(RC‖RL) before the
     transistor cuts off, so IC·(RC‖RL) ≥ 1.25 × the asked peak (headroom), and the gain asks
     RC‖RL ≥ |A|·re'.  Take 1.5 × the larger need, at least 0.5 mA but lower when the divider
     would pull Rin under its floor, and under any current limit.
  3. VC midway between VE + VCE(sat) + swing/2 and VCC; RC = (VCC − VC)/IC.
  4. RE = VE/IC; RE1 from the gain, |A| ≈ (RC‖RL)/(re' + RE1) with re' = Vt/IC, the target raised
     by the source divider (RS + Rin)/Rin; RE2 = RE − RE1, bypassed by CE.
  5. Stiff divider: the current through R2 ≈ 10 × IB at hFE min; VB = VE + 0.65 V;
     R2 = VB/I2, R1 = (VCC − VB)/(I2 + IB).
  6. Capacitors from the low cut: each corner at low_cut/3, C = 1/(2π·R·f) with R what the
     capacitor sees (CIN: RS + Rin, COUT: RC + RL, CE: RE2 ‖ (RE1 + re' + (RS‖RTH)/hFE)).
  7. Round each resistor to the nearest stocked single part (by ratio) whose power rating is at
     least twice its estimated dissipation, counts respected (a line used twice needs qty 2);
     take each capacitor as the smallest single part at or above its ideal value rated at least
     1.25 × the DC across it (polarised parts are fine), else the largest adequately rated one;
     Q1 is the in-stock NPN line with the best-known hFE (highest hFE min, then narrowest spread)
     whose VCEO covers the supply.

`hand_design(drawer, spec) -> dict` returns a design in find_designs' shape (parts, uses, Q1),
plus "ideal" (the unrounded values); it raises `NoHandDesign` when the drawer lacks a part kind.
"""

from __future__ import annotations

import math
from collections import Counter

import numpy as np

VCE_SAT_V = 0.2  # common practice, no source
VBE_V = 0.65  # common practice, no source
VT_V = 0.02585  # kT/q at 27 °C (from k and e; ≈ 25.85 mV)
SWING_HEADROOM = 1.25  # common practice, no source
DIVIDER_STIFFNESS = 10.0  # current through R2 ≈ 10 × IB (common practice, no source)
CAP_RATING_MARGIN = 1.25  # capacitor rated ≥ 1.25 × its DC (common practice, no source)
RESISTOR_POWER_MARGIN = 2.0  # resistor rated ≥ 2 × its dissipation (common practice, no source)
IC_FLOOR_A = 0.5e-3
IC_MIN_A = 20e-6


class NoHandDesign(Exception):
    """The drawer lacks what the hand method needs (no NPN, no resistor or capacitor left)."""


def ideal_values(spec, hfe_min: float, hfe_typ: float | None = None) -> dict:
    """The unrounded hand design (Ω, F, A, V) for a common-emitter `spec`.

    hfe_min sizes the divider; hfe_typ (default hfe_min) estimates Rin for the source divider.
    """
    hfe_typ = hfe_min if hfe_typ is None else hfe_typ
    vcc, vp, rl = spec.supply_v, spec.swing_pp / 2, spec.load_ohms
    ve = max(vcc / 10, 1.0)
    vc = (ve + VCE_SAT_V + vp + vcc) / 2
    v_rc = vcc - vc
    # IC·(RC‖RL) = v_rc·RL/(RC + RL) with RC = v_rc/IC, so the swing and gain needs cap RC from above.
    need = max(SWING_HEADROOM * vp, spec.gain * VT_V * 1.2, 1e-3)
    rc_max = rl * (v_rc / need - 1) if math.isfinite(rl) else math.inf
    ic_need = v_rc / rc_max if 0 < rc_max < math.inf else (0.0 if rc_max == math.inf else v_rc / (0.05 * rl))
    ic = max(1.5 * ic_need, IC_FLOOR_A)
    # The divider's R1‖R2 scales as 1/IC: lower IC (not below the need) until Rin clears its floor.
    rth_at_ic = _divider(vcc, ve + VBE_V, ic, hfe_min)[2]
    if rth_at_ic < 1.2 * spec.rin_floor:
        ic = max(1.5 * ic_need, ic * rth_at_ic / (1.2 * spec.rin_floor), IC_MIN_A)
    if spec.max_supply_a is not None:
        ic = min(ic, 0.9 * spec.max_supply_a / (1 + (DIVIDER_STIFFNESS + 1) / hfe_min))
    rc = v_rc / ic
    re = ve / ic
    re_prime = VT_V / ic
    rac = rc * rl / (rc + rl) if math.isfinite(rl) else rc
    vb = ve + VBE_V
    r1, r2, rth = _divider(vcc, vb, ic, hfe_min)
    # The source and Rin divide the signal: aim the base-to-load gain above the asked one (twice round).
    gain_b, rs = spec.gain, spec.source_ohms
    for _ in range(2):
        re1 = min(max(rac / gain_b - re_prime, 0.0), re)
        rin = 1 / (1 / rth + 1 / (hfe_typ * (re_prime + re1)))
        gain_b = spec.gain * (rs + rin) / rin
    re2 = re - re1
    f = spec.low_cut_hz / 3
    out = {"R1": r1, "R2": r2, "RC": rc, "RE1": re1, "RE2": re2, "ic": ic, "ve": ve, "vb": vb, "vc": vc}
    out["CIN"] = 1 / (2 * math.pi * f * (spec.source_ohms + rin))
    out["COUT"] = 1 / (2 * math.pi * f * (rc + (rl if math.isfinite(rl) else 1e12)))
    if re2 > 0:
        rs_th = 1 / (1 / max(spec.source_ohms, 1e-3) + 1 / rth)
        out["CE"] = 1 / (2 * math.pi * f * (1 / (1 / re2 + 1 / (re1 + re_prime + rs_th / hfe_min))))
    return out


def _divider(vcc, vb, ic, hfe_min):
    ib = ic / hfe_min
    i2 = DIVIDER_STIFFNESS * ib
    r2, r1 = vb / i2, (vcc - vb) / (i2 + ib)
    return r1, r2, r1 * r2 / (r1 + r2)


def _transistor(drawer, spec):
    lines = [p for p in drawer.transistors()
             if p.qty > 0 and (p.polarity or "NPN").upper() == "NPN" and p.hfe_min and p.hfe_max]
    if not lines:
        raise NoHandDesign("no NPN line with an hFE range in stock")
    rated = [p for p in lines if not p.vceo_v or p.vceo_v >= spec.supply_v] or lines
    return max(rated, key=lambda p: (p.hfe_min, -p.hfe_max / p.hfe_min, p.qty))


def hand_design(drawer, spec) -> dict:
    """The hand design in find_designs' shape (see the module docstring)."""
    q = _transistor(drawer, spec)
    ideal = ideal_values(spec, q.hfe_min, math.sqrt(q.hfe_min * q.hfe_max))
    taken: Counter = Counter()
    parts = {}
    ic, vcc = ideal["ic"], spec.supply_v
    power = {"R1": (vcc - ideal["vb"]) ** 2 / ideal["R1"], "R2": ideal["vb"] ** 2 / ideal["R2"],
             "RC": ic ** 2 * ideal["RC"], "RE1": ic ** 2 * ideal["RE1"], "RE2": ic ** 2 * ideal["RE2"]}
    rs = [p for p in drawer.parts if p.kind == "resistor" and p.qty > 0 and p.value]
    for pos in ("RC", "RE1", "RE2", "R2", "R1"):  # the gain-setting ones first
        target = ideal[pos]
        if target <= 0:
            continue
        part = _nearest_resistor(rs, target, power[pos], taken)
        if part is None:
            if pos in ("RE1", "RE2"):
                continue  # a person would leave the small one out rather than give up
            raise NoHandDesign(f"no resistor left for {pos}")
        taken[part.line] += 1
        parts[pos] = {"ohms": part.value, "network": {"line": part.line, "ohms": part.value}}
    if "RE2" not in parts and "RE1" not in parts:
        ideal.pop("CE", None)
    cs = [p for p in drawer.parts if p.kind == "capacitor" and p.qty > 0 and p.value]
    dc = {"CIN": ideal["vb"], "COUT": ideal["vc"], "CE": ideal["ve"] * ideal["RE2"] / (ideal["RE1"] + ideal["RE2"])}
    for pos in ("CE", "CIN", "COUT"):
        if pos not in ideal or (pos == "CE" and "RE2" not in parts):
            continue
        part = _capacitor(cs, ideal[pos], CAP_RATING_MARGIN * dc[pos], taken)
        if part is None:
            raise NoHandDesign(f"no capacitor rated {CAP_RATING_MARGIN * dc[pos]:.3g} V left for {pos}")
        taken[part.line] += 1
        parts[pos] = {"farads": part.value, "network": {"line": part.line, "farads": part.value},
                      "polarised": part.polarised, "voltage_v": part.voltage_v}
    if q.qty <= taken[q.line]:
        raise NoHandDesign("no transistor left")
    taken[q.line] += 1
    parts["Q1"] = {"line": q.line, "part": q.part or f"line {q.line}"}
    return {"topology": "common-emitter", "parts": parts,
            "uses": [{"line": k, "qty": v} for k, v in sorted(taken.items())],
            "ideal": {k: float(v) for k, v in ideal.items()}, "method": "hand"}


def _nearest_resistor(lines, target, watts, taken):
    ok = [p for p in lines if p.qty > taken[p.line] and (p.power_w or 0.25) >= RESISTOR_POWER_MARGIN * watts]
    if not ok:
        return None
    return min(ok, key=lambda p: (abs(math.log(p.value / target)), -p.qty))


def _capacitor(lines, target, volts, taken):
    rated = [p for p in lines if p.qty > taken[p.line] and p.voltage_v is not None
             and np.isfinite(p.voltage_v) and p.voltage_v >= volts]
    above = [p for p in rated if p.value >= target]
    if above:
        return min(above, key=lambda p: (p.value, -p.qty))
    return max(rated, key=lambda p: (p.value, p.qty)) if rated else None
