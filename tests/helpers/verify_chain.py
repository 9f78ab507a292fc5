"""An independent re-check of one chain design from `find_designs` against its spec.

Nothing here uses optimizer/chain's solver for the small-signal figures: each stage is rebuilt
from the drawer lines the design names and solved alone with the single-stage exact solver
(optimizer.physics.circuit / optimizer.physics.response), and the chain follows from the cascade of two linear
two-ports (a Thévenin source driving a load; any circuits textbook): at each frequency
    H(f) = H1,open(f) · Zin2(f) / (Zin2(f) + Zout1(f)) · H2(f),
with H1,open the first stage's EMF-to-output gain unloaded (its output node, no COUT), Zout1 its
output impedance, Zin2 the second stage's input impedance (CIN_B in it) and H2 its gain from its
own input.  The DC of each stage is its own (the stages are AC-coupled by CIN_B).  Rin is the first
stage's with the second stage's midband input resistance as its load.  THD needs the whole
chain's large signal: it is re-done by ngspice on the design's own netlist when `spice=True`
(a transient of the chain at the drive that gives the asked swing), else taken as the chain solver's
at 256 points per period (not independent; the ngspice-marked tests do the independent one).

An all-PNP chain is checked as its NPN mirror: each PNP stage (emitter side to +V) is the NPN stage with
the same parts and every node voltage V replaced by VCC − V (circuit theory; README "PNP stages"), so
gain, Rin, f_low, the passband, VCE (VEC) and IC magnitudes, and the supply current are the mirror's.
The single-stage solver is handed the mirror directly (a PNP stage 1 without COUT is refused there);
the mirror itself is held to ngspice on real PNP circuits by tests/test_ngspice_pnp.py and, for chains,
tests/test_chain_pnp.py.  A chain mixing polarities fails.

Corners: hFE min and max of each transistor line × spec.temps_c, nominal parts.
`chain_failures(design, spec, drawer) -> list[str]`: [] when the chain meets everything checked.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import replace

import numpy as np

from optimizer.parts import network_tree
from optimizer.physics.circuit import NODES, build, operating_point, q_currents, solve_small_signal
from optimizer.physics.stage import Stage
from optimizer.search.candidates import transistor_of

SCAN_HZ = np.logspace(-2, 5, 701)
IN, OUT = NODES.index("in"), NODES.index("out")


def _value(part: dict, unit: str, drawer) -> float:
    """The network's value rebuilt from the drawer lines it names."""

    def leaf_value(leaf):
        return drawer.part_at(leaf.line).value

    node = network_tree.from_json(part["network"], unit_key=unit)
    kind = "resistor" if unit == "ohms" else "capacitor"
    return float(network_tree.evaluate(node, kind, leaf_value=leaf_value))


def stages_of(design: dict, spec, drawer):
    """(kind, resistors, capacitors, transistor line Part) of each stage, values from the drawer."""
    out = []
    for stage in design["stages"]:
        res, caps = {}, {}
        for pos in stage["positions"]:
            own = "Q1" if pos == "Q2" else (pos[:-2] if pos.endswith("_B") else pos)
            part = design["parts"][pos]
            if "ohms" in part:
                res[own] = _value(part, "ohms", drawer)
            elif "farads" in part:
                caps[own] = _value(part, "farads", drawer)
            else:
                q = drawer.part_at(int(part["line"]))
        out.append((stage["kind"], res, caps, q))
    return out


def model_of(q):
    """The transistor model of a drawer line, as solved: a PNP line's NPN mirror (same IS, BF, VAF …)."""
    t = transistor_of(q)
    return replace(t, polarity="NPN") if t.polarity.upper() == "PNP" else t


def _solve(stage: Stage):
    c = build(stage)
    return c, operating_point(c)


def cascade(design, spec, drawer, bf1, bf2, temp_c, freq_hz=None):
    """Per corner: (H at each frequency or midband, Rin, per-stage DC dicts, ic of each, i_supply)."""
    (k1, r1, c1, q1), (k2, r2, c2, q2) = stages_of(design, spec, drawer)
    t1 = model_of(q1).with_beta(bf1)
    t2 = model_of(q2).with_beta(bf2)
    # Stage 1 unloaded (an open stand-in), no COUT: its output node is the collector or emitter.
    s1 = Stage(k1, r1, c1, spec.supply_v, spec.source_ohms, float("inf"), t1, temp_c)
    s2 = Stage(k2, r2, c2, spec.supply_v, 0.0, spec.load_ohms, t2, temp_c)
    cir1, op1 = _solve(s1)
    cir2, op2 = _solve(s2)
    f = None if freq_hz is None else np.asarray(freq_hz, dtype=float)
    out1 = NODES.index("out")  # with COUT absent, out is the first stage's output node itself
    h1 = solve_small_signal(cir1, op1, freq_hz=f)[:, out1]
    z1 = solve_small_signal(cir1, op1, freq_hz=f, source=0.0, inject=("out", "0"), skip=("RL",))[:, out1]
    z2 = solve_small_signal(cir2, op2, freq_hz=f, source=0.0, inject=("in", "0"), skip=("RS",))[:, IN]
    h2 = solve_small_signal(cir2, op2, freq_hz=f)[:, OUT]
    h = h1 * z2 / (z2 + z1) * h2
    # Rin: the first stage loaded by the second's midband input resistance (capacitors shorted).
    z2_mid = solve_small_signal(cir2, op2, source=0.0, inject=("in", "0"), skip=("RS",))[0, IN].real
    loaded = build(replace(s1, capacitors={**c1, "COUT": 1.0}, load_ohms=z2_mid))
    rin = solve_small_signal(loaded, operating_point(loaded), source=0.0, inject=("in", "0"), skip=("RS",))[0, IN].real
    return h, rin, (op1, op2), (cir1, cir2)


