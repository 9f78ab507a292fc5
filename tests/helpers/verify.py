"""An independent re-check of one design from `find_designs` (or the hand method) against its spec.

Nothing here trusts the design document's numbers: every network value is rebuilt from the
drawer lines it names, and every figure comes from the exact nodal solver
(optimizer.physics.analysis.analyze / optimizer.physics.distortion), not from the fast screen the solver
prunes with.  The stage is checked at every corner: hFE min and hFE max of its transistor line
(hFE taken at 27 °C and moved with the model's temperature law) × every temperature of
`spec.temps_c`, with nominal part values (tolerances are the Monte Carlo's business).  The
limits are the spec's, plus the ratings rules of optimizer.physics.ratings (resistors ≤ 50 % of their rating, capacitors' DC ≤ 80 % of theirs: common practice, no source)
and the transistor's: PD ≤ 50 % of PD(max) (common practice, no source), IC ≤ IC(max),
VCEO ≥ the supply.

`verify_design(design, spec, drawer) -> list[str]`: [] when the design meets everything.
`failures(...)` gives the same as `Failure` records (check name, corner, text) for tallies;
`stage_at(design, spec, drawer, hfe, temp_c)` is the rebuilt stage at one corner;
`thd_against_ngspice(stage, swing_pp)` pairs our THD with ngspice's `.four`.
"""

from __future__ import annotations

import math
import re
import shutil
import subprocess
import tempfile
from collections import Counter
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from optimizer.parts import network_tree
from optimizer.physics.analysis import analyze
from optimizer.physics.circuit import build, operating_point
from optimizer.physics.response import transfer as response_transfer
from optimizer.search.candidates import transistor_of
from optimizer.physics.distortion import distortion
from optimizer.physics.netlist import to_netlist
from optimizer.physics.ratings import CAPACITOR_MARGIN, RESISTOR_DERATING, capacitor_voltages, part_dissipation
from optimizer.physics.stage import CAPACITOR_POSITIONS, OPTIONAL_POSITIONS, RESISTOR_POSITIONS, Stage

PD_DERATING = 0.5  # transistor dissipation ≤ 50 % of PD(max) (common practice, no source)
VALUE_RTOL = 1e-6  # the document's value against the one rebuilt from the drawer


@dataclass(frozen=True)
class Failure:
    check: str  # e.g. "thd", "vce", "rin", "stock"
    corner: str  # "hFE 100, 0 °C" or "" for checks that do not depend on a corner
    text: str

    def __str__(self) -> str:
        return f"{self.corner}: {self.text}" if self.corner else self.text


def verify_design(design: dict, spec, drawer) -> list[str]:
    """Human-readable reasons `design` fails `spec` with the parts of `drawer` ([] = it passes)."""
    return [str(f) for f in failures(design, spec, drawer)]


def failures(design: dict, spec, drawer, *, thd: bool = True) -> list[Failure]:
    """Every failure, as records.  `thd=False` skips the (slowest) distortion check."""
    topology = design.get("topology", spec.topology)
    if topology != spec.topology:
        return [Failure("topology", "", f"design is a {topology}, the spec asks for a {spec.topology}")]
    out: list[Failure] = []
    trees, res, caps, transistor = _rebuild_design(design, topology, drawer, out)
    out += _stock(design, trees, (design.get("parts") or {}).get("Q1"), drawer)
    if transistor is None or any(f.check == "parts" for f in out):
        return out
    out += _static_transistor_limits(transistor, spec)
    for hfe_name, bf in (("min", transistor.hfe_min), ("max", transistor.hfe_max)):
        for temp in spec.temps_c:
            corner = f"hFE {hfe_name} {bf:g}, {temp:g} °C"
            stage = Stage(topology, res, caps, spec.supply_v, spec.source_ohms, spec.load_ohms,
                          transistor.with_beta(bf), float(temp), _vee(spec))
            out += _corner(stage, spec, trees, corner, thd)
    return out


def stage_at(design: dict, spec, drawer, hfe: str = "min", temp_c: float = 27.0) -> Stage:
    """The design's stage rebuilt from the drawer at one corner (hfe "min", "max" or "typical").

    Raises ValueError when the design names parts the drawer does not hold.
    """
    topology = design.get("topology", spec.topology)
    out: list[Failure] = []
    _, res, caps, q = _rebuild_design(design, topology, drawer, out)
    if out:
        raise ValueError("; ".join(map(str, out)))
    bf = {"min": q.hfe_min, "max": q.hfe_max, "typical": q.bf}[hfe]
    return Stage(topology, res, caps, spec.supply_v, spec.source_ohms, spec.load_ohms, q.with_beta(bf), temp_c,
                 _vee(spec))


