"""A small nodal solver for one stage: the exact DC point, small signal and large signal.

The stage becomes a list of two-terminal parts between named nodes plus one
NPN.  Ideal voltage constraints (the supply, the signal source, shorts for
absent parts, capacitors held at their DC charge) are "links" V(a) = V(b) + d;
nodes joined by links are solved as one unknown (a supernode), so the matrices
stay tiny (≤ 8×8) and every analysis is a batch of dense solves in numpy.

Node names (also used by the netlist): 0 ground, vcc supply, src source EMF,
in (after RS), base, emit, mid (between RE1 and RE2), coll, out (the load).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from optimizer.physics.stage import Stage
from optimizer.physics.transistor import terminal_currents
from optimizer.physics import polarity

NODES = ("0", "vcc", "src", "in", "base", "emit", "mid", "coll", "out")
# An unloaded output still needs a DC path; the netlist uses the same stand-in.
from optimizer.spec import OPEN_LOAD_OHMS  # noqa: E402,F401  one stand-in for "no load"


@dataclass(frozen=True)
class Part:
    """A resistor ("R", ohms) or capacitor ("C", farads) between nodes a and b."""

    name: str
    kind: str
    a: str
    b: str
    value: float


@dataclass(frozen=True)
class Circuit:
    parts: tuple[Part, ...]
    shorts: tuple[tuple[str, str], ...]  # absent parts: the two nodes are one
    q: tuple[str, str, str]  # collector, base, emitter node of Q1
    supply_v: float
    model: tuple  # (IS, BF, BR, VAF, Vt) at the stage temperature


def missing_positions(stage: Stage) -> list[str]:
    """Required resistor positions with no (positive) value."""
    return [p for p in stage.kind.required if not stage.r(p) > 0]


def build(stage: Stage) -> Circuit:
    """The circuit of `stage`.  Absent CIN/COUT couple directly (a short), absent CE leaves RE2 unbypassed."""
    missing = missing_positions(stage)
    if missing:
        raise ValueError(f"{stage.topology} needs {', '.join(missing)}")
    polarity.require_coupled(stage)  # a PNP stage is solved as its NPN mirror (polarity.py)
    parts, shorts = [], []

    def two(name, kind, a, b, value):
        if value and value > 0:
            parts.append(Part(name, kind, a, b, float(value)))
        elif kind == "R" or name in ("CIN", "COUT"):
            shorts.append((a, b))

    two("RS", "R", "src", "in", stage.source_ohms)
    two("CIN", "C", "in", "base", stage.capacitors.get("CIN", 0.0))
    kind = stage.kind
    two("COUT", "C", kind.output_node, "out", stage.capacitors.get("COUT", 0.0))
    load = stage.load_ohms if np.isfinite(stage.load_ohms) else OPEN_LOAD_OHMS
    two("RL", "R", "out", "0", load)
    kind.wire(stage, two, lambda a, b: shorts.append((a, b)))
    used = {n for p in parts for n in (p.a, p.b)} | {n for s in shorts for n in s} | {"coll", "base", "emit"}
    shorts += [(n, "0") for n in NODES if n not in used]  # e.g. "mid" of a follower: tie it down
    t = stage.transistor
    is_a, bf, br, vt = t.at(stage.temp_c)
    model = (float(is_a), float(bf), float(br), float(t.vaf_v), float(vt))
    return Circuit(tuple(parts), tuple(shorts), ("coll", "base", "emit"), float(stage.supply_v), model)


class Reduction:
    """Nodes tied by links, as V = P·u + offset with u the free supernode voltages.

    links: (a, b, d) meaning V(a) = V(b) + d; d may be an array (one value per batch row).
    Ground is always a root, so every node tied to it is fixed.
    """

    def __init__(self, links):
        parent = {n: (n, 0.0) for n in NODES}

        def find(n):  # (root, d) with V(n) = V(root) + d
            off = 0.0
            while parent[n][0] != n:
                n, off = parent[n][0], off + parent[n][1]
            return n, off

        for a, b, d in links:
            ra, oa = find(a)
            rb, ob = find(b)
            if ra == rb:
                continue
            if ra == "0":  # keep ground the root: V(rb) = V(ra) + oa − ob − d
                parent[rb] = (ra, oa - ob - d)
            else:  # V(ra) = V(rb) + ob + d − oa
                parent[ra] = (rb, ob + d - oa)
        roots = [find(n) for n in NODES]
        free = sorted({r for r, _ in roots if r != "0"}, key=NODES.index)
        self.index = {n: i for i, n in enumerate(NODES)}
        self.P = np.zeros((len(NODES), len(free)))
        for i, (r, _) in enumerate(roots):
            if r != "0":
                self.P[i, free.index(r)] = 1.0
        batch = np.broadcast_shapes(*[np.shape(o) for _, o in roots])
        self.offset = np.stack([np.broadcast_to(np.asarray(o, dtype=float), batch) for _, o in roots], axis=-1)


def admittance(circuit: Circuit, omega=None, skip=(), caps_short=False):
    """Node admittance matrix (S) of the passive parts; batch over `omega` (rad/s) if given."""
    n = len(NODES)
    idx = {name: i for i, name in enumerate(NODES)}
    w = np.atleast_1d(np.asarray(0.0 if omega is None else omega, dtype=float))
    y = np.zeros((w.size, n, n), dtype=complex if omega is not None else float)
    for p in circuit.parts:
        if p.name in skip or (p.kind == "C" and (omega is None or caps_short)):
            continue
        g = 1.0 / p.value if p.kind == "R" else 1j * w * p.value
        a, b = idx[p.a], idx[p.b]
        y[:, a, a] += g
        y[:, b, b] += g
        y[:, a, b] -= g
        y[:, b, a] -= g
    return y


def junction(circuit: Circuit, vbe, vbc):
    """Q1 currents and their partial derivatives: ic, ib, ∂ic/∂vbe, ∂ic/∂vbc, ∂ib/∂vbe, ∂ib/∂vbc (A, S)."""
    is_a, bf, br, vaf, vt = circuit.model
    ic, ib = terminal_currents(vbe, vbc, is_a, bf, br, vaf, vt)
    gbe = is_a / vt * np.exp(vbe / vt)
    gbc = is_a / vt * np.exp(vbc / vt)
    ibe, ibc = is_a * np.expm1(vbe / vt), is_a * np.expm1(vbc / vt)
    inv_qb = 1.0 - vbc / vaf
    return ic, ib, gbe * inv_qb, -gbc * inv_qb - (ibe - ibc) / vaf - gbc / br, gbe / bf, gbc / br


def device_matrix(circuit: Circuit, d_ic_be, d_ic_bc, d_ib_be, d_ib_bc):
    """Q1's node-level Jacobian ∂(current leaving each node into Q1)/∂V, shape (batch, n, n)."""
    idx = {name: i for i, name in enumerate(NODES)}
    c, b, e = (idx[x] for x in circuit.q)
    d_ic_be, d_ic_bc = np.atleast_1d(d_ic_be), np.atleast_1d(d_ic_bc)
    d_ib_be, d_ib_bc = np.atleast_1d(d_ib_be), np.atleast_1d(d_ib_bc)
    m = np.zeros((d_ic_be.size, len(NODES), len(NODES)))
    # vbe = Vb − Ve, vbc = Vb − Vc; the emitter current is −(ic + ib).
    for row, dbe, dbc in ((c, d_ic_be, d_ic_bc), (b, d_ib_be, d_ib_bc)):
        m[:, row, b] += dbe + dbc
        m[:, row, e] -= dbe
        m[:, row, c] -= dbc
    m[:, e, :] = -(m[:, c, :] + m[:, b, :])
    return m


