"""The spec check on screened value tuples, at hFE min and hFE max with nominal values at 27 °C.

`check` runs the vectorised model (screen.py) twice per chunk and returns the rows
that meet every resistor-and-transistor part of the spec, with the integer
objective terms and what the capacitor choice needs.  It also keeps, per
constraint, the best figure among tuples that fail only that one, so an
infeasible spec can say which constraint binds and what is nearest.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from . import objective
from .screen import screen
from .stage import EMITTER_FOLLOWER

TRANSISTOR_PD_DERATING = 0.5  # dissipation ≤ 50 % of PD(max) (common practice, no source)
CONSTRAINTS = ("bias", "gain", "swing", "rin", "current", "ratings")


@dataclass
class Near:
    """Per constraint: tuples failing only it, and the best figure among them."""

    count: dict = field(default_factory=lambda: dict.fromkeys(CONSTRAINTS, 0))
    best: dict = field(default_factory=dict)
    screened: int = 0

    def note(self, name, values, better):
        if len(values) == 0:
            return
        self.count[name] = self.count.get(name, 0) + len(values)
        v = float(better(values))
        old = self.best.get(name)
        self.best[name] = v if old is None else float(better(np.array([old, v])))


def corners(q):
    return {"min": float(q.transistor.hfe_min), "max": float(q.transistor.hfe_max)}


def check(topology, r, q, spec, near: Near | None = None):
    """Rows of chunk `r` (position → ohms arrays) meeting the spec with transistor line `q`.

    Returns dict of arrays (only passing rows): the positions' ohms, "ge" (0.1 % steps),
    "sm" (mV), "need_<P>" (µW a network at P must carry), and per hFE corner c in
    ("min", "max") the screen outputs needed later ("<c>_gm", …, "<c>_vb", "<c>_vc", "<c>_vn").
    """
    t = q.transistor
    res = {c: screen(topology, r, transistor=t, supply_v=spec.supply_v, source_ohms=spec.source_ohms,
                     load_ohms=spec.load_ohms, beta=b) for c, b in corners(q).items()}
    n = len(next(iter(r.values())))
    ok = {k: np.ones(n, dtype=bool) for k in CONSTRAINTS}
    sign_ok = np.ones(n, dtype=bool)
    for s in res.values():
        ok["bias"] &= s["converged"] & ~s["saturated"] & ~s["cutoff"]
        g = s["gain"]
        sign_ok &= (g > 0) if topology == EMITTER_FOLLOWER else (g < 0)
        ok["gain"] &= np.abs(np.abs(g) / spec.gain - 1.0) <= spec.gain_tol + 1e-12
        ok["swing"] &= s["swing_pp"] >= spec.swing_pp
        ok["rin"] &= s["rin"] >= spec.rin_floor
        if spec.max_supply_a is not None:
            ok["current"] &= s["i_supply"] <= spec.max_supply_a
        if t.pd_max_w:
            ok["ratings"] &= s["p_q"] <= TRANSISTOR_PD_DERATING * t.pd_max_w
        if t.ic_max_a:
            ok["ratings"] &= s["ic"] <= t.ic_max_a
    if t.vceo_v and t.vceo_v < spec.supply_v:
        ok["ratings"][:] = False  # cut off, the collector can reach the full supply
    ok["gain"] &= sign_ok
    lo, hi = res["min"], res["max"]
    allok = np.logical_and.reduce([ok[k] for k in CONSTRAINTS])
    if near is not None:
        near.screened += n
        _note_near(near, ok, lo, hi, spec)
    idx = np.flatnonzero(allok)
    out = {p: np.asarray(v)[idx] for p, v in r.items()}
    out["idx"] = idx  # position in the chunk
    out["ge"] = objective.gain_error_steps(lo["gain"][idx], hi["gain"][idx], spec.gain)
    out["sm"] = objective.swing_margin_mv(lo["swing_pp"][idx], hi["swing_pp"][idx], spec.swing_pp)
    for p in r:
        key = f"p_{p}"
        out[f"need_{p}"] = objective.power_need_uw(np.maximum(lo[key][idx], hi[key][idx]))
    for c, s in res.items():
        for k in ("gm", "gpi", "gmu", "go", "vb", "vc", "vn", "ve", "gain"):
            out[f"{c}_{k}"] = s[k][idx]
    return out


def _note_near(near, ok, lo, hi, spec):
    others = {k: np.logical_and.reduce([ok[j] for j in CONSTRAINTS if j != k]) for k in CONSTRAINTS}
    gain_lo = np.minimum(np.abs(lo["gain"]), np.abs(hi["gain"]))
    gain_hi = np.maximum(np.abs(lo["gain"]), np.abs(hi["gain"]))
    only = {k: others[k] & ~ok[k] for k in CONSTRAINTS}
    near.note("gain_low", gain_lo[only["gain"]], np.max)  # the highest worst-case gain reached
    near.note("gain_high", gain_hi[only["gain"]], np.min)
    near.note("swing", np.minimum(lo["swing_pp"], hi["swing_pp"])[only["swing"]], np.max)
    near.note("rin", np.minimum(lo["rin"], hi["rin"])[only["rin"]], np.max)
    near.note("current", np.maximum(lo["i_supply"], hi["i_supply"])[only["current"]], np.min)
    near.note("ratings", np.maximum(lo["p_q"], hi["p_q"])[only["ratings"]], np.min)
    near.note("bias", np.zeros(int(only["bias"].sum())), np.min)


def concat(parts: list[dict]) -> dict:
    if not parts:
        return {}
    return {k: np.concatenate([p[k] for p in parts]) for k in parts[0]}