def _vee(spec) -> float:
    """The negative rail (V; 0 = one supply)."""
    return float(getattr(spec, "negative_supply_v", 0.0) or 0.0)


def _rebuild_design(design, topology, drawer, out):
    """(networks, resistor values Ω, capacitor values F, transistor model) from the drawer; problems to `out`."""
    parts = design.get("parts") or {}
    trees, values = {}, {}
    for kind, positions, unit in (("resistor", RESISTOR_POSITIONS[topology], "ohms"),
                                  ("capacitor", CAPACITOR_POSITIONS[topology], "farads")):
        for pos in positions:
            if pos not in parts:
                if pos not in OPTIONAL_POSITIONS[topology] and kind == "resistor":
                    out.append(Failure("parts", "", f"{pos} is missing"))
                continue
            tree = _tree(parts[pos], kind, unit, drawer, pos, out)
            if tree is None:
                continue
            trees[pos] = tree
            values[pos] = float(network_tree.evaluate(tree, kind))
            claimed = parts[pos].get(unit)
            if claimed is not None and not math.isclose(float(claimed), values[pos], rel_tol=VALUE_RTOL):
                out.append(Failure("parts", "", f"{pos} is given as {float(claimed):.6g} {unit} but its "
                                                f"parts add up to {values[pos]:.6g}"))
    res = {p: v for p, v in values.items() if p in RESISTOR_POSITIONS[topology]}
    caps = {p: v for p, v in values.items() if p in CAPACITOR_POSITIONS[topology]}
    return trees, res, caps, _transistor(parts.get("Q1"), drawer, out)


def _tree(entry, kind, unit, drawer, pos, out):
    """The network of `entry`, each leaf revalued from its drawer line (None + a failure when it can't be)."""
    node = entry.get("network", entry) if isinstance(entry, dict) else None
    if not isinstance(node, dict):
        out.append(Failure("parts", "", f"{pos} has no network"))
        return None
    try:
        return _rebuild(node, kind, unit, drawer, pos)
    except ValueError as exc:
        out.append(Failure("parts", "", str(exc)))
        return None


def _rebuild(node: dict, kind, unit, drawer, pos):
    for key, cls in (("series", network_tree.Series), ("parallel", network_tree.Parallel)):
        if key in node:
            return cls(tuple(_rebuild(n, kind, unit, drawer, pos) for n in node[key]))
    line = int(node["line"])
    part = drawer.part_at(line)
    if part is None or part.kind != kind or not part.value:
        raise ValueError(f"{pos}: drawer line {line} is not a {kind}")
    if unit in node and not math.isclose(float(node[unit]), part.value, rel_tol=VALUE_RTOL):
        raise ValueError(f"{pos}: line {line} holds {part.value:.6g} {unit}, the design says {node[unit]:.6g}")
    # The leaf's rating slot holds W for a resistor and (here) V for a capacitor.
    rating = part.power_w if kind == "resistor" else part.voltage_v
    return network_tree.Leaf(float(part.value), float(part.tolerance or 0.0), line, rating)


def _transistor(entry, drawer, out):
    if not isinstance(entry, dict) or "line" not in entry:
        out.append(Failure("parts", "", "Q1 is missing"))
        return None
    part = drawer.part_at(int(entry["line"]))
    if part is None or part.kind != "transistor" or (part.polarity or "NPN").upper() not in ("NPN", "PNP"):
        out.append(Failure("parts", "", f"Q1: drawer line {entry['line']} is not a transistor"))
        return None
    if not (part.hfe_min and part.hfe_max):
        out.append(Failure("parts", "", f"Q1: line {part.line} gives no hFE range to check the corners with"))
        return None
    return transistor_of(part)


def _stock(design, trees, q_entry, drawer) -> list[Failure]:
    """Uses per line ≤ qty, and the document's `uses` equal to what the parts take."""
    need = Counter(leaf.line for tree in trees.values() for leaf in network_tree.leaves(tree))
    if isinstance(q_entry, dict) and "line" in q_entry:
        need[int(q_entry["line"])] += 1
    out = []
    for line, n in sorted(need.items()):
        part = drawer.part_at(line)
        have = part.qty if part is not None else 0
        if n > have:
            out.append(Failure("stock", "", f"line {line} is used {n}× but holds {have}"))
    uses = design.get("uses")
    if uses is not None:
        listed = Counter()
        for u in uses:
            listed[int(u["line"])] += int(u["qty"])
        if listed != need:
            out.append(Failure("uses", "", f"uses lists {dict(sorted(listed.items()))}, the parts take "
                                           f"{dict(sorted(need.items()))}"))
    return out


