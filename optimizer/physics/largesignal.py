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

from optimizer import kinds
from optimizer.physics.bias import Network, solve_operating_point


def held_network(topology, r, *, supply_v, source_ohms, load_ohms, op, emf_v, bypassed=True) -> Network:
    """The network the transistor sees with the source at EMF `emf_v` (V) and the capacitors held.

    op: the DC operating point (a `screen` result: vb, vc, ve, vn).  Ohms, volts;
    load_ohms may be inf.  Every argument broadcasts.  Each kind writes its own (`Kind.held_network`).
    """
    return kinds.get(topology).held_network(r, supply_v=supply_v, source_ohms=source_ohms, load_ohms=load_ohms,
                                            op=op, emf_v=emf_v, bypassed=bypassed)


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
    key = kinds.get(topology).output_key
    node = {"ve": ve, "vc": vc}[key] - flat_op[key]
    out = {"v_out": node, "vb": vb, "vc": vc, "ve": ve, "ic": dc["ic"], "ib": dc["ib"], "vce": vc - ve,
           "converged": dc["converged"]}
    return {k: np.reshape(v, shape) for k, v in out.items()}
