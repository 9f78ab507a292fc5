"""Midband small signal at the operating point: hybrid-π and the closed-form nodal solve.

Midband means coupling and bypass capacitors are short circuits for the signal.
The transistor enters with the exact derivatives of the DC model
(`bias.junction_derivatives`), so gain, rin and rout are those of the same
equations ngspice linearises, not of the 25 mV/IC rule.

The signal circuit has three nodes, base b, collector c and emitter e, each with
a conductance to signal ground (Gb, Gc, Ge) and a feedback conductance Gf from
collector to base.  A short is a conductance of `SHORT_S`; its error in gain is
of the order gm/SHORT_S (~1e-10).  The 3×3 system is solved by cofactors,
element-wise over the candidate arrays (no per-candidate linear algebra).
"""

from __future__ import annotations

import numpy as np

from optimizer import kinds

SHORT_S = 1e9  # S, an ideal short (absent emitter resistor, RS = 0, collector at the supply)


def conductance(ohms):
    """1/R in siemens with R = 0 treated as a short (`SHORT_S`) and R = inf as open."""
    ohms = np.asarray(ohms, dtype=float)
    return 1.0 / np.maximum(ohms, 1.0 / SHORT_S)


def hybrid_pi(y11, y12, y21, y22):
    """(gm, gπ, gμ, go) in S from the terminal y-parameters.

    Hybrid-π convention: ib = gπ·vbe + gμ·vbc, ic = gm·vbe + go·vce − gμ·vbc,
    so gπ = ∂IB/∂VBE, gμ = ∂IB/∂VBC, go = −(∂IC/∂VBC + gμ), gm = ∂IC/∂VBE − go.
    """
    go = -(y22 + y12)
    return y21 - go, y11, y12, go


def _matrix(y, gb, gf, gc, ge):
    """Nodal admittance rows (b, c, e) × columns (vb, vc, ve) with the transistor stamped in."""
    y11, y12, y21, y22 = y
    a = ((gb + gf + y11 + y12, -gf - y12, -y11),
         (-gf + y21 + y22, gc + gf - y22, -y21),
         (-(y11 + y12 + y21 + y22), y12 + y22, ge + y11 + y21))
    return a


def _det(a):
    (p, q, r), (s, t, u), (v, w, x) = a
    return p * (t * x - u * w) - q * (s * x - u * v) + r * (s * w - t * v)


def _cofactor(a, i, j):
    rows = [k for k in range(3) if k != i]
    cols = [k for k in range(3) if k != j]
    m = a[rows[0]][cols[0]] * a[rows[1]][cols[1]] - a[rows[0]][cols[1]] * a[rows[1]][cols[0]]
    return m if (i + j) % 2 == 0 else -m


def midband(y, *, g_source, g_bias, g_feedback, g_collector, g_emitter, g_load, output):
    """Midband gain, rin, rout (and base-to-collector gain) from conductances in S.

    y: (y11, y12, y21, y22) of the transistor; g_source = 1/RS; g_bias: base to
    signal ground (1/(R1‖R2), 0 for collector feedback); g_feedback = 1/RB;
    g_collector, g_emitter: the stage's own resistors to signal ground at c and e
    (RC, the unbypassed emitter resistance); g_load = 1/RL, connected at `output`
    ("c" or "e").

    gain: v_out / EMF, RS and RL included (signed); rin: what the source sees
    looking into CIN (RL connected); rout: looking back into COUT with RL removed
    and the source EMF at zero (RS connected).

    One matrix A0 (no source, no load) serves all three: adding a conductance δ
    on diagonal i changes det by δ·C_ii, and C_ii by δ·a_kk (k the third node),
    while the off-diagonal cofactor C_bo does not contain either diagonal.
    """
    o = {"c": 1, "e": 2}[output]
    a = _matrix(y, g_bias, g_feedback, g_collector, g_emitter)
    det0, c_bb, c_oo, c_bo, a_kk = _terms(a, o)
    gs, gl = g_source, g_load
    det_full = det0 + gs * c_bb + gl * c_oo + gs * gl * a_kk
    gain = gs * c_bo / det_full
    rin = (c_bb + gl * a_kk) / (det0 + gl * c_oo)
    rout = (c_oo + gs * a_kk) / (det0 + gs * c_bb)
    # Base-to-collector gain vc/vb with the source driving the base (collector output only).
    a_bc = _cofactor(a, 0, 1) / (c_bb + gl * a_kk) if o == 1 else np.nan
    return {"gain": gain, "rin": rin, "rout": rout, "gain_base_to_collector": a_bc}


def _terms(a, o):
    k = 3 - o  # the node that is neither base nor output
    return _det(a), _cofactor(a, 0, 0), _cofactor(a, o, o), _cofactor(a, 0, o), a[k][k]


def source_load_terms(y, *, g_bias, g_feedback, g_collector, g_emitter, output):
    """(det0, C_bb, C_oo, C_bo, a_kk) of the stage without source and load (see `midband`).

    With them the gain for any source and load conductances gs, gl is
    gs·C_bo / (det0 + gs·C_bb + gl·C_oo + gs·gl·a_kk): a few products, so a
    search over coupling capacitors (which enter only gs and gl) needs one solve
    per emitter conductance, not one per combination.
    """
    a = _matrix(y, g_bias, g_feedback, g_collector, g_emitter)
    return _terms(a, {"c": 1, "e": 2}[output])


def parallel(*ohms):
    """R1‖R2‖… in ohms (inf entries drop out)."""
    return 1.0 / sum(1.0 / np.asarray(r, dtype=float) for r in ohms)


def textbook(topology, *, re_prime, beta, r_bias, re_ac, rc, rb, rl, rs):
    """The textbook estimates (gain, rin, rout) a build sheet explains with (Ω, dimensionless):
    each kind's own hand formulas (`Kind.textbook`, quoted in its module).
    Gains are from the base to the load (the source divider is not included).
    """
    return kinds.get(topology).textbook(re_prime=re_prime, beta=beta, r_bias=r_bias, re_ac=re_ac, rc=rc, rb=rb,
                                        rl=rl, rs=rs)