def _static_transistor_limits(q, spec) -> list[Failure]:
    span = spec.supply_v - _vee(spec)  # cut off, VCE reaches the whole span of the rails
    if q.vceo_v and q.vceo_v < span:
        return [Failure("rating", "", f"{q.name} VCEO {q.vceo_v:g} V is below the {span:g} V the rails span")]
    return []


def _corner(stage: Stage, spec, trees, corner: str, thd: bool) -> list[Failure]:
    out = []

    def fail(check, text):
        out.append(Failure(check, corner, text))

    swing = spec.swing_pp if thd and spec.swing_pp > 0 else None
    try:
        report = analyze(stage, swing)
    except (RuntimeError, ValueError, FloatingPointError, np.linalg.LinAlgError) as exc:
        fail("converged", f"the exact solver did not converge ({exc})")
        return out
    op, p = report.operating_point, report.predicted
    if not all(np.isfinite([op["vb"], op["ve"], op["vc"], op["ic"], p["gain"]])):
        fail("converged", "the exact solver gave a non-finite operating point")
        return out
    if op["saturated"]:
        fail("saturated", f"Q1 saturated (VCE {op['vce']:.3g} V)")
    if op["cutoff"]:
        fail("cutoff", f"Q1 cut off (IC {op['ic']:.3g} A)")
    want_sign = -1.0 if stage.kind.inverting else 1.0
    gain = p["gain"]
    if gain * want_sign <= 0:
        fail("gain", f"gain {gain:.3g} has the wrong sign")
    elif abs(abs(gain) / spec.gain - 1) > spec.gain_tol + 1e-9:
        fail("gain", f"gain {abs(gain):.3g} is outside {spec.gain:g} ± {spec.gain_tol:.0%}")
    if p["swing_pp"] < spec.swing_pp * (1 - 1e-9):
        fail("swing", f"clip-free swing {p['swing_pp']:.3g} V p-p < {spec.swing_pp:g} V p-p")
    if p["rin"] < spec.rin_floor * (1 - 1e-9):
        fail("rin", f"Rin {p['rin']:.4g} Ω < {spec.rin_floor:.4g} Ω")
    if op["vce"] < spec.min_vce_v:
        fail("vce", f"quiescent VCE {op['vce']:.3g} V < {spec.min_vce_v:g} V")
    if swing is not None:
        d = report.distortion
        if d is None:
            fail("thd", f"THD at {swing:g} V p-p could not be computed")
        else:
            if d["thd"] > spec.max_thd:
                fail("thd", f"THD {d['thd']:.2%} at {swing:g} V p-p > {spec.max_thd:.2%}")
            if d["saturates"] or d["cuts_off"] or not d["reached"]:
                why = [w for w, on in (("saturates", d["saturates"]), ("cuts off", d["cuts_off"]),
                                       (f"reaches only {d['swing_pp']:.4g} V p-p", not d["reached"])) if on]
                fail("swing", f"clips at {swing:g} V p-p ({', '.join(why)})")
    if spec.max_supply_a is not None and op["i_supply"] > spec.max_supply_a:
        fail("current", f"supply current {op['i_supply'] * 1e3:.3g} mA > {spec.max_supply_a * 1e3:.3g} mA")
    if p["f_low"] > spec.low_cut_hz * (1 + 1e-9):
        fail("f_low", f"f_low {p['f_low']:.3g} Hz > {spec.low_cut_hz:g} Hz")
    # The passband a decade above the low cut-off holds the midband gain within 1 % (optimizer/physics/
    # lowcut.py; common practice, no source): solved here on the exact circuit, independently.
    circuit = build(stage)
    h = abs(complex(response_transfer(circuit, operating_point(circuit), [10.0 * spec.low_cut_hz])[0]))
    if h < 0.99 * abs(gain) * (1 - 1e-9):
        fail("f_low", f"gain a decade above the low cut-off is {h:.4g}, {1 - h / abs(gain):.1%} below midband")
    out += [Failure("rating", corner, t) for t in _ratings(stage, report, trees)]
    return out


