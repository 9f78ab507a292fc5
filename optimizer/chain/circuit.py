"""The exact nodal solver of a two-stage chain: both transistors, batched over corners.

Each stage's own circuit comes from optimizer.physics.circuit.build; the chain renames its nodes
(first stage: base1, emit1, …; second stage: base2, …), drops the first stage's load and
the second stage's source, and joins them at node "x": the first stage's output (its
collector or emitter, there is no COUT of its own) feeds CIN_B, the second stage's input
capacitor.  Nodes kept from the deck contract: 0, vcc, in (after the source resistance),
out (the load); "src" is the source's EMF.

An all-PNP chain is solved as its all-NPN mirror (chain/polarity.py): the net built is the NPN
twin's, and `Net.mirror_v` (the supply) says so; `Net.real` gives its node voltages in real polarity.

Every analysis takes a batch of corners at once: each transistor's model parameters
(IS, BF, BR, VAF, Vt) are arrays, one entry per corner (hFE of each transistor, temperature),
so the DC point, the small signal and the large signal of all corners are one Newton or one
batch of dense solves.  The equations are those of optimizer.physics.circuit (the Gummel–Poon subset of
optimizer.physics.transistor, SPICE's junction limiting); only the bookkeeping is generalised.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from optimizer.chain import polarity
from optimizer.chain.names import SUFFIX
from optimizer.physics.circuit import Part, _pnjlim, build
from optimizer.physics.stage import Stage
from optimizer.physics.transistor import beta_at, saturation_current, terminal_currents, thermal_voltage

FIRST_KEEP = {"0": "0", "vcc": "vcc", "src": "src", "in": "in", "out": "x"}
SECOND_KEEP = {"0": "0", "vcc": "vcc", "in": "x", "out": "out"}


@dataclass(frozen=True)
class Chain:
    """Two stages in a row.  `first` carries the source (source_ohms) and its CIN; its load and
    COUT are ignored.  `second` carries the load; its source is ignored and its CIN is the
    interstage capacitor.  Both share the supply and the temperature of `first`."""

    kind: str
    first: Stage
    second: Stage


@dataclass(frozen=True)
class Net:
    nodes: tuple[str, ...]
    parts: tuple[Part, ...]
    shorts: tuple[tuple[str, str], ...]
    qs: tuple[tuple[str, str, str], ...]  # (collector, base, emitter) per transistor
    models: tuple[tuple[np.ndarray, ...], ...]  # per transistor (IS, BF, BR, VAF, Vt), each (batch,)
    supply_v: float
    mirror_v: float = 0.0  # the supply when the net is an all-PNP chain's NPN mirror (chain/polarity.py), else 0

    @property
    def batch(self) -> int:
        return len(self.models[0][0])

    def tiled(self, points: int) -> Net:
        """The same net with each corner repeated `points` times (corner-major), for waveforms."""
        models = tuple(tuple(np.repeat(m, points) for m in model) for model in self.models)
        return Net(self.nodes, self.parts, self.shorts, self.qs, models, self.supply_v, self.mirror_v)

    def real(self, op) -> np.ndarray:
        """Node voltages `op` (..., n) in real polarity (V to 0 V): an all-PNP chain's read back from its mirror."""
        return polarity.real_volts(self.nodes, op, self.mirror_v)


def _model(t, bf, temp_c):
    temp_c = np.asarray(temp_c, dtype=float)
    bf = np.broadcast_to(np.asarray(bf, dtype=float), temp_c.shape)
    return (saturation_current(t.is_a, temp_c, t.xti, t.eg_ev), beta_at(bf, temp_c, t.xtb),
            beta_at(np.full(temp_c.shape, t.br), temp_c, t.xtb), np.full(temp_c.shape, float(t.vaf_v)),
            thermal_voltage(temp_c))


