"""Midband large signal: the stage with its capacitors held at their DC charge, vectorised.

Midband, CIN, COUT and CE are too big to move in one signal period, so each is
a battery at its DC voltage: CIN at VB (the source sits at 0 V DC), COUT at VC
(VE for the follower; the load sits at 0 V DC), CE at the RE1–RE2 node's VN.
With those batteries the transistor again sees a linear network, so the same
Newton solve (`bias.solve_operating_point`) gives the whole transfer curve —
output at the load against the source EMF — for arrays of EMF values at once.
The distortion analysis and the swing checks read it.
"""

from __future__ import annotations

import numpy as np

from .bias import Network, solve_operating_point, thevenin
from .stage import COLLECTOR_FEEDBACK, EMITTER_FOLLOWER


def _combine(v1, r1, v2, r2):
    """Thevenin (V, Ω) of two sources (v1 behind r1, v2 behind r2) joined at one node; r2 may be 0."""
    return (v1 * r2 + v2 * r1) / (r1 + r2), r1 * r2 / (r1 + r2)


def held_network(topology, r, *, supply_v, source_ohms, load_ohms, op, emf_v, bypassed=True) -> Network:
    """The network the transistor sees with the source at EMF `emf_v` (V) and the capacitors held.

    op: the DC operating point (a `screen` result: vb, vc, ve, vn).  Ohms, volts;
    load_ohms may be inf.  Every argument broadcasts.
    """
    v_src = emf_v + op["vb"]  # the source side of CIN, shifted by its charge
    g_l = 1.0 / np.asarray(load_ohms, dtype=float)
    zero = 0.0 * v_src
    follower = topology == EMITTER_FOLLOWER
    if follower:
        e0 = op["ve"] * g_l / (1.0 / r["RE"] + g_l)
        re = 1.0 / (1.0 / r["RE"] + g_l)
    elif bypassed:
        e0, re = op["vn"] + zero, r.get("RE1", 0.0) + zero
    else:
        e0, re = zero, r.get("RE1", 0.0) + r.get("RE2", 0.0) + zero
    if follower:
        c0, rcc = supply_v + zero, zero
    else:
        g_c = 1.0 / r["RC"] + g_l
        c0, rcc = (supply_v / r["RC"] + op["vc"] * g_l) / g_c, 1.0 / g_c
    if topology != COLLECTOR_FEEDBACK:
        vth, rth = thevenin(supply_v, r["R1"], r["R2"])
        b0, rbb = _combine(vth, rth, v_src, source_ohms)
        return Network(b0, rbb, zero, c0 + zero, zero, rcc, e0, re)
    # Collector feedback: base and collector joined by RB; written with RS (not 1/RS) so RS = 0 works.
    rs, g_f, g_c = source_ohms, 1.0 / r["RB"], 1.0 / rcc
    det = g_c + g_f + g_f * g_c * rs
    return Network(
        b0=(g_f * g_c * c0 * rs + (g_c + g_f) * v_src) / det,
        rbb=(g_c + g_f) * rs / det,
        rbc=g_f * rs / det,
        c0=(g_f * v_src + (g_f * rs + 1.0) * g_c * c0) / det,
        rcb=g_f * rs / det,
        rcc=(g_f * rs + 1.0) / det,
        e0=e0,
        re=re,
    )


def transfer(topology, r, *, transistor, supply_v, source_ohms, load_ohms, op, emf_v, temp_c=27.0,
             bypassed=True) -> dict[str, np.ndarray]:
    """Load voltage (V, relative to 0 V DC) and the transistor's state for each source EMF in `emf_v`.

    Returns v_out, vb, vc, ve, ic, ib, vce, converged (arrays of emf_v's broadcast shape).
    One stage per call; emf_v may be any array (a sweep, or samples of a sine).
    """
    emf = np.asarray(emf_v, dtype=float)
    shape = emf.shape
    flat_r = {k: float(v) for k, v in r.items()}
    flat_op = {k: float(op[k]) for k in ("vb", "vc", "ve", "vn")}
    net = held_network(topology, flat_r, supply_v=supply_v, source_ohms=source_ohms, load_ohms=load_ohms,
                       op=flat_op, emf_v=emf.ravel(), bypassed=bypassed)
    is_a, bf, br, vt = (float(x) for x in transistor.at(temp_c))
    n = emf.size
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        dc = solve_operating_point(Network(*(np.broadcast_to(x, (n,)) for x in net)),
                                   np.full(n, is_a), np.full(n, bf), np.full(n, br), transistor.vaf_v, np.full(n, vt))
    vb, vc, ve = net.voltages(dc["ib"], dc["ic"])
    node = ve - flat_op["ve"] if topology == EMITTER_FOLLOWER else vc - flat_op["vc"]
    out = {"v_out": node, "vb": vb, "vc": vc, "ve": ve, "ic": dc["ic"], "ib": dc["ib"], "vce": vc - ve,
           "converged": dc["converged"]}
    return {k: np.reshape(v, shape) for k, v in out.items()}