def _ratings(stage: Stage, report, trees) -> list[str]:
    """Per part: resistor power ≤ 50 % of its rating, capacitor DC ≤ 80 % of its; transistor limits."""
    out = []
    q, op = stage.transistor, report.operating_point
    p_q = report.dissipation_w["Q1"]
    if q.pd_max_w and p_q > PD_DERATING * q.pd_max_w:
        out.append(f"{q.name} dissipates {p_q * 1e3:.3g} mW > 50 % of {q.pd_max_w * 1e3:.3g} mW")
    if q.ic_max_a and op["ic"] > q.ic_max_a:
        out.append(f"{q.name} IC {op['ic'] * 1e3:.3g} mA > IC(max) {q.ic_max_a * 1e3:.3g} mA")
    for pos, tree in trees.items():
        if pos in report.dissipation_w:
            for leaf, w in part_dissipation(tree, report.dissipation_w[pos]):
                if leaf.power_w is None or not np.isfinite(leaf.power_w):
                    out.append(f"{pos}: line {leaf.line} has no power rating")
                elif w > RESISTOR_DERATING * leaf.power_w:
                    out.append(f"{pos}: line {leaf.line} dissipates {w * 1e3:.3g} mW > "
                               f"{RESISTOR_DERATING:.0%} of its {leaf.power_w:g} W")
    volts = capacitor_voltages(stage.topology, {"vb": op["vb"], "vc": op["vc"], "ve": op["ve"], "vn": op["vmid"]})
    if "CE" in volts and str(getattr(stage.transistor, "polarity", "NPN")).upper() == "PNP":
        # The operating point is in real polarity; a PNP stage's CE returns to +V, not to ground
        # (the PNP circuit is the NPN one with ground and the supply swapped), so it holds VCC − V(vn).
        volts["CE"] = stage.supply_v - op["vmid"]
    for pos, tree in trees.items():
        if pos in volts and pos in stage.capacitors:
            for leaf, v in _cap_share(tree, abs(float(volts[pos]))):
                if leaf.power_w is None or not np.isfinite(leaf.power_w):
                    out.append(f"{pos}: line {leaf.line} has no voltage rating")
                elif v > CAPACITOR_MARGIN * leaf.power_w:
                    out.append(f"{pos}: line {leaf.line} sees {v:.3g} V DC > {CAPACITOR_MARGIN:.0%} of its "
                               f"{leaf.power_w:g} V rating")
    return out


def _cap_share(node, volts: float):
    """DC volts across each capacitor of a network (parallel: the same; series: split as 1/C)."""
    if isinstance(node, network_tree.Leaf):
        return [(node, volts)]
    total = network_tree.evaluate(node, "capacitor")
    out = []
    for part in node.parts:
        c = network_tree.evaluate(part, "capacitor")
        out += _cap_share(part, volts * (total / c if isinstance(node, network_tree.Series) else 1.0))
    return out


def thd_against_ngspice(stage: Stage, swing_pp: float, timeout_s: float = 120.0) -> tuple[float, float]:
    """(THD of the exact large-signal solve, THD ngspice's `.four` prints) at `swing_pp` V p-p.

    Both are driven with the same source amplitude.  ngspice counts harmonics 2…9, ours 2…10.
    The signal is 5 kHz, far above the coupling corners, over 40 periods so the capacitors
    settle before `.four` reads the last one.  Raises RuntimeError without ngspice or its figure.
    """
    ngspice = shutil.which("ngspice")
    if not ngspice:
        raise RuntimeError("ngspice is not installed")
    mine = distortion(stage, swing_pp)
    deck = to_netlist(stage, analyses="tran", signal_hz=5e3, periods=40, source_amplitude_v=mine.source_amplitude_v)
    deck = deck.replace(".options TNOM=27", ".options TNOM=27 reltol=1e-6 abstol=1e-12 vntol=1e-9")
    with tempfile.TemporaryDirectory(prefix="drawerfit-four-") as tmp:
        path = Path(tmp) / "deck.cir"
        path.write_text(deck)
        done = subprocess.run([ngspice, "-b", str(path)], capture_output=True, text=True, timeout=timeout_s, cwd=tmp)
    m = re.search(r"THD:\s*([0-9.eE+-]+)\s*%", done.stdout)
    if not m:
        raise RuntimeError(f"ngspice printed no THD:\n{done.stdout[-1000:]}")
    return mine.thd, float(m.group(1)) / 100