def _pnjlim(vnew, vold, vt, vcrit):
    """SPICE's junction-voltage limiting: a step beyond 2·Vt above vcrit is taken logarithmically."""
    big = (vnew > vcrit) & (np.abs(vnew - vold) > 2 * vt)
    arg = 1.0 + (vnew - vold) / vt
    from_on = np.where(arg > 0, vold + vt * np.log(np.maximum(arg, 1e-300)), vcrit)
    from_off = vt * np.log(np.maximum(vnew, 1e-300) / vt)
    return np.where(big, np.where(vold > 0, from_on, from_off), vnew)


def solve_nonlinear(circuit: Circuit, links, guess=None, max_iter=300, tol_v=1e-10):
    """Node voltages (batch, n) with Q1 exact: Newton with SPICE junction limiting, vectorised over the batch.

    guess: node voltages (batch, n) to start from (continuation); default all 0.
    Returns (V, converged flags).
    """
    red = Reduction(links)
    P, off = red.P, np.atleast_2d(red.offset)
    y = admittance(circuit)[0]
    c, b, e = (NODES.index(x) for x in circuit.q)
    is_a, _, _, _, vt = circuit.model
    vcrit = vt * np.log(vt / (np.sqrt(2.0) * is_a))
    v = np.zeros(off.shape) if guess is None else np.broadcast_to(guess, off.shape).copy()
    # Junctions start where the guess had them; the node voltages then obey the links.
    vbe, vbc = v[:, b] - v[:, e], v[:, b] - v[:, c]
    u = (v - off) @ P / np.maximum(P.sum(axis=0), 1)
    v = u @ P.T + off
    with np.errstate(over="ignore", invalid="ignore"):  # a runaway shows as non-finite: not converged
        return _newton(circuit, P, off, y, v, vbe, vbc, max_iter, tol_v, vcrit)