def chain_failures(design: dict, spec, drawer) -> list[str]:
    """Reasons the chain fails `spec` ([] = passes): gain, Rin, f_low, the passband, VCE and cut-off at every corner,
    the supply current, and the stock."""
    out = []
    (k1, r1, c1, q1), (k2, r2, c2, q2) = stages_of(design, spec, drawer)
    polarities = {str(q.polarity or "NPN").upper() for q in (q1, q2)}
    if len(polarities) > 1:
        out.append(f"the transistors' polarities differ ({q1.polarity} and {q2.polarity}): no mixed chains")
    sign = -1 if design["topology"] in ("emitter-follower+common-emitter", "common-emitter+emitter-follower") else 1
    for b1 in (q1.hfe_min, q1.hfe_max):
        for b2 in (q2.hfe_min, q2.hfe_max):
            for t in spec.temps_c:
                corner = f"hFE {b1:g}/{b2:g}, {t:g} °C"
                h, rin, ops, cirs = cascade(design, spec, drawer, b1, b2, t)
                g = float(h[0].real)
                if np.sign(g) != sign or abs(abs(g) / spec.gain - 1) > spec.gain_tol + 1e-9:
                    out.append(f"{corner}: gain {g:.4g} outside {spec.gain:g} ±{spec.gain_tol:.1%}")
                if rin < spec.rin_floor * (1 - 1e-9):
                    out.append(f"{corner}: Rin {rin:.4g} Ω below {spec.rin_floor:.4g} Ω")
                mag = np.abs(cascade(design, spec, drawer, b1, b2, t, SCAN_HZ)[0])
                below = np.nonzero(mag < abs(g) / np.sqrt(2))[0]
                f_low = 0.0 if not len(below) else SCAN_HZ[min(below[-1] + 1, len(SCAN_HZ) - 1)]
                if f_low > spec.low_cut_hz * 1.01:  # the scan's step (1 %) is the resolution here
                    out.append(f"{corner}: f_low about {f_low:.3g} Hz above {spec.low_cut_hz:g} Hz")
                # The passband a decade above the low cut-off holds the midband gain within 1 %
                # (optimizer/physics/lowcut.py's rule; common practice, no source), from the cascade.
                h10 = abs(complex(cascade(design, spec, drawer, b1, b2, t, [10.0 * spec.low_cut_hz])[0][0]))
                if h10 < 0.99 * abs(g) * (1 - 1e-9):
                    out.append(f"{corner}: gain a decade above the low cut-off {h10:.4g}, "
                               f"{1 - h10 / abs(g):.1%} below midband")
                supply = 0.0
                for cir, op in zip(cirs, ops, strict=True):
                    ic = float(q_currents(cir, op)[0])
                    vce = op["coll"] - op["emit"]
                    if vce < spec.min_vce_v or ic < 1e-6:
                        out.append(f"{corner}: a transistor at VCE {vce:.3g} V, IC {ic:.3g} A")
                    supply += sum((op[p.a] - op[p.b]) / p.value for p in cir.parts if p.kind == "R" and p.a == "vcc")
                    if ("coll", "vcc") in cir.shorts:
                        supply += ic
                if spec.max_supply_a is not None and supply > spec.max_supply_a * (1 + 1e-9):
                    out.append(f"{corner}: supply current {supply:.3g} A over {spec.max_supply_a:g} A")
    used = Counter()
    for u in design["uses"]:
        used[int(u["line"])] += int(u["qty"])
    counted = Counter()
    for part in design["parts"].values():
        if "network" in part:
            for leaf in network_tree.leaves(network_tree.from_json(part["network"],
                                                                   unit_key="ohms" if "ohms" in part else "farads")):
                counted[leaf.line] += 1
        else:
            counted[int(part["line"])] += 1
    if counted != used:
        out.append(f"uses {dict(used)} do not match the parts {dict(counted)}")
    for line, n in used.items():
        if drawer.part_at(line) is None or drawer.part_at(line).qty < n:
            out.append(f"line {line}: {n} taken, fewer in stock")
    return out


def chain_at(design: dict, spec, drawer, bf1, bf2, temp_c=27.0):
    """The design as an optimizer.chain Chain at BF1, BF2 (values rebuilt from the drawer), the second
    transistor's model named apart so a deck can set each transistor's BF on its own."""
    from optimizer.chain.circuit import Chain

    (k1, r1, c1, q1), (k2, r2, c2, q2) = stages_of(design, spec, drawer)
    s1 = Stage(k1, r1, c1, spec.supply_v, spec.source_ohms, float("inf"), transistor_of(q1).with_beta(bf1), temp_c)
    t2 = replace(transistor_of(q2).with_beta(bf2), name="second")
    return Chain(design["topology"], s1, Stage(k2, r2, c2, spec.supply_v, 0.0, spec.load_ohms, t2, temp_c))