def build_net(chain: Chain, corners=None) -> Net:
    """The chain's circuit; corners: [(BF of Q1 at 27 °C, BF of Q2, temperature °C), …]
    (default: each stage's own transistor BF at the first stage's temperature).  An all-PNP chain
    gives its NPN mirror (mirror_v set); a mixed chain is refused (ValueError)."""
    mirror = polarity.mirror_v(chain)
    s1, s2 = polarity.twin(chain.first), polarity.twin(chain.second)
    c1 = build(Stage(s1.topology, s1.resistors, {k: v for k, v in s1.capacitors.items() if k != "COUT"},
                     s1.supply_v, s1.source_ohms, float("inf"), s1.transistor, s1.temp_c))
    c2 = build(Stage(s2.topology, s2.resistors, s2.capacitors, s1.supply_v, 0.0, s2.load_ohms, s2.transistor,
                     s1.temp_c))

    def one(n):
        return FIRST_KEEP.get(n, n + "1")

    def two(n):
        return SECOND_KEEP.get(n, n + "2")

    parts = [Part(p.name, p.kind, one(p.a), one(p.b), p.value) for p in c1.parts if p.name != "RL"]
    parts += [Part(p.name if p.name == "RL" else p.name + SUFFIX, p.kind, two(p.a), two(p.b), p.value)
              for p in c2.parts if p.name != "RS"]
    shorts = [(one(a), one(b)) for a, b in c1.shorts]
    shorts += [(two(a), two(b)) for a, b in c2.shorts if "src" not in (a, b)]
    nodes = ["0", "vcc", "src", "in", "x", "out"]
    for p in parts:
        for n in (p.a, p.b):
            if n not in nodes:
                nodes.append(n)
    for a, b in shorts:
        for n in (a, b):
            if n not in nodes:
                nodes.append(n)
    qs = (tuple(one(n) for n in c1.q), tuple(two(n) for n in c2.q))
    for n in (x for q in qs for x in q):
        if n not in nodes:
            nodes.append(n)
    if corners is None:
        corners = [(s1.transistor.bf, s2.transistor.bf, s1.temp_c)]
    k = np.asarray(corners, dtype=float).reshape(-1, 3)
    models = (_model(s1.transistor, k[:, 0], k[:, 2]), _model(s2.transistor, k[:, 1], k[:, 2]))
    return Net(tuple(nodes), tuple(parts), tuple(shorts), qs, models, float(s1.supply_v), mirror)


class Reduction:
    """Nodes tied by links (a, b, d): V(a) = V(b) + d, as V = P·u + offset (optimizer.physics.circuit.Reduction
    for any node list)."""

    def __init__(self, nodes, links):
        parent = {n: (n, 0.0) for n in nodes}

        def find(n):
            off = 0.0
            while parent[n][0] != n:
                n, off = parent[n][0], off + parent[n][1]
            return n, off

        for a, b, d in links:
            ra, oa = find(a)
            rb, ob = find(b)
            if ra == rb:
                continue
            if ra == "0":
                parent[rb] = (ra, oa - ob - d)
            else:
                parent[ra] = (rb, ob + d - oa)
        roots = [find(n) for n in nodes]
        free = sorted({r for r, _ in roots if r != "0"}, key=list(nodes).index)
        self.index = {n: i for i, n in enumerate(nodes)}
        self.P = np.zeros((len(nodes), len(free)))
        for i, (r, _) in enumerate(roots):
            if r != "0":
                self.P[i, free.index(r)] = 1.0
        batch = np.broadcast_shapes(*[np.shape(o) for _, o in roots])
        self.offset = np.stack([np.broadcast_to(np.asarray(o, dtype=float), batch) for _, o in roots], axis=-1)


