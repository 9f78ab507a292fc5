"""The readable sheet `drawerfit analyze` prints: what optimizer.physics.analysis computed, formatted."""

from __future__ import annotations

import math

from inventory.values import format_si

NODE_LABEL = {"base": "base", "emit": "emitter", "mid": "RE1–RE2 junction", "coll": "collector",
              "out": "load", "in": "input", "0": "ground", "vcc": "supply"}


def _si(value, unit: str) -> str:
    if value is None or not math.isfinite(value):
        return "—" if value is None else "∞"
    if abs(value) < 1e-15:
        return f"0 {unit}"  # leakage-level figures: below what the sheet's prefixes spell
    return format_si(value, unit)


def sheet(report) -> str:
    s, p, op = report.stage, report.predicted, report.operating_point
    lines = [f"{s.topology} stage ({s.transistor.polarity}), {_si(s.supply_v, 'V')} supply, {s.temp_c:g} °C, "
             f"hFE {s.transistor.bf:g}"]
    parts = [f"{k} {_si(v, 'Ω')}" for k, v in s.resistors.items()]
    parts += [f"{k} {_si(v, 'F')}" for k, v in s.capacitors.items()]
    lines.append("  parts: " + ", ".join(parts))
    lines.append(f"  source {_si(s.source_ohms, 'Ω')}, load {_si(s.load_ohms, 'Ω') if math.isfinite(s.load_ohms) else 'open'}")
    lines.append("")
    lines.append("Operating point")
    vce = "VEC" if op.get("polarity") == "PNP" else "VCE"  # a PNP's emitter sits above its collector
    lines.append(f"  VB {_si(op['vb'], 'V')}   VE {_si(op['ve'], 'V')}   VC {_si(op['vc'], 'V')}   {vce} {_si(op['vce'], 'V')}")
    lines.append(f"  IC {_si(op['ic'], 'A')}   IB {_si(op['ib'], 'A')}   supply current {_si(op['i_supply'], 'A')}")
    a = report.approximations
    hand = f"  by hand: re' = Vt/IC = {_si(a['re_prime'], 'Ω')}"
    if "vb_thevenin" in a:
        hand += f", VB ≈ VTH = {_si(a['vb_thevenin'], 'V')}"
    lines.append(hand + f", gain ≈ {a['gain_textbook']:.3g}")
    lines.append("")
    lines.append("Midband (capacitors as shorts)")
    lines.append(f"  gain {p['gain']:.4g} V/V ({20 * math.log10(abs(p['gain'])):.2f} dB) from source EMF to load")
    lines.append(f"  input resistance {_si(p['rin'], 'Ω')}, output resistance {_si(p['rout'], 'Ω')}")
    lines.append("")
    lines.append(f"Low cut-off (−3 dB): {_si(p['f_low'], 'Hz') if p['f_low'] else 'none (DC-coupled)'}")
    for name, c in report.capacitors.items():
        lines.append(f"  {name} {_si(c['farads'], 'F')} sees {_si(c['r_seen_ohms'], 'Ω')} → "
                     f"{_si(c['f_hz'], 'Hz')} alone; {_si(c['dc_v'], 'V')} across it, + to the "
                     f"{NODE_LABEL.get(c['positive_node'], c['positive_node'])}")
    lines.append("")
    sw = report.swing
    lines.append(f"Swing: {_si(sw['pp'], 'V')} p-p clip-free at the load "
                 f"(up {_si(sw['up'], 'V')}, down {_si(sw['down'], 'V')} peak)")
    d = report.distortion
    if d is not None:
        state = "clips" if d["clips"] else "clean"
        lines.append(f"  THD {100 * d['thd']:.3g} % at {_si(d['swing_pp'], 'V')} p-p ({state}; source "
                     f"{_si(d['source_amplitude_v'], 'V')} peak)")
    lines.append("")
    lines.append("Dissipation")
    lines.append("  " + ", ".join(f"{k} {_si(v, 'W')}" for k, v in report.dissipation_w.items()))
    if report.warnings:
        lines.append("")
        lines.append("Warnings")
        lines += [f"  ! {w}" for w in report.warnings]
    lines.append("")
    lines.append("Safety")
    lines += [f"  {c}" for c in report.cautions]
    return "\n".join(lines)
