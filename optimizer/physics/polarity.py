"""PNP stages as the mirror of the NPN ones: the one place that knows a stage's polarity.

A PNP stage on a single positive supply, emitter side to +V, is the exact mirror of
the NPN stage with the same parts at the same positions.  With V' = VCC − V at every
node of the stage, the PNP circuit becomes the NPN circuit: R1 (base to 0 V) becomes
R1 from VCC' to the base, RC (collector to 0 V) RC from VCC', RE1/RE2 and CE (emitter
side to +V) run to 0', and the PNP's Gummel–Poon equations in (VEB, VCB) are the NPN's
in (VBE, VBC) with the same IS, BF, BR, VAF (SPICE evaluates a PNP that way: its BJT
model multiplies the junction voltages and terminal currents by a type factor, +1 NPN,
−1 PNP; from memory of the SPICE3 source, and tests/test_ngspice_pnp.py checks the
mirror against ngspice on real PNP circuits).

The source and the load stay on the real 0 V.  With CIN and COUT fitted they carry no
DC, and 0 V and +V are one node for the signal, so they see the same AC circuit in
both frames: gain, Rin, Rout, swing, THD magnitude, f_low and dissipation are the
mirror frame's.  What differs is kept here:
  * the DC node voltages shown (V = VCC − V' on the stage's nodes; the source and
    load nodes sit at 0 V in both frames);
  * the nodes of the real netlist (the stage's 0 and vcc swap; the surroundings stay);
  * the DC across CIN and COUT (base and collector/emitter to 0 V: VCC − V') and the
    way round CE goes (its + lead faces +V, not 0 V).
The physics modules (screen, circuit, bias, …) solve the mirror frame and never
ask for the polarity.  A PNP stage without CIN or COUT (source or load in the DC
circuit) is not a mirror and is refused.
"""

from __future__ import annotations

import numpy as np

NPN, PNP = "NPN", "PNP"
# Nodes of the surroundings (the source and the load): on the real 0 V in both frames.
SURROUNDING_NODES = ("src", "in", "out")
SWAP = {"0": "vcc", "vcc": "0"}


def is_pnp(transistor) -> bool:
    return str(getattr(transistor, "polarity", NPN) or NPN).upper() == PNP


def mirrored(stage) -> bool:
    """True when `stage` is solved in the mirror frame (a PNP stage)."""
    return is_pnp(stage.transistor)


def require_coupled(stage) -> None:
    """Refuse a PNP stage whose source or load is DC-coupled: it is not a mirror of an NPN stage."""
    if mirrored(stage):
        missing = [p for p in ("CIN", "COUT") if not stage.capacitors.get(p, 0.0) > 0]
        if missing:
            raise ValueError(f"a PNP stage needs {' and '.join(missing)}: drawerfit models PNP stages with the "
                             "source and load coupled through capacitors")


def real_node(node: str, pnp: bool) -> str:
    """The real circuit's name for a stage node of the mirror frame (0 and vcc swap for a PNP)."""
    return SWAP.get(node, node) if pnp else node


def node_volts(stage, op: dict, node: str) -> float:
    """Real DC voltage (V to 0 V) at circuit node `node` of the mirror-frame operating point `op`.

    `node` names the mirror frame's node; the source and load nodes are 0 V in both frames."""
    v = float(op[node])
    if not mirrored(stage) or node in SURROUNDING_NODES:
        return v
    return float(stage.supply_v) - v


def real_deck_names(stage, names: dict) -> dict:
    """circuit node → netlist node of the real circuit: a PNP stage's 0 and vcc swap."""
    if not mirrored(stage):
        return names
    return {n: SWAP.get(m, m) for n, m in names.items()}


def part_nodes(stage, part, names: dict) -> tuple[str, str]:
    """The netlist nodes of one circuit part in the real circuit (the surroundings RS, RL keep theirs)."""
    a, b = names[part.a], names[part.b]
    if mirrored(stage) and part.name not in ("RS", "RL"):
        a, b = SWAP.get(a, a), SWAP.get(b, b)
    return a, b


def real_point(stage, point: dict) -> dict:
    """analysis' operating point in real polarity: node voltages to 0 V; VCE, VBE and the currents
    stay magnitudes (VEC, VEB and the current out of the collector for a PNP), as every limit reads them."""
    if not mirrored(stage):
        return point
    vcc = float(stage.supply_v)
    out = dict(point)
    for k in ("vb", "ve", "vc", "vmid"):
        if k in out:
            out[k] = vcc - float(out[k])
    out["polarity"] = PNP
    return out


def real_predicted(stage, predicted: dict) -> dict:
    """The predicted figures with VB, VE, VC in real polarity (the rest is the same in both frames)."""
    if not mirrored(stage):
        return predicted
    vcc = float(stage.supply_v)
    return {k: (vcc - float(v) if k in ("vb", "ve", "vc") and v is not None else v) for k, v in predicted.items()}


def real_approximations(stage, approx: dict) -> dict:
    if not mirrored(stage) or "vb_thevenin" not in approx:
        return approx
    return {**approx, "vb_thevenin": float(stage.supply_v) - float(approx["vb_thevenin"])}


def capacitor_volts(volts: dict, transistor, supply_v) -> dict:
    """DC across each capacitor (V), positive when the first-named side is higher, in real polarity.

    volts: the mirror frame's {"CIN": VB', "COUT": VC' (VE' for a follower), "CE": VN'}.  For a PNP,
    CIN and COUT run from the stage (VCC − V') to the source or load at 0 V, and CE from the
    RE1–RE2 junction up to +V, so its junction side is the lower one (−VN')."""
    if not is_pnp(transistor):
        return volts
    out = {}
    for p, v in volts.items():
        out[p] = -np.asarray(v, dtype=float) if p == "CE" else supply_v - np.asarray(v, dtype=float)
    return out


def ce_return(transistor) -> str:
    """Where CE's other lead goes: 0 V for an NPN stage, the +V rail for a PNP stage."""
    return "the supply (+V)" if is_pnp(transistor) else "ground"


def row_volts(rows: dict, volts):
    """Screened rows' mirror-frame DC node voltages `volts` (V) in real polarity.

    rows: one row (dict of scalars) or n rows (dict of (n,) columns); volts: that row's value(s) or
    arrays whose last axis is the n rows.  Rows carry `mirror_v`: the supply for PNP rows, absent,
    None or 0 for NPN rows."""
    vcc = rows.get("mirror_v")
    if vcc is None:
        return np.asarray(volts, dtype=float)
    vcc = np.asarray(vcc, dtype=float)
    return np.where(vcc != 0, vcc - volts, volts)


def mirror_column(transistor, supply_v, n: int) -> np.ndarray:
    """The `mirror_v` column of n screened rows: the supply for a PNP line, 0 for an NPN line."""
    return np.full(n, float(supply_v) if is_pnp(transistor) else 0.0)


def real_corners(corners: dict, supply_v, pnp: bool) -> dict:
    """result.corners_json's per-corner VB, VE, VC in real polarity."""
    if not pnp:
        return corners
    return {c: {**d, **{k: float(supply_v) - float(d[k]) for k in ("vb", "ve", "vc") if k in d}}
            for c, d in corners.items()}