def _newton(circuit, P, off, y, v, vbe, vbc, max_iter, tol_v, vcrit):
    idx = {name: i for i, name in enumerate(NODES)}
    c, b, e = (idx[x] for x in circuit.q)
    vt = circuit.model[4]
    batch = off.shape[0]
    done = np.zeros(batch, dtype=bool)
    for _ in range(max_iter):
        ic, ib, a1, a2, b1, b2 = junction(circuit, vbe, vbc)
        if not (np.all(np.isfinite(a1)) and np.all(np.isfinite(a2))):
            return v, np.zeros(batch, dtype=bool)
        dm = device_matrix(circuit, a1, a2, b1, b2)
        # Linearised Q1: i = i0 + ∂i·(v − v0); the constant part is an equivalent current source.
        k = np.zeros((batch, len(NODES)))
        k[:, c] = ic - a1 * vbe - a2 * vbc
        k[:, b] = ib - b1 * vbe - b2 * vbc
        k[:, e] = -(k[:, c] + k[:, b])
        full = y[None] + dm
        lhs = P.T @ full @ P
        rhs = -(k + (full @ off[..., None])[..., 0]) @ P
        u_new = np.linalg.solve(lhs, rhs[..., None])[..., 0]
        v_new = u_new @ P.T + off
        nbe = _pnjlim(v_new[:, b] - v_new[:, e], vbe, vt, vcrit)
        nbc = _pnjlim(v_new[:, b] - v_new[:, c], vbc, vt, vcrit)
        step = np.max(np.abs(v_new - v), axis=1)
        limited = (nbe != v_new[:, b] - v_new[:, e]) | (nbc != v_new[:, b] - v_new[:, c])
        done = (step < tol_v + 1e-9 * np.max(np.abs(v_new), axis=1)) & ~limited
        v, vbe, vbc = v_new, nbe, nbc
        if done.all():
            break
    return v, done


def dc_links(circuit: Circuit, source_v=0.0):
    return [*((a, b, 0.0) for a, b in circuit.shorts), ("vcc", "0", circuit.supply_v), ("src", "0", source_v)]


def operating_point(circuit: Circuit) -> dict[str, float]:
    """Exact DC node voltages (V) with capacitors open; raises RuntimeError if Newton fails."""
    v, ok = solve_nonlinear(circuit, dc_links(circuit))
    if not ok.all():
        raise RuntimeError("the DC operating point did not converge")
    return dict(zip(NODES, v[0].tolist()))


def q_currents(circuit: Circuit, v: dict):
    """(ic, ib, Jacobian terms) at node voltages `v` (dict name → V or arrays)."""
    c, b, e = circuit.q
    return junction(circuit, np.asarray(v[b]) - np.asarray(v[e]), np.asarray(v[b]) - np.asarray(v[c]))


def solve_small_signal(circuit: Circuit, op: dict, freq_hz=None, source=1.0, inject=None, skip=()):
    """Complex node voltages (nf, n) for a 1 V source EMF (or `source`), optionally injecting 1 A.

    freq_hz None = midband: every capacitor a short.  inject: (into, out_of) node names for a
    1 A test current; skip: part names removed (e.g. "RL" to see the output impedance).
    """
    _, _, a1, a2, b1, b2 = q_currents(circuit, op)
    dm = device_matrix(circuit, a1, a2, b1, b2)[0]
    links = [(a, b, 0.0) for a, b in circuit.shorts if (a, b) != ("src", "in") or "RS" not in skip]
    links += [("vcc", "0", 0.0), ("src", "0", source)]
    if freq_hz is None:
        links += [(p.a, p.b, 0.0) for p in circuit.parts if p.kind == "C" and p.name not in skip]
        y = admittance(circuit, omega=np.array([0.0]), skip=skip, caps_short=True)
    else:
        y = admittance(circuit, omega=2 * np.pi * np.atleast_1d(freq_hz), skip=skip)
    red = Reduction(links)
    P, off = red.P, red.offset
    full = y + dm[None]
    cur = np.zeros(len(NODES), dtype=complex)
    if inject is not None:
        cur[red.index[inject[0]]] += 1.0
        cur[red.index[inject[1]]] -= 1.0
    lhs = P.T @ full @ P
    rhs = (cur[None] - full @ off) @ P
    u = np.linalg.solve(lhs, rhs[..., None])[..., 0]
    return u @ P.T + off[None]
