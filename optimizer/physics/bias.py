"""The exact DC operating point of one NPN in a linear network, vectorised over candidates.

The transistor sees a linear network, so once its base and collector currents
are known every node voltage follows linearly:

    VB = b0 − rbb·IB − rbc·IC,   VC = c0 − rcb·IB − rcc·IC,   VE = e0 + re·(IB + IC)

(volts, ohms, amperes).  `Network` holds those coefficients per candidate; the
same Newton solve then serves the bias circuit (capacitors open) and the
large-signal circuit with the capacitors held at their DC charge.  The
unknowns are the junction voltages VBE and VBC, where the exponentials live,
and each Newton step is limited the way SPICE limits a pn junction (pnjlim),
so saturated and cut-off candidates converge as well as active ones.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from optimizer import kinds
from optimizer.physics.transistor import terminal_currents

TOLERANCE_V = 1e-9  # Newton stops when both junction steps are below this
MAX_ITERATIONS = 200
GUESS_STEPS = 5  # Newton steps of the forward-active estimate
SAT_PASSES = 3  # extra fixed-point passes of the saturated estimate


class Network(NamedTuple):
    """Coefficients of the node voltages in IB and IC (V, Ω); arrays of one shape."""

    b0: np.ndarray
    rbb: np.ndarray
    rbc: np.ndarray
    c0: np.ndarray
    rcb: np.ndarray
    rcc: np.ndarray
    e0: np.ndarray
    re: np.ndarray

    def voltages(self, ib, ic):
        """(VB, VC, VE) in volts for base and collector currents `ib`, `ic` (A)."""
        vb = self.b0 - self.rbb * ib - self.rbc * ic
        vc = self.c0 - self.rcb * ib - self.rcc * ic
        ve = self.e0 + self.re * (ib + ic)
        return vb, vc, ve


def thevenin(v_top, r_top, r_bottom):
    """Open-circuit voltage (V) and source resistance (Ω) of a divider from `v_top` to ground.

    VTH = V·R2/(R1 + R2), RTH = R1‖R2; `r_bottom` = inf (no lower resistor) gives (V, R1).
    """
    g1, g2 = 1.0 / r_top, 1.0 / r_bottom
    return v_top * g1 / (g1 + g2), 1.0 / (g1 + g2)


def bias_network(topology, r, supply_v) -> Network:
    """The DC network (capacitors open) of `topology`; `r` maps position → ohms arrays (`Kind.bias_network`)."""
    return kinds.get(topology).bias_network(r, supply_v)


def junction_derivatives(vbe, vbc, is_a, bf, br, vaf_v, vt_v):
    """The y-parameters of `terminal_currents` (S): dIB/dVBE, dIB/dVBC, dIC/dVBE, dIC/dVBC.

    Exact derivatives of the same equations: with gbe = IS·e^(VBE/Vt)/Vt,
    gbc = IS·e^(VBC/Vt)/Vt and 1/qb = 1 − VBC/VAF,
    dIB/dVBE = gbe/BF, dIB/dVBC = gbc/BR, dIC/dVBE = gbe/qb,
    dIC/dVBC = −gbc/qb − (IBE − IBC)/VAF − gbc/BR.
    """
    ebe = np.exp(vbe / vt_v)
    ebc = np.exp(vbc / vt_v)
    gbe = is_a * ebe / vt_v
    gbc = is_a * ebc / vt_v
    inv_qb = 1.0 - vbc / vaf_v
    y11 = gbe / bf
    y12 = gbc / br
    y21 = gbe * inv_qb
    y22 = -gbc * inv_qb - is_a * (ebe - ebc) / vaf_v - gbc / br
    return y11, y12, y21, y22


def _model_step(vbe, vbc, k):
    """Currents and y-parameters in one pass, sharing the two exponentials (Newton's inner loop).

    The same equations as `terminal_currents` and `junction_derivatives`; k holds
    per-candidate 1/Vt, IS, IS/Vt, 1/BF, 1/BR and the scalar or array 1/VAF.
    """
    inv_vt, is_a, is_vt, inv_bf, inv_br, inv_vaf = k
    ebe = np.exp(vbe * inv_vt)
    ebc = np.exp(vbc * inv_vt)
    ibe = is_a * (ebe - 1.0)
    ibc = is_a * (ebc - 1.0)
    inv_qb = 1.0 - vbc * inv_vaf
    diff = ibe - ibc
    ibc_r = ibc * inv_br
    ic = diff * inv_qb - ibc_r
    ib = ibe * inv_bf + ibc_r
    gbe = is_vt * ebe
    gbc = is_vt * ebc
    y12 = gbc * inv_br
    y22 = -gbc * inv_qb - diff * inv_vaf - y12
    return ic, ib, gbe * inv_bf, y12, gbe * inv_qb, y22


def _limit_junction(v_new, v_old, vt, vcrit):
    """SPICE's pnjlim for steps already known to be large (above vcrit, more than 2·Vt): move logarithmically."""
    arg = 1.0 + (v_new - v_old) / vt
    from_pos = np.where(arg > 0, v_old + vt * np.log(np.where(arg > 0, arg, 1.0)), vcrit)
    from_neg = vt * np.log(np.maximum(v_new, vt) / vt)
    return np.where(v_old > 0, from_pos, from_neg)


def _take(x, k):
    """x[k] for per-candidate arrays; scalars (one value for all candidates) pass through."""
    return x[k] if np.ndim(x) else x


def _initial_guess(a0, ab, ac, d0, db, dc, is_a, bf, br, vaf_v, vt):
    """Start close enough that most candidates settle in Newton's first step.

    Forward active (BC junction reverse biased, Early effect kept): with
    E = IS·e^(VBE/Vt), f1 becomes a0 − VBE − R(E)·E = 0, solved by a few Newton
    steps in ln E from above, where it converges monotonically.  Candidates
    that this puts below VCE = 0.25 V are started as saturated instead: from
    VCE = 0.1 V and VBE as found, IB and IC follow linearly and the transport
    equations give the two junction voltages, repeated `SAT_PASSES` times.
    """
    ln_is = np.log(is_a)
    vbc = np.minimum(d0, 0.0)
    r = ab / bf + ac * (1.0 - vbc / vaf_v)
    # Both are upper bounds of ln E (r·E ≤ a0, and VBE ≤ a0); the second is exact when r = 0.
    w = np.minimum(np.log(np.maximum(a0, 1e-3) / r), ln_is + a0 / vt)
    # With the BC junction reverse biased (IBC = −IS) the forward-active model is exact:
    # IB = E/BF − IS/BF − IS/BR and IC = E·q + IS/BR, the IS terms folded into a0 and d0;
    # the Early factor q = 1 − VBC/VAF is solved with VBC, q = (A + B·E)/(1 − C·E), and
    # its slope enters the step, so Newton stays quadratic.
    ab_bf, db_bf, inv_vaf = ab / bf, db / bf, 1.0 / vaf_v
    a0x = a0 + is_a * (ab_bf + (ab - ac) / br) + vt * ln_is
    d0x = d0 + is_a * (db_bf + (db - dc) / br)
    # dc = rbc − rcc ≤ 0 in a passive network; clamped so 1 − C·E never reaches 0.
    qa, qb, qc = 1.0 - d0x * inv_vaf, db_bf * inv_vaf, np.minimum(dc, 0.0) * inv_vaf
    ac_qd = ac * (qb + qa * qc)
    for step in range(GUESS_STEPS + 1):  # in place where it spares a temporary
        e = np.exp(w)
        den = qc * e
        np.subtract(1.0, den, out=den)
        np.divide(1.0, den, out=den)
        q = qb * e
        q += qa
        q *= den
        active = q > 1.0  # VBC < 0; beyond that (saturation) no Early effect, as before
        np.maximum(q, 1.0, out=q)
        if step == GUESS_STEPS:
            break
        r = ac * q
        r += ab_bf
        slope = ac_qd * e
        slope *= den
        slope *= den
        slope *= active
        slope += r
        slope *= e
        slope += vt
        f = vt * w
        np.subtract(a0x, f, out=f)
        r *= e
        f -= r
        f /= slope
        w = w + f
    vbe = vt * (w - ln_is)
    vbc = d0x - (db_bf + dc * q) * e
    sat = vbe - vbc < 0.25
    if np.any(sat):
        k = np.flatnonzero(sat)
        ab_, ac_, a0_, bf_, br_, is_, vt_, iv_ = (_take(x, k) for x in (ab, ac, a0, bf, br, is_a, vt, inv_vaf))
        mb, mc = ab_ - db[k], ac_ - dc[k]
        inv_det = 1.0 / (ab_ * mc - ac_ * mb)
        s_k = a0_ - d0[k]
        be, bc = vbe[k], vbe[k] - 0.1
        # Fixed point: junction voltages → IB, IC (linear) → junction voltages (transport
        # equations, Early factor at the last VBC); each pass shrinks the error about
        # Vt/(I·R)-fold, so a few passes leave Newton one or two steps.
        for _ in range(1 + SAT_PASSES):
            s0 = s_k - (be - bc)
            p0 = a0_ - be
            ib = (p0 * mc - ac_ * s0) * inv_det
            ic = (ab_ * s0 - mb * p0) * inv_det
            q = 1.0 - bc * iv_
            ibc = (q * bf_ * ib - ic) / (q * bf_ / br_ + q + 1.0 / br_)
            ibe = bf_ * (ib - ibc / br_)
            ok = (ibc > 0) & (ibe > 0)
            be = np.where(ok, vt_ * np.log(np.where(ok, ibe, 1.0) / is_ + 1.0), be)
            bc = np.where(ok, vt_ * np.log(np.where(ok, ibc, 1.0) / is_ + 1.0), bc)
        vbe[k], vbc[k] = be, bc
    return vbe, vbc


def solve_operating_point(net: Network, is_a, bf, br, vaf_v, vt_v, guess=None):
    """Newton solve of the junction voltages; returns dict of 1-D arrays.

    Inputs are 1-D arrays of one length n or scalars (one value for every candidate).
    guess: optional (vbe, vbc) arrays (V) to start from instead of the forward-active estimate,
    e.g. the quiescent point when solving the same stage along a signal swing.
    Keys: vbe, vbc, ic, ib (V, A), converged (bool), iterations (int, the most any candidate used).
    f1 = VB − VE − VBE = 0 and f2 = VB − VC − VBC = 0 are solved jointly; the
    reported currents are `terminal_currents` at the converged junction voltages.
    """
    shape = np.broadcast_shapes(*(np.shape(x) for x in (*net, is_a, bf, br, vt_v)))
    n = shape[0] if shape else 1
    a0, ab, ac, d0, db, dc = (np.broadcast_to(x, (n,)) for x in (
        net.b0 - net.e0, net.rbb + net.re, net.rbc + net.re, net.b0 - net.c0, net.rbb - net.rcb, net.rbc - net.rcc))
    if guess is None:
        vbe, vbc = _initial_guess(a0, ab, ac, d0, db, dc, is_a, bf, br, vaf_v, vt_v)
    else:
        vbe, vbc = (np.array(np.broadcast_to(np.asarray(g, dtype=float), (n,))) for g in guess)
    two_vt = 2.0 * float(np.min(vt_v)) if n else 0.0
    converged = np.zeros(n, dtype=bool)
    idx = np.arange(n)
    inv_vaf = 1.0 / np.asarray(vaf_v, dtype=float)
    # Per-candidate constants, compacted along with the iterates as candidates settle.
    per = [a0, ab, ac, d0, db, dc, 1.0 / vt_v, is_a, is_a / vt_v, 1.0 / bf, 1.0 / br, inv_vaf]
    xbe, xbc = vbe.copy(), vbc.copy()
    iterations = 0
    while idx.size and iterations < MAX_ITERATIONS:
        iterations += 1
        a0_, ab_, ac_, d0_, db_, dc_ = per[:6]
        k = tuple(per[6:12])
        ic, ib, y11, y12, y21, y22 = _model_step(xbe, xbc, k)
        # In-place arithmetic (same operations, same order) to spare temporaries.
        f1 = a0_ - ab_ * ib
        f1 -= ac_ * ic
        f1 -= xbe
        f2 = d0_ - db_ * ib
        f2 -= dc_ * ic
        f2 -= xbc
        # J' = −(Jacobian of f1, f2): the step is J'^-1·f.
        j11 = ab_ * y11
        j11 += ac_ * y21
        j11 += 1.0
        j12 = ab_ * y12
        j12 += ac_ * y22
        j21 = db_ * y11
        j21 += dc_ * y21
        j22 = db_ * y12
        j22 += dc_ * y22
        j22 += 1.0
        det = j11 * j22
        det -= j12 * j21
        inv_det = np.divide(1.0, det, out=det)
        dbe = j22 * f1
        dbe -= j12 * f2
        dbe *= inv_det
        dbc = j11 * f2
        dbc -= j21 * f1
        dbc *= inv_det
        step = np.abs(dbe)
        np.maximum(step, np.abs(dbc), out=step)
        done = step < TOLERANCE_V
        new_be = np.add(xbe, dbe, out=dbe)
        new_bc = np.add(xbc, dbc, out=dbc)
        large = np.flatnonzero(step > two_vt)
        if large.size:  # only steps over 2·Vt can need limiting; few after the first ones
            g = idx[large]
            vt_g, is_g = _take(vt_v, g), _take(is_a, g)
            vcrit = vt_g * np.log(vt_g / (np.sqrt(2.0) * is_g))  # SPICE's critical voltage
            for new, old in ((new_be, xbe), (new_bc, xbc)):
                nl, ol = new[large], old[large]
                hit = (nl > vcrit) & (np.abs(nl - ol) > 2.0 * vt_g)
                if hit.any():
                    new[large[hit]] = _limit_junction(nl[hit], ol[hit], _take(vt_g, hit), _take(vcrit, hit))
        xbe, xbc = new_be, new_bc
        n_done = np.count_nonzero(done)
        if n_done:
            settled = idx[done]
            vbe[settled] = xbe[done]
            vbc[settled] = xbc[done]
            converged[settled] = True
            if n_done * 4 >= done.size:  # compact once a quarter have settled
                keep = ~done
                idx = idx[keep]
                per = [_take(a, keep) for a in per]
                xbe, xbc = xbe[keep], xbc[keep]
    if idx.size:  # leave the last iterate in place, flagged not converged
        live = ~converged[idx]
        vbe[idx[live]] = xbe[live]
        vbc[idx[live]] = xbc[live]
    ic, ib = terminal_currents(vbe, vbc, is_a, bf, br, vaf_v, vt_v)
    return {"vbe": vbe, "vbc": vbc, "ic": ic, "ib": ib, "converged": converged, "iterations": iterations}