def admittance(net: Net, omega=None, skip=(), caps_short=False):
    """(nf, n, n) node admittance (S) of the passive parts at each ω (rad/s); real at DC."""
    n = len(net.nodes)
    idx = {name: i for i, name in enumerate(net.nodes)}
    w = np.atleast_1d(np.asarray(0.0 if omega is None else omega, dtype=float))
    y = np.zeros((w.size, n, n), dtype=complex if omega is not None else float)
    for p in net.parts:
        if p.name in skip or (p.kind == "C" and (omega is None or caps_short)):
            continue
        g = 1.0 / p.value if p.kind == "R" else 1j * w * p.value
        a, b = idx[p.a], idx[p.b]
        y[:, a, a] += g
        y[:, b, b] += g
        y[:, a, b] -= g
        y[:, b, a] -= g
    return y


def junction(model, vbe, vbc):
    """ic, ib (A) and ∂ic/∂vbe, ∂ic/∂vbc, ∂ib/∂vbe, ∂ib/∂vbc (S) of one transistor (optimizer.physics.circuit.junction)."""
    is_a, bf, br, vaf, vt = model
    ic, ib = terminal_currents(vbe, vbc, is_a, bf, br, vaf, vt)
    gbe = is_a / vt * np.exp(vbe / vt)
    gbc = is_a / vt * np.exp(vbc / vt)
    ibe, ibc = is_a * np.expm1(vbe / vt), is_a * np.expm1(vbc / vt)
    inv_qb = 1.0 - vbc / vaf
    return ic, ib, gbe * inv_qb, -gbc * inv_qb - (ibe - ibc) / vaf - gbc / br, gbe / bf, gbc / br


def _stamp(net: Net, jv):
    """Jacobian (batch, n, n), equivalent currents (batch, n) and [(ic, ib)] of every transistor
    linearised at junction voltages jv = [(vbe, vbc) per transistor]."""
    idx = {name: i for i, name in enumerate(net.nodes)}
    batch, n = len(jv[0][0]), len(net.nodes)
    m = np.zeros((batch, n, n))
    k = np.zeros((batch, n))
    currents = []
    for (cn, bn, en), model, (vbe, vbc) in zip(net.qs, net.models, jv, strict=True):
        c, b, e = idx[cn], idx[bn], idx[en]
        ic, ib, a1, a2, b1, b2 = junction(model, vbe, vbc)
        currents.append((ic, ib))
        # Rows of the collector and base currents; the emitter carries minus their sum.
        for row, dbe, dbc, i0 in ((c, a1, a2, ic), (b, b1, b2, ib)):
            m[:, row, b] += dbe + dbc
            m[:, row, e] -= dbe
            m[:, row, c] -= dbc
            m[:, e, b] -= dbe + dbc
            m[:, e, e] += dbe
            m[:, e, c] += dbc
            lin = i0 - dbe * vbe - dbc * vbc
            k[:, row] += lin
            k[:, e] -= lin
    return m, k, currents


def _junctions(net: Net, v):
    idx = {name: i for i, name in enumerate(net.nodes)}
    return [(v[:, idx[b]] - v[:, idx[e]], v[:, idx[b]] - v[:, idx[c]]) for c, b, e in net.qs]


def _device(net: Net, v):
    return _stamp(net, _junctions(net, v))


