"""The fast stage model: every candidate's bias, small signal, swing and dissipation at once.

`screen` broadcasts over numpy arrays of resistor values (and supply, source,
load, temperature, β, IS) and returns a dict of arrays of the broadcast shape;
scalar inputs give 0-d arrays.  NPN on a single positive supply (a PNP stage is solved as its NPN
mirror, polarity.py: node voltages are then the mirror frame's VCC − V); the physics
lives in `bias`, `smallsignal` and `swing`, this module only wires it up.

Flags (common practice, no source): `saturated` when VCE < VCE(sat) = 0.2 V;
`cutoff` when IC < 1 µA; `converged` when the Newton solve met |ΔV| < 1e-9 V.
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np

from optimizer.physics import bias, smallsignal, swing
from optimizer import kinds
from optimizer.physics.transistor import Transistor

CUTOFF_A = 1e-6  # common practice, no source: below 1 µA the stage is not amplifying
CHUNK = 32768  # candidates per pass


def required_positions(topology: str) -> tuple[str, ...]:
    return kinds.get(topology).required


def _flat_inputs(topology, r, extra):
    positions = kinds.get(topology).resistors
    missing = [p for p in required_positions(topology) if p not in r]
    if missing:
        raise ValueError(f"{topology}: no value for {', '.join(missing)}")
    unknown = [p for p in r if p not in positions]
    if unknown:
        raise ValueError(f"{topology}: no position {', '.join(unknown)} (expected {', '.join(positions)})")
    arrays = {p: np.asarray(r.get(p, 0.0), dtype=float) for p in positions}
    arrays.update({k: np.asarray(v, dtype=float) for k, v in extra.items()})
    shape = np.broadcast_shapes(*(a.shape for a in arrays.values()))
    # Single values stay scalars (numpy broadcasts them for free); the rest become 1-D.
    flat = {k: (a.reshape(()) if a.size == 1 else np.broadcast_to(a, shape).ravel()) for k, a in arrays.items()}
    return shape, flat


def screen(
    topology: str,
    r: Mapping[str, np.ndarray | float],
    *,
    transistor: Transistor,
    supply_v,
    source_ohms,
    load_ohms,
    temp_c=27.0,
    beta=None,
    is_a=None,
    bypassed=True,
) -> dict[str, np.ndarray]:
    """Bias, midband small signal, swing and dissipation of every candidate.

    r: position → ohms (arrays broadcast together; an absent RE1/RE2 is 0.0 or
    missing).  supply_v (V), source_ohms, load_ohms (Ω, inf = unloaded),
    temp_c (°C), beta (BF at 27 °C, overrides transistor.bf), is_a (IS at 27 °C,
    A, overrides transistor.is_a) and bypassed (CE fitted across RE2) may all be
    arrays.  Temperature laws are the transistor model's own.

    Returns (SI units): vb ve vc vn vce vbe ic ib ie i_supply (DC; vn is the
    RE1–RE2 node), saturated cutoff converged (bool), iterations (0-d int: the
    most Newton steps any candidate took),
    gm gpi gmu go re_prime ro (S, Ω), gain rin rout (midband; gain signed from
    the source EMF to the load), gain_textbook rin_textbook rout_textbook,
    swing_up swing_down swing_pp (V at the load), p_<position> and p_q (W).
    """
    # The model at temperature, before broadcasting (usually one temperature for all).
    is_t, bf_t, br_t, vt = transistor.at(temp_c)
    if is_a is not None:
        is_t = is_t * (np.asarray(is_a, dtype=float) / transistor.is_a)
    if beta is not None:
        bf_t = bf_t * (np.asarray(beta, dtype=float) / transistor.bf)
    extra = {"supply": supply_v, "rs": source_ohms, "rl": load_ohms, "bypassed": bypassed,
             "is_t": is_t, "bf_t": bf_t, "br_t": br_t, "vt": vt}
    shape, f = _flat_inputs(topology, r, extra)
    size = int(np.prod(shape))
    out, iterations = {}, 0
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        # Chunks small enough to stay in cache run about twice as fast as one pass.
        for lo in range(0, max(size, 1), CHUNK):
            m = min(CHUNK, size - lo)
            chunk = {k: (v[lo:lo + m] if v.ndim else v) for k, v in f.items()}
            part = _screen_flat(topology, chunk, transistor, m)
            iterations = max(iterations, part.pop("iterations"))
            for k, v in part.items():
                if size <= CHUNK:
                    out[k] = v if np.shape(v) == (m,) else np.array(np.broadcast_to(v, (m,)))
                else:
                    out.setdefault(k, np.empty(size, dtype=np.asarray(v).dtype))[lo:lo + m] = v
    out = {k: v.reshape(shape) for k, v in out.items()}
    out["iterations"] = np.asarray(iterations)
    return out


def _screen_flat(topology, f, q, n):
    """One chunk of n candidates; entries of f are length-n arrays or scalars."""
    kind = kinds.get(topology)
    vcc = np.broadcast_to(f["supply"], (n,))
    is_t, bf_t, br_t, vt = f["is_t"], f["bf_t"], f["br_t"], f["vt"]  # scalars when shared
    net = kind.bias_network(f, vcc)
    dc = bias.solve_operating_point(net, is_t, bf_t, br_t, q.vaf_v, vt)
    ic, ib = dc["ic"], dc["ib"]
    ie = ic + ib
    vb, vc, ve = net.voltages(ib, ic)
    ac = kind.ac_terms(f, net, f["bypassed"] > 0)
    out = {"vb": vb, "ve": ve, "vc": vc, "vn": ie * ac["re2"], "vce": vc - ve, "vbe": dc["vbe"],
           "ic": ic, "ib": ib, "ie": ie, "converged": dc["converged"],
           "iterations": dc["iterations"]}
    out["saturated"] = out["vce"] < swing.VCE_SAT_V
    out["cutoff"] = ic < CUTOFF_A
    out["i_supply"] = kind.supply_current(f, vcc, vb, ic, ib)

    # Small signal at the operating point, exact derivatives of the same model.
    y = bias.junction_derivatives(dc["vbe"], dc["vbc"], is_t, bf_t, br_t, q.vaf_v, vt)
    gm, gpi, gmu, go = smallsignal.hybrid_pi(*y)
    out.update(gm=gm, gpi=gpi, gmu=gmu, go=go, re_prime=vt / ic, ro=1.0 / go)
    rc, re_ac, r_bias, rb = ac["rc"], ac["re_ac"], ac["r_bias"], ac["rb"]
    g = smallsignal.conductance
    ss = smallsignal.midband(
        y, g_source=g(f["rs"]), g_bias=1.0 / r_bias, g_feedback=1.0 / rb,
        g_collector=g(rc), g_emitter=g(re_ac), g_load=1.0 / f["rl"], output=kind.output)
    out.update(gain=ss["gain"], rin=ss["rin"], rout=ss["rout"])
    tb = kind.textbook(re_prime=out["re_prime"], beta=ic / ib, r_bias=r_bias,
                       re_ac=re_ac, rc=rc, rb=rb, rl=f["rl"], rs=f["rs"])
    out.update(gain_textbook=tb[0], rin_textbook=tb[1], rout_textbook=tb[2])

    # Swing along the AC load line.
    up, down = kind.swing(f, ic=ic, ie=ie, vce=out["vce"], vc=vc, vcc=vcc, rl=f["rl"], re_ac=re_ac,
                          a_bc=ss.get("gain_base_to_collector"))
    out.update(swing_up=up, swing_down=down, swing_pp=2.0 * np.minimum(up, down))
    out.update(dissipation(topology, f, vcc=vcc, vb=vb, vc=vc, ie=ie, ic=ic, ib=ib,
                           vce=out["vce"], vbe=dc["vbe"]))
    return out


def dissipation(topology, r, *, vcc, vb, vc, ie, ic, ib, vce, vbe):
    """p_<position> for each resistor and p_q = VCE·IC + VBE·IB for the transistor (W)."""
    p = {"p_q": vce * ic + vbe * ib}
    p.update(kinds.get(topology).dissipation(r, vcc=vcc, vb=vb, vc=vc, ie=ie, ic=ic, ib=ib))
    return p
