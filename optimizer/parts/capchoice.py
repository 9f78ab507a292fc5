"""Coupling and bypass capacitors: the exact, cheap choice for one resistor tuple and transistor.

Among the combinations (one option of capacitors.py per position) that meet the
low cut-off at hFE min and max (lowcut.py), within stock, with every part rated
≥ CAP_VOLTAGE_MARGIN × the DC across it, the choice is the lexicographic minimum
of (parts, total nF, lines emptied, Σ used/qty), ties to the first profile and
the lowest option indices: the capacitor share of the design objective, which is
separable because capacitors never share drawer lines with resistors or
transistors.

How it stays cheap and exact:
  * f_low falls as any capacitance grows, so an option too small even with the
    other positions at their largest cannot serve (dropped first);
  * the search runs by total parts, then per part-count profile over *distinct
    values*, not options (many lines share a value);
  * a greedy feasible tuple (each position in turn at its smallest value that
    passes with the later ones at their largest) bounds the total capacitance,
    so a value that would push any tuple past the bound is left out;
  * the bound comes from values alone, so when stock rules out every tuple
    within it the profile is searched again without it.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np

from optimizer import kinds
from optimizer.search import objective
from optimizer.search.feasible import corner_names
from optimizer.physics.lowcut import LowCut, meets_low_cut
from optimizer.physics import polarity

CAP_VOLTAGE_MARGIN = 1.5  # rating ≥ 1.5 × the DC across the part (common practice, no source)
CAP_POSITIONS = ("CIN", "COUT", "CE")
GRID_CHUNK = 200_000  # value combinations tested per call


def dc_across(topology, rows) -> dict:
    """Largest DC voltage (V, magnitude) across each capacitor over the rows' corners.

    rows: one row (dict of scalars; a float per position back) or n rows (dict of (n,) columns;
    an (n,) array per position back).  On one positive supply every capacitor's stage side is the
    higher; on split supplies it may sit below ground (a base or emitter one VBE down), and the
    rating must cover the magnitude.  CE's + faces +V in a PNP stage: its DC is then VCC − VN, the
    mirror frame's VN.
    """
    nodes = dict(kinds.get(topology).cap_nodes)
    nodes.setdefault("CE", "vn")  # rows of kinds without CE still answer for it (a 0 V node)
    corners = corner_names(rows)
    out = {}
    for p, k in nodes.items():
        v = np.array([rows[f"{c}_{k}"] for c in corners], dtype=float)  # [corner] or [corner, row]
        if p != "CE":  # CIN, COUT: a PNP row's node voltages are mirrored about the supply
            v = polarity.row_volts(rows, v)
        top = np.abs(v).max(axis=0)
        out[p] = float(top) if top.ndim == 0 else top
    return out


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


def positions_for(row, spec=None) -> tuple[str, ...]:
    """The capacitors a row fits: COUT, CE where RE2 is, and CIN unless the source is DC-coupled."""
    pos = ("CIN", "COUT", "CE") if float(row.get("RE2", 0.0)) > 0 else ("CIN", "COUT")
    return pos[1:] if getattr(spec, "dc_input", False) else pos


def rated_for(voltage_v: np.ndarray, vdc) -> np.ndarray:
    """Which ratings `voltage_v` (V, [options]) stand `vdc` (V across the part) with the margin.

    vdc: one value ([options] back) or one per row ([rows, options] back); no DC (0 V) takes every
    rating.
    """
    need = np.asarray(vdc, dtype=float)[..., None] * CAP_VOLTAGE_MARGIN
    return (voltage_v >= need) | ~(need > 0)


def usable(options, vdc: float) -> np.ndarray:
    """Indices of the options rated for `vdc` (V) across them."""
    return np.flatnonzero(rated_for(options.voltage_v, vdc))


def _distinct_values(options):
    """(distinct capacitances F, index of each option's value in them); options are sorted by value."""
    got = getattr(options, "_distinct_cache", None)
    if got is None:
        v = options.value
        new = np.ones(len(v), dtype=bool)
        new[1:] = v[1:] != v[:-1]
        got = (v[new], np.cumsum(new) - 1)
        options._distinct_cache = got
    return got


class _Row:
    """One row's capacitor problem: candidate options per position and the low cut-off test."""

    def __init__(self, topology, row, spec, options, stock_qty):
        self.pos = positions_for(row, spec)
        self.options = options
        self.qty = np.asarray(stock_qty, dtype=np.int64)
        self.weights = objective.line_weights(self.qty)
        self.test = LowCut(topology, row, spec)
        self.dv, self.vidx = _distinct_values(options)
        vdc = dc_across(topology, row)
        self.cand = {p: usable(options, vdc[p]) for p in self.pos}

    def passes(self, vals: dict) -> np.ndarray:
        return self.test(*(vals.get(q, np.inf) for q in CAP_POSITIONS))

    def smallest(self, p, values, others) -> int | None:
        """Index into sorted `values` of the smallest that passes at p with the others fixed, or None."""
        ok = self.passes({**others, p: values})
        return int(np.argmax(ok)) if ok.any() else None

    def values(self, p, parts: int) -> np.ndarray:
        """Sorted distinct values of p's candidates made of `parts` parts."""
        c = self.cand[p]
        present = np.zeros(len(self.dv), dtype=bool)
        present[self.vidx[c[self.options.parts[c] == parts]]] = True
        return self.dv[present]

    def drop_too_small(self) -> bool:
        """Keep the options that pass with every other position at its largest; False if one runs out."""
        big = {p: self.options.value[self.cand[p]].max() for p in self.pos}
        for p in self.pos:
            present = np.zeros(len(self.dv), dtype=bool)
            present[self.vidx[self.cand[p]]] = True
            idx = np.flatnonzero(present)
            ok = np.zeros(len(self.dv), dtype=bool)
            ok[idx] = self.passes({**big, p: self.dv[idx]})
            self.cand[p] = self.cand[p][ok[self.vidx[self.cand[p]]]]
            if len(self.cand[p]) == 0:
                return False
        return True


def _grid_under(vals, bound):
    """Chunks [n, P] of the value mesh (first position major) whose total is ≤ bound."""
    rest = int(np.prod([len(v) for v in vals[1:]]))
    step = max(1, GRID_CHUNK // max(1, rest))
    for s in range(0, len(vals[0]), step):
        mesh = np.stack([m.ravel() for m in np.meshgrid(vals[0][s:s + step], *vals[1:], indexing="ij")], axis=1)
        mesh = mesh[mesh.sum(axis=1) <= bound]
        if len(mesh):
            yield mesh


def _profile_tuples(cr: _Row, prof, scale: float):
    """Passing distinct-value tuples of one part-count profile with total ≤ the bound.

    Returns (values [n, P], totals F [n], bound F, complete) or None.  The bound is
    scale × the greedy tuple's total, plus 1 nF so the greedy tuple's own nF level is
    whole; complete: the bound reaches every tuple of the profile.
    """
    vals = [cr.values(p, k) for p, k in zip(cr.pos, prof, strict=True)]
    if any(len(v) == 0 for v in vals):
        return None
    top = {p: v[-1] for p, v in zip(cr.pos, vals, strict=True)}
    fixed = dict(top)
    for i, p in enumerate(cr.pos):  # greedy; feasible by construction once the first step is
        k = cr.smallest(p, vals[i], fixed)
        if k is None:
            return None
        fixed[p] = vals[i][k]
    lo = [vals[i][cr.smallest(p, vals[i], top)] for i, p in enumerate(cr.pos)]
    bound = scale * sum(fixed.values()) + objective.NF
    complete = bound >= sum(top.values())
    # Every passing tuple has each value ≥ its lo, so within the bound value i ≤ bound − Σ other lo.
    vals = [v[(v >= lo[i]) & (v <= bound - (sum(lo) - lo[i]))] for i, v in enumerate(vals)]
    found, totals = [], []
    for mesh in _grid_under(vals, bound):
        ok = cr.passes({p: mesh[:, i] for i, p in enumerate(cr.pos)})
        found.append(mesh[ok])
        totals.append(mesh[ok].sum(axis=1))
    if not found:
        return np.zeros((0, len(vals))), np.zeros(0), bound, complete
    return np.concatenate(found), np.concatenate(totals), bound, complete


def _lines(cr: _Row, prof, values):
    """The best (emptied, frac, options) realising one value tuple within stock, or None.

    Among ties the first in option order (the mesh is position-major over sorted indices).
    """
    opts = cr.options
    sets = []
    for p, k, v in zip(cr.pos, prof, values, strict=True):
        c = cr.cand[p]
        sets.append(c[(opts.parts[c] == k) & (opts.value[c] == v)])
    mesh = [m.ravel() for m in np.meshgrid(*sets, indexing="ij")]
    members = np.concatenate([opts.members[m] for m in mesh], axis=1)  # [n, 2·P] stock rows, −1 padding
    rows, local = np.unique(members, return_inverse=True)
    local = local.reshape(members.shape)
    use = np.zeros((len(mesh[0]), len(rows)), dtype=np.int64)
    for c in range(members.shape[1]):
        np.add.at(use, (np.arange(len(use)), local[:, c]), 1)
    if rows[0] < 0:  # the padding column
        rows, use = rows[1:], use[:, 1:]
    qty, w = cr.qty[rows], cr.weights[rows]
    fit = np.flatnonzero((use <= qty).all(axis=1))
    if not len(fit):
        return None
    emptied = ((use[fit] >= qty) & (use[fit] > 0)).sum(axis=1)
    frac = use[fit] @ w
    j = np.lexsort((frac, emptied))[0]
    k = fit[j]
    return int(emptied[j]), int(frac[j]), {p: int(m[k]) for p, m in zip(cr.pos, mesh, strict=True)}


def _best_of_total(cr: _Row, profs):
    """The best CapChoice whose parts number sum(profile) for the profiles given, or None.

    Levels of total nF are taken in order while every profile's bound covers them;
    when stock rules out all of those, the bounds grow fourfold and the search repeats.
    """
    scale = 1.0
    while True:
        found, limit, complete = [], np.inf, True
        for rank, prof in enumerate(profs):
            got = _profile_tuples(cr, prof, scale)
            if got is None:
                continue
            mesh, total, bound, whole = got
            limit, complete = min(limit, bound), complete and whole
            nf = np.rint(total / objective.NF).astype(np.int64)
            found += [(int(n), rank, prof, tuple(v)) for n, v in zip(nf, mesh, strict=True)]
        found.sort(key=lambda f: (f[0], f[1]))
        best = None
        for nf, rank, prof, values in found:
            if best is not None and nf > best[0][0]:
                break
            if not complete and (nf + 0.5) * objective.NF > limit:
                break  # this nF level may have tuples beyond a bound
            got = _lines(cr, prof, values)
            if got is None:
                continue
            emptied, frac, opt = got
            key = (nf, emptied, frac, rank, tuple(opt[p] for p in cr.pos))
            if best is None or key < best[0]:
                best = (key, CapChoice(opt, sum(prof), emptied, frac, nf))
        if best is not None:
            return best[1]
        if complete:
            return None
        scale *= 4.0


def choose(topology, row, spec, options, stock_qty: np.ndarray) -> CapChoice | None:
    """The best capacitor combination for one row (dict of scalars), or None when none fits."""
    cr = _Row(topology, row, spec, options, stock_qty)
    if any(len(c) == 0 for c in cr.cand.values()) or not cr.drop_too_small():
        return None
    profiles = sorted(itertools.product((1, 2), repeat=len(cr.pos)), key=sum)
    for _, group in itertools.groupby(profiles, key=sum):
        got = _best_of_total(cr, list(group))
        if got is not None:
            return got
    return None


def fewest_parts(topology, row, spec, options, stock_qty: np.ndarray) -> int | None:
    """`choose(…).parts` (None when choose finds nothing), mostly without the full choice.

    A part-count profile has a passing tuple exactly when its largest values pass (f_low falls as
    any capacitance grows); when that tuple, or the greedy one, also fits the stock, the profile's
    total is the fewest parts.  Only when stock rules out both is the full choice made.
    """
    cr = _Row(topology, row, spec, options, stock_qty)
    if any(len(c) == 0 for c in cr.cand.values()):
        return None
    profiles = sorted(itertools.product((1, 2), repeat=len(cr.pos)), key=sum)
    for total, group in itertools.groupby(profiles, key=sum):
        undecided = False
        for prof in group:
            vals = [cr.values(p, k) for p, k in zip(cr.pos, prof, strict=True)]
            if any(len(v) == 0 for v in vals):
                continue
            top = {p: v[-1] for p, v in zip(cr.pos, vals, strict=True)}
            if not cr.passes(top).all():
                continue
            if _lines(cr, prof, [top[p] for p in cr.pos]) is not None:
                return total
            fixed = dict(top)
            for i, p in enumerate(cr.pos):  # the greedy tuple: each in turn at its smallest passing value
                fixed[p] = vals[i][cr.smallest(p, vals[i], fixed)]
            if _lines(cr, prof, [fixed[p] for p in cr.pos]) is not None:
                return total
            undecided = True
        if undecided:
            got = choose(topology, row, spec, options, stock_qty)
            return None if got is None else got.parts
    return None


def fewest_parts_many(topology, rows: dict, spec, options, stock_qty: np.ndarray) -> np.ndarray:
    """`fewest_parts` for many rows at once where it is plain, −1 where it is not decided here.

    A row needs at least one part per capacitor position, so a single-part tuple that passes the
    low cut-off test (lowcut.meets_low_cut) and that the stock holds proves the fewest parts are
    the positions' number.  Two such witnesses are tried for all rows in one vectorised test each,
    as `fewest_parts` tries them one row at a time: the largest value each position may use (rated
    for the DC across it), then the greedy tuple (each position in turn at its smallest passing
    value).  Positions sharing a value must find enough of it on lines rated for all of them.
    Every other row is left (−1) to the per-row search.
    """
    n = len(rows["ge"])
    out = np.full(n, -1, dtype=np.int64)
    single = np.flatnonzero(options.parts == 1)
    if n == 0 or not len(single):
        return out
    values, volts = options.value[single], options.voltage_v[single]
    qty = np.asarray(stock_qty, dtype=np.int64)[options.members[single, 0]]
    nodes = kinds.get(topology).cap_nodes
    has_ce = rows["RE2"] > 0 if "RE2" in rows else np.zeros(n, dtype=bool)
    vdc = dc_across(topology, rows)
    rated, across, ok = {}, {}, np.ones(n, dtype=bool)  # rated[p]: (n, options) bool; across[p]: (n,) V
    for p in CAP_POSITIONS:
        present = has_ce if p == "CE" else np.ones(n, dtype=bool)
        if p not in nodes or (p == "CIN" and getattr(spec, "dc_input", False)) or not present.any():
            continue
        rated[p] = rated_for(volts, vdc[p]) & present[:, None]
        across[p] = vdc[p]
        ok &= ~present | rated[p].any(axis=1)
    if not ok.any():
        return out
    cols = {k: (v[:, None] if np.ndim(v) else v) for k, v in rows.items()}

    def passes(tup, p=None, grid=None):
        """meets_low_cut per row for tuple `tup` ({position: (n,) F}), or over (n, options) with p varied."""
        c = {q: (tup[q][:, None] if q in tup else np.inf) for q in CAP_POSITIONS}
        if p is not None:
            c[p] = grid
        return meets_low_cut(topology, cols, spec, c["CIN"], c["COUT"], c["CE"])

    def fits(tup):
        held = np.ones(n, dtype=bool)
        names = list(tup)
        for a in range(len(names)):
            for b in range(a + 1, len(names)):
                same = tup[names[a]] == tup[names[b]]
                held &= ~same | _enough(values, volts, qty, tup[names[a]],
                                        np.maximum(across[names[a]], across[names[b]]), 2)
        if len(names) == 3:
            same = (tup[names[0]] == tup[names[1]]) & (tup[names[0]] == tup[names[2]])
            held &= ~same | _enough(values, volts, qty, tup[names[0]], np.maximum.reduce(list(across.values())), 3)
        return held

    def tuple_of(sel):  # the positions a row fits, as (n,) arrays; inf where the row has none
        return {p: np.where(r.any(axis=1), sel[p], np.inf) for p, r in rated.items()}

    top = tuple_of({p: np.where(r, values[None, :], -np.inf).max(axis=1) for p, r in rated.items()})
    ok &= passes(top).reshape(n)
    count = sum(np.isfinite(t).astype(np.int64) for t in top.values())
    done = ok & fits(top)
    out[done] = count[done]
    if not (ok & ~done).any():
        return out
    greedy = dict(top)  # the greedy tuple; it passes wherever the top tuple passes
    for p, r in rated.items():
        grid = np.where(r, values[None, :], np.inf)
        good = passes(greedy, p, grid) & r
        smallest = np.where(good, values[None, :], np.inf).min(axis=1)
        greedy[p] = np.where(np.isfinite(greedy[p]) & np.isfinite(smallest), smallest, greedy[p])
    more = ok & ~done & passes(greedy).reshape(n) & fits(greedy)
    out[more] = count[more]
    return out


def _enough(values, volts, qty, value, vdc, k) -> np.ndarray:
    """Per row: ≥ k single parts of `value` (F) on lines rated for `vdc` (V across them)?"""
    avail = (values[None, :] == value[:, None]) & rated_for(volts, vdc)
    return (avail * qty[None, :]).sum(axis=1) >= k