def solve_nonlinear(net: Net, links, guess, max_iter=300, tol_v=1e-10):
    """Node voltages (batch, n) with every transistor exact: Newton with SPICE junction limiting.

    links: (a, b, d) with d scalar or (batch,); guess: (batch, n) to start from.  Returns (V, converged).
    """
    red = Reduction(net.nodes, links)
    P = red.P
    off = np.broadcast_to(red.offset, (net.batch, len(net.nodes)))
    y = admittance(net)[0]
    idx = {name: i for i, name in enumerate(net.nodes)}
    v = np.broadcast_to(guess, off.shape).astype(float)
    jv = _junctions(net, v)
    u = (v - off) @ P / np.maximum(P.sum(axis=0), 1)
    v = u @ P.T + off
    vcrit = [m[4] * np.log(m[4] / (np.sqrt(2.0) * m[0])) for m in net.models]
    done = np.zeros(net.batch, dtype=bool)
    with np.errstate(over="ignore", invalid="ignore"):
        for _ in range(max_iter):
            # Linearised where the limited junction voltages are (SPICE's way), not the raw nodes.
            m, k, _ = _stamp(net, jv)
            if not (np.all(np.isfinite(m)) and np.all(np.isfinite(k))):
                return v, np.zeros(net.batch, dtype=bool)
            full = y[None] + m
            lhs = P.T @ full @ P
            rhs = -(k + (full @ off[..., None])[..., 0]) @ P
            v_new = np.linalg.solve(lhs, rhs[..., None])[..., 0] @ P.T + off
            step = np.max(np.abs(v_new - v), axis=1)
            limited = np.zeros(net.batch, dtype=bool)
            new_jv = []
            for (cn, bn, en), model, (vbe, vbc), vc_ in zip(net.qs, net.models, jv, vcrit, strict=True):
                c, b, e = idx[cn], idx[bn], idx[en]
                raw_be, raw_bc = v_new[:, b] - v_new[:, e], v_new[:, b] - v_new[:, c]
                nbe = _pnjlim(raw_be, vbe, model[4], vc_)
                nbc = _pnjlim(raw_bc, vbc, model[4], vc_)
                limited |= (nbe != raw_be) | (nbc != raw_bc)
                new_jv.append((nbe, nbc))
            done = (step < tol_v + 1e-9 * np.max(np.abs(v_new), axis=1)) & ~limited
            v, jv = v_new, new_jv
            if done.all():
                break
    return v, done & np.all(np.isfinite(v), axis=1)


def dc_links(net: Net, source_v=0.0):
    return [*((a, b, 0.0) for a, b in net.shorts), ("vcc", "0", net.supply_v), ("src", "0", source_v)]


def operating_point(net: Net) -> np.ndarray:
    """Exact DC node voltages (batch, n), capacitors open; RuntimeError if a corner does not converge."""
    v, ok = solve_nonlinear(net, dc_links(net), np.zeros((net.batch, len(net.nodes))))
    if not ok.all():
        raise RuntimeError("the DC operating point of the chain did not converge")
    return v


def q_currents(net: Net, v):
    """[(ic, ib) per transistor], arrays over the batch, at node voltages v (batch, n)."""
    return _device(net, np.atleast_2d(v))[2]


def solve_small_signal(net: Net, op, freq_hz=None, source=1.0, inject=None, skip=()):
    """Complex node voltages (batch, nf, n) for a 1 V source EMF (or `source`), linearised at `op`
    (batch, n); freq_hz None = midband (capacitors shorted).  inject: (into, out_of) a 1 A test
    current; skip: part names left out (e.g. "RL" for the output resistance)."""
    m = _device(net, op)[0]
    links = [(a, b, 0.0) for a, b in net.shorts]
    if "RS" in skip:
        links = [lk for lk in links if (lk[0], lk[1]) != ("src", "in")]
    links += [("vcc", "0", 0.0), ("src", "0", source)]
    if freq_hz is None:
        links += [(p.a, p.b, 0.0) for p in net.parts if p.kind == "C" and p.name not in skip]
        y = admittance(net, omega=np.array([0.0]), skip=skip, caps_short=True)
    else:
        y = admittance(net, omega=2 * np.pi * np.atleast_1d(freq_hz), skip=skip)
    red = Reduction(net.nodes, links)
    P, off = red.P, red.offset
    full = y[None, :, :, :] + m[:, None, :, :]
    cur = np.zeros(len(net.nodes), dtype=complex)
    if inject is not None:
        cur[red.index[inject[0]]] += 1.0
        cur[red.index[inject[1]]] -= 1.0
    lhs = P.T @ full @ P
    rhs = (cur - full @ off) @ P
    u = np.linalg.solve(lhs, rhs[..., None])[..., 0]
    return u @ P.T + off
