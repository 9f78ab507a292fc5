"""Coupling and bypass capacitors: the exact, cheap choice for one resistor tuple and transistor.

The low cut-off test is vectorised: the midband nodal solve of smallsignal.py
takes complex conductances, so CIN in series with RS, COUT in series with RL and
CE across RE2 enter as impedances 1/(jωC) and |H(j·2π·f_cut)| is evaluated for
many capacitor combinations at once.  f_low ≤ f_cut exactly when
|H(f_cut)| ≥ |H_mid|/√2, the response of these high-pass networks rising
monotonically with frequency; and f_low falls as any capacitance grows, so an
option too small even with the other positions at their largest is dropped.

Among the combinations that pass at hFE min and max, within stock, with every
part rated ≥ CAP_VOLTAGE_MARGIN × the DC across it, the choice is the lexicographic
minimum of (parts, total nF, lines emptied, Σ used/qty): the capacitor share of the
design objective, which is separable because capacitors never share drawer lines
with resistors or transistors.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np

from . import objective, smallsignal
from .bias import thevenin
from .stage import COLLECTOR_FEEDBACK, EMITTER_FOLLOWER

CAP_VOLTAGE_MARGIN = 1.5  # rating ≥ 1.5 × the DC across the part (common practice, no source)
CAP_POSITIONS = ("CIN", "COUT", "CE")
SHORT = smallsignal.SHORT_S
HALF_POWER = 0.5


def _y(row, corner):
    gm, gpi, gmu, go = (np.asarray(row[f"{corner}_{k}"]) for k in ("gm", "gpi", "gmu", "go"))
    return gpi, gmu, gm + go, -go - gmu  # inverse of smallsignal.hybrid_pi


def _inv(z):
    z = np.asarray(z, dtype=complex)
    return np.where(z == 0, SHORT, 1.0 / np.where(z == 0, 1.0, z))


def transfer(topology, r, y, rs, rl, omega, cin, cout, ce):
    """Complex gain load voltage / source EMF (broadcast arrays); C = inf is a short, ω in rad/s."""
    def zc(c):
        c = np.asarray(c, dtype=float)
        return np.where(np.isinf(c), 0.0, 1.0 / (1j * omega * np.where(np.isinf(c), 1.0, c)))

    r = {k: np.asarray(v, dtype=float) for k, v in r.items()}
    g_source = _inv(rs + zc(cin))
    if topology == COLLECTOR_FEEDBACK:
        g_bias, g_fb = 0.0, 1.0 / r["RB"]
    else:
        g_bias, g_fb = 1.0 / thevenin(1.0, r["R1"], r["R2"])[1], 0.0
    if topology == EMITTER_FOLLOWER:
        g_coll, g_emit, out = SHORT, 1.0 / r["RE"], "e"
    else:
        re2 = r["RE2"]
        zce = _parallel_rc(re2, ce, omega)
        g_coll, g_emit, out = 1.0 / r["RC"], _inv(r["RE1"] + zce), "c"
    g_load = 1.0 / (rl + zc(cout))
    ss = smallsignal.midband(y, g_source=g_source, g_bias=g_bias, g_feedback=g_fb, g_collector=g_coll,
                             g_emitter=g_emit, g_load=g_load, output=out)
    return ss["gain"] * rl * g_load


def _parallel_rc(r, c, omega):
    """R ‖ C impedance (Ω); C = inf → 0 (bypassed), R = 0 → 0."""
    c = np.asarray(c, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        z = r / (1.0 + 1j * omega * r * np.where(np.isinf(c), 1.0, c))
    return np.where(np.isinf(c) | (r == 0), 0.0, z)


def meets_low_cut(topology, row, spec, cin, cout, ce):
    """Bool array: f_low ≤ spec.low_cut_hz at both hFE corners for the capacitor arrays given."""
    r = {k: row[k] for k in ("R1", "R2", "RC", "RE1", "RE2", "RE", "RB") if k in row}
    w = 2 * np.pi * spec.low_cut_hz
    ok = True
    for corner in ("min", "max"):
        y = _y(row, corner)
        h = transfer(topology, r, y, spec.source_ohms, spec.load_ohms, w, cin, cout, ce)
        hm = transfer(topology, r, y, spec.source_ohms, spec.load_ohms, w, np.inf, np.inf, np.inf)
        ok = ok & (np.abs(h) ** 2 >= HALF_POWER * np.abs(hm) ** 2)
    return np.asarray(ok)


def dc_across(topology, row) -> dict[str, float]:
    """Largest DC voltage (V) across each capacitor over the hFE corners; + faces the stage side."""
    out_node = "ve" if topology == EMITTER_FOLLOWER else "vc"
    v = {"CIN": "vb", "COUT": out_node, "CE": "vn"}
    return {p: max(float(row[f"min_{k}"]), float(row[f"max_{k}"])) for p, k in v.items()}


@dataclass(frozen=True)
class CapChoice:
    options: dict  # position → option index
    parts: int
    emptied: int
    frac: int
    nf: int

    @property
    def key(self):
        return (self.parts, self.nf, self.emptied, self.frac)


def positions_for(row) -> tuple[str, ...]:
    return ("CIN", "COUT", "CE") if float(row.get("RE2", 0.0)) > 0 else ("CIN", "COUT")


def usable(options, vdc: float) -> np.ndarray:
    need = vdc * CAP_VOLTAGE_MARGIN
    return np.flatnonzero(options.voltage_v >= need) if need > 0 else np.arange(len(options))


def option_usage(options, idx: np.ndarray, n_stock: int) -> np.ndarray:
    """[len(idx), stock rows] part counts."""
    m = options.members[idx]
    u = np.zeros((len(idx), n_stock), dtype=np.int64)
    for c in range(m.shape[1]):
        ok = m[:, c] >= 0
        np.add.at(u, (np.flatnonzero(ok), m[ok, c]), 1)
    return u


def choose(topology, row, spec, options, stock_qty: np.ndarray) -> CapChoice | None:
    """The best capacitor combination for one row (dict of scalars), or None when none fits."""
    pos = positions_for(row)
    vdc = dc_across(topology, row)
    cand = {p: usable(options, vdc[p]) for p in pos}
    if any(len(c) == 0 for c in cand.values()):
        return None
    big = {p: options.value[cand[p]].max() for p in pos}
    args = {"CIN": np.inf, "COUT": np.inf, "CE": np.inf}
    for p in pos:  # monotone: drop options too small even with the rest at their largest
        trial = {q: (options.value[cand[q]] if q == p else big[q]) for q in pos}
        ok = meets_low_cut(topology, row, spec, *(trial.get(q, args[q]) for q in ("CIN", "COUT", "CE")))
        cand[p] = cand[p][np.broadcast_to(ok, cand[p].shape)]
        if len(cand[p]) == 0:
            return None
    n_stock = len(stock_qty)
    weights = np.array([objective.line_weight(q) if q > 0 else 0 for q in stock_qty])
    by_parts = {p: {k: cand[p][options.parts[cand[p]] == k] for k in (1, 2)} for p in pos}
    profiles = sorted(itertools.product((1, 2), repeat=len(pos)), key=sum)
    for total, group in itertools.groupby(profiles, key=sum):
        best = None
        for prof in group:
            sets = [by_parts[p][k] for p, k in zip(pos, prof, strict=True)]
            if any(len(s) == 0 for s in sets):
                continue
            mesh = [m.ravel() for m in np.meshgrid(*sets, indexing="ij")]
            use = sum(option_usage(options, m, n_stock) for m in mesh)
            fit = (use <= stock_qty).all(axis=1)
            vals = {p: options.value[m] for p, m in zip(pos, mesh, strict=True)}
            fit &= meets_low_cut(topology, row, spec, *(vals.get(q, np.inf) for q in ("CIN", "COUT", "CE")))
            if not fit.any():
                continue
            emptied = ((use >= stock_qty) & (use > 0)).sum(axis=1)
            frac = use @ weights
            nf = np.rint(sum(vals.values()) / objective.NF).astype(np.int64)
            f = np.flatnonzero(fit)
            k = f[np.lexsort((frac[f], emptied[f], nf[f]))[0]]
            c = CapChoice({p: int(m[k]) for p, m in zip(pos, mesh, strict=True)}, total,
                          int(emptied[k]), int(frac[k]), int(nf[k]))
            if best is None or c.key < best.key:
                best = c
        if best is not None:
            return best
    return None
