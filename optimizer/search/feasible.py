"""The spec check on screened value tuples, at every hFE and temperature corner, nominal values.

`check` runs the vectorised model (screen.py) once per corner per chunk and returns the rows
that meet every resistor-and-transistor part of the spec, with the integer
objective terms and what the capacitor choice needs.  It also keeps, per
constraint, the best figure among tuples that fail only that one, so an
infeasible spec can say which constraint binds and what is nearest.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from optimizer import kinds
from optimizer.search import objective
from optimizer.physics.screen import screen
from optimizer.search.stopwatch import poll
from optimizer.physics.swing import CUTOFF_FRACTION
from optimizer.physics.thd_screen import thd_at_swing
from optimizer.physics import polarity

TRANSISTOR_PD_DERATING = 0.5  # dissipation ≤ 50 % of PD(max) (common practice, no source)
CONSTRAINTS = ("bias", "gain", "swing", "rin", "vce", "current", "ratings", "thd")
# The fast THD (thd_screen) is held this far inside the limit, so the exact analysis never
# finds a returned design over it (measured gap < 0.3 % relative below 5 % THD).
THD_SAFETY = 0.95
THD_DROP = 2.0
# The load-line swing ends where the current reaches 0 or VCE reaches VCE(sat); the waveform check
# (distortion.py) calls a stage clipped once its current falls below 5 % of the quiescent, so
# the asked swing must stay within 95 % of the load-line swing.
SWING_HEADROOM = 1.0 - CUTOFF_FRACTION
ROW_KEYS = ("gm", "gpi", "gmu", "go", "vb", "vc", "vn", "ve", "gain")


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


def corners(q, spec=None):
    """Corner name → (BF at 27 °C, temperature °C): both hFE ends of the line at every temperature
    corner of the spec.  "min"/"max" are the hFE ends at 27 °C; "<end>_lo"/"<end>_hi" at the ends
    of the spec's temperature range (when they differ from 27 °C)."""
    out = {}
    temps = (27.0,) if spec is None else spec.temps_c
    for end, b in (("min", float(q.transistor.hfe_min)), ("max", float(q.transistor.hfe_max))):
        for t in temps:
            name = end if t == 27.0 else f"{end}_{'lo' if t < 27.0 else 'hi'}"
            out[name] = (b, t)
    return out


def corner_names(row) -> list[str]:
    """The corner prefixes a row carries (each has a "<corner>_vb" column)."""
    return [k[:-3] for k in row if k.endswith("_vb")]


def check(topology, r, q, spec, near: Near | None = None):
    """Rows of chunk `r` (position → ohms arrays) meeting the spec with transistor line `q`.

    Every corner of `corners(q, spec)` (hFE min and max × the temperature corners) must meet
    the bias, gain, swing, Rin, quiescent VCE, supply current and ratings limits, and THD at
    the asked swing must stay within spec.max_thd (checked last, on the survivors only).
    Corners are screened one after another on the tuples still in the running: a tuple that
    already fails two kinds of limit can be neither a design nor a near miss.

    Returns dict of arrays (only passing rows): the positions' ohms, "ge" (0.1 % steps),
    "sm" (mV), "need_<P>" (µW a network at P must carry), per corner c the screen outputs
    needed later ("<c>_gm", …, "<c>_vb", "<c>_vc", "<c>_vn"), and the trade-off figures
    "thd" (worst-corner THD, fraction), "rob" (worst-corner margin, 0…1: the smallest spare
    fraction of any limit at any corner) and "isup" (worst-corner supply current, A).
    """
    t = q.transistor
    kind = kinds.get(topology)
    cs = corners(q, spec)
    n = len(next(iter(r.values())))
    ok = {k: np.ones(n, dtype=bool) for k in CONSTRAINTS}
    floor = spec.rin_floor
    alive = np.arange(n)
    res = {}
    for c, (b, temp) in cs.items():
        poll()
        sub = {p: np.asarray(v)[alive] for p, v in r.items()}
        s = screen(topology, sub, transistor=t, supply_v=spec.supply_v, source_ohms=spec.source_ohms,
                   load_ohms=spec.load_ohms, beta=b, temp_c=temp)
        res[c] = (alive, s)
        g = s["gain"]
        sign = (g < 0) if kind.inverting else (g > 0)
        ok["bias"][alive] &= s["converged"] & ~s["saturated"] & ~s["cutoff"]
        ok["gain"][alive] &= sign & (np.abs(np.abs(g) / spec.gain - 1.0) <= spec.gain_tol + 1e-12)
        ok["swing"][alive] &= SWING_HEADROOM * s["swing_pp"] >= spec.swing_pp
        ok["rin"][alive] &= s["rin"] >= floor
        ok["vce"][alive] &= s["vce"] >= spec.min_vce_v
        if spec.max_supply_a is not None:
            ok["current"][alive] &= s["i_supply"] <= spec.max_supply_a
        if t.pd_max_w:
            ok["ratings"][alive] &= s["p_q"] <= TRANSISTOR_PD_DERATING * t.pd_max_w
        if t.ic_max_a:
            ok["ratings"][alive] &= s["ic"] <= t.ic_max_a
        if t.vceo_v and t.vceo_v < spec.supply_v:
            ok["ratings"][:] = False  # cut off, the collector can reach the full supply
        failed = np.sum([~ok[k][alive] for k in CONSTRAINTS], axis=0)
        alive = alive[failed <= 1]
    others = np.logical_and.reduce([ok[k] for k in CONSTRAINTS if k != "thd"])
    thd = np.full(n, np.inf)
    cand = alive[others[alive]]
    thd[cand] = 0.0
    limit = spec.max_thd * THD_SAFETY
    # Corner by corner on the rows still in the running, the corner likeliest to distort first
    # (least current: cold, hFE min); a row far over the limit drops out early (a near miss keeps
    # its figure: the "cleanest stage" in the reasons is within THD_DROP × of the limit or exact).
    for c, (b, temp) in sorted(cs.items(), key=lambda kv: (kv[1][0], kv[1][1])):
        if not len(cand):
            break
        poll()
        at, s = res[c]
        k = np.searchsorted(at, cand)
        sub = {p: np.asarray(v)[cand] for p, v in r.items()}
        op = {key: s[key][k] for key in ("vb", "vc", "ve", "vn", "gain", "vbe")}
        h = thd_at_swing(topology, sub, op, transistor=t, beta=b, temp_c=temp, supply_v=spec.supply_v,
                         source_ohms=spec.source_ohms, load_ohms=spec.load_ohms, swing_pp=spec.swing_pp)
        thd[cand] = np.maximum(thd[cand], h)
        cand = cand[thd[cand] <= THD_DROP * limit]
    ok["thd"] = thd <= limit
    allok = others & ok["thd"]
    # Figures of the rows alive through every corner, corner by corner.
    keys = set(ROW_KEYS) | {"swing_pp", "rin", "vce", "i_supply", "p_q"} | {f"p_{p}" for p in r}
    every = {}
    for c, (at, s) in res.items():
        k = np.searchsorted(at, alive)
        every[c] = {key: s[key][k] for key in keys}
    if near is not None:
        near.screened += n
        _note_near(near, {k: v[alive] for k, v in ok.items()}, every, thd[alive], spec)
    pick = np.flatnonzero(allok[alive])
    idx = alive[pick]
    out = {p: np.asarray(v)[idx] for p, v in r.items()}
    out["idx"] = idx  # position in the chunk
    figs = [{key: v[pick] for key, v in e.items()} for e in every.values()]
    out["ge"] = objective.gain_error_steps(*_worst_pair([f["gain"] for f in figs]), spec.gain)
    low_swing = np.min([f["swing_pp"] for f in figs], axis=0) if figs else np.zeros(0)
    out["sm"] = objective.swing_margin_mv(low_swing, low_swing, spec.swing_pp)
    for p in r:
        out[f"need_{p}"] = objective.power_need_uw(np.max([f[f"p_{p}"] for f in figs], axis=0))
    for c, f in zip(every, figs, strict=True):
        for key in ROW_KEYS:
            out[f"{c}_{key}"] = f[key]
    out["thd"] = thd[idx]
    out["isup"] = np.max([f["i_supply"] for f in figs], axis=0)
    out["rob"] = _robustness(figs, thd[idx], spec)
    out["mirror_v"] = polarity.mirror_column(t, spec.supply_v, len(idx))  # PNP rows: mirror frame
    return out


def _worst_pair(gains):
    """The two gains (arrays) whose errors bound every corner's: the lowest and highest magnitude."""
    mags = np.abs(np.array(gains))
    return mags.min(axis=0), mags.max(axis=0)


def _robustness(corner_figs, thd, spec):
    """Worst-corner margin, 0…1: the least spare fraction of any limit at any corner (1 = all ≥ 100 %)."""
    m = 1.0 - thd / spec.max_thd
    for s in corner_figs:
        m = np.minimum(m, 1.0 - np.abs(np.abs(s["gain"]) / spec.gain - 1.0) / spec.gain_tol)
        if spec.swing_pp > 0:
            m = np.minimum(m, (s["swing_pp"] - spec.swing_pp) / spec.swing_pp)
        if spec.rin_floor > 0:
            m = np.minimum(m, (s["rin"] - spec.rin_floor) / spec.rin_floor)
        if spec.min_vce_v > 0:
            m = np.minimum(m, (s["vce"] - spec.min_vce_v) / spec.min_vce_v)
    return np.clip(m, 0.0, 1.0)


def _note_near(near, ok, every, thd, spec):
    """Near misses among the rows alive through every corner (`ok` and `thd` restricted to them)."""
    figs = list(every.values())
    others = {k: np.logical_and.reduce([ok[j] for j in CONSTRAINTS if j != k]) for k in CONSTRAINTS}
    only = {k: others[k] & ~ok[k] for k in CONSTRAINTS}
    mags = np.abs(np.array([f["gain"] for f in figs]))
    near.note("gain_low", mags.min(axis=0)[only["gain"]], np.max)  # the highest worst-case gain reached
    near.note("gain_high", mags.max(axis=0)[only["gain"]], np.min)
    near.note("swing", np.min([f["swing_pp"] for f in figs], axis=0)[only["swing"]], np.max)
    near.note("rin", np.min([f["rin"] for f in figs], axis=0)[only["rin"]], np.max)
    near.note("vce", np.min([f["vce"] for f in figs], axis=0)[only["vce"]], np.max)
    near.note("current", np.max([f["i_supply"] for f in figs], axis=0)[only["current"]], np.min)
    near.note("ratings", np.max([f["p_q"] for f in figs], axis=0)[only["ratings"]], np.min)
    near.note("thd", thd[only["thd"]], np.min)
    near.note("bias", np.zeros(int(only["bias"].sum())), np.min)


def concat(parts: list[dict]) -> dict:
    if not parts:
        return {}
    return {k: np.concatenate([p[k] for p in parts]) for k in parts[0]}
