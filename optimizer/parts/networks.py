"""Resistor networks realisable from the drawer: single parts and series/parallel networks of 2 or 3 parts.

Every shape is enumerated once per multiset of parts (a+b = b+a; a+b+c and a‖b‖c
as sorted multisets; (a+b)‖c and (a‖b)+c with a ≤ b), vectorised over numpy
arrays.  A value window prunes while enumerating: for each partial network the
third part's admissible range is solved for exactly and looked up with
`searchsorted` on the stock sorted by resistance, so only networks inside the
window are ever built.

Series and parallel formulas: R = ΣRi and 1/R = Σ1/Ri (Kirchhoff's laws).
Power split (Ohm's law): in series part i takes P·Ri/R; in parallel P·R/Ri.
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass

import numpy as np

from optimizer.search.stopwatch import afford, poll
from optimizer.parts.network_table import COUNT, FRACTION, PARALLEL2, PARALLEL3, PARALLEL_IN_SERIES, POSITIVE, RATING, SERIES2, SERIES3, SERIES_IN_PARALLEL, SHAPE_NAMES, SINGLE, Distinct, Leaf, PartsTable, Usage, argsort_positive, check_stock, ragged, stock_columns

__all__ = ["NetworkTable", "resistor_networks", "SHAPE_NAMES", "Distinct", "Usage"]

CHUNK = 1 << 18  # candidates per vectorised step
_SLACK = 1e-9  # range look-ups are widened by this much; the exact window test decides


class NetworkTable(PartsTable):
    """Resistor networks sorted by value (Ω); see `PartsTable` for the columns.

    power_w [n]: the largest total dissipation (W) at which no part exceeds its own rating
    (NaN when a member's rating is unknown).  stock_power_w: rating per stock row.
    stats: counts from the build ("raw" ordered combinations, "candidates" built, "kept").
    """

    kind = "resistor"
    _tie_break = ("power_w",)

    def __init__(self, *, power_w, stock_power_w, stats, **columns):
        super().__init__(**columns)
        self.power_w = power_w
        self.stock_power_w = stock_power_w
        self.stats = stats

    def leaf(self, row: int) -> Leaf:
        return Leaf(
            float(self.stock_value[row]), float(self.stock_tolerance[row]), int(self.stock_line[row]),
            float(self.stock_power_w[row]),
        )


@dataclass
class _Nets:
    """Partial networks over stock positions (sorted by resistance).

    r: nominal Ω; rl, rh: Ω with every part at its low / high limit; p: power capacity (W);
    m: [n, k] member positions, ascending within a base pair.
    """

    r: np.ndarray
    rl: np.ndarray
    rh: np.ndarray
    p: np.ndarray
    m: np.ndarray

    def take(self, idx) -> _Nets:
        if idx.dtype == bool:
            idx = np.flatnonzero(idx)
        return _Nets(self.r[idx], self.rl[idx], self.rh[idx], self.p[idx], np.take(self.m, idx, axis=0))


def _series(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    return x + y


def _parallel(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    return x * y / (x + y)


def _join(x: _Nets, y: _Nets, series: bool) -> _Nets:
    """x and y joined in series or parallel; a sub-network acts as one part rated at its capacity."""
    f = _series if series else _parallel
    r = f(x.r, y.r)
    if series:  # part i takes P·Ri/R, so P ≤ Pi·R/Ri
        p = np.minimum(x.p * (r / x.r), y.p * (r / y.r))
    else:  # branch i takes P·R/Ri, so P ≤ Pi·Ri/R
        p = np.minimum(x.p * (x.r / r), y.p * (y.r / r))
    m = np.empty((len(r), x.m.shape[1] + y.m.shape[1]), dtype=np.int32)
    m[:, :x.m.shape[1]], m[:, x.m.shape[1]:] = x.m, y.m
    return _Nets(r, f(x.rl, y.rl), f(x.rh, y.rh), p, m)


def _inside(nets: _Nets, lo: float, hi: float) -> _Nets:
    keep = (nets.r >= lo) & (nets.r <= hi)
    return nets if keep.all() else nets.take(keep)


def _third_range(r: np.ndarray, series: bool, lo: float, hi: float) -> tuple[np.ndarray, np.ndarray]:
    """Range [cmin, cmax] (Ω) of the part c that puts `r` joined with c inside [lo, hi]."""
    if series:  # lo ≤ r + c ≤ hi
        return lo - r, hi - r
    inv_lo = np.inf if lo == 0 else 1.0 / lo  # lo = 0 and hi = ∞ are allowed
    with np.errstate(divide="ignore"):
        a = inv_lo - 1.0 / r  # 1/c ≤ a
        b = 1.0 / hi - 1.0 / r  # 1/c ≥ b
        cmin = np.where(a > 0, 1.0 / a, np.inf)  # a ≤ 0: even c = ∞ leaves it below lo
        cmax = np.where(b > 0, 1.0 / b, np.inf)
    return cmin, cmax


class _Builder:
    """Enumerates networks over the in-stock rows sorted by resistance."""

    def __init__(self, ohms, tolerance, power_w, qty, lo, hi, max_spread):
        self.R, self.Q = ohms, qty
        n = len(ohms)
        self.one = _Nets(ohms, ohms * (1 - tolerance), ohms * (1 + tolerance), power_w,
                         np.arange(n, dtype=np.int32)[:, None])
        self.lo, self.hi, self.spread = lo, hi, max_spread
        self.candidates = 0

    def extend(self, base: _Nets, series: bool, ordered: bool, windowed: bool) -> Iterator[_Nets]:
        """Every base joined with one more part (position ≥ the base's last if `ordered`), chunk by chunk."""
        lo, hi = (self.lo, self.hi) if windowed else (0.0, np.inf)
        cmin, cmax = _third_range(base.r, series, lo, hi)
        if self.spread is not None:  # largest/smallest part ≤ spread
            cmin = np.maximum(cmin, self.R[base.m[:, -1]] / self.spread)
            cmax = np.minimum(cmax, self.R[base.m[:, 0]] * self.spread)
        with np.errstate(invalid="ignore"):  # ∞ − ∞ = NaN sorts past the end: an empty range
            start = np.searchsorted(self.R, cmin - _SLACK * (np.abs(cmin) + base.r), "left")
            stop = np.searchsorted(self.R, cmax + _SLACK * (np.abs(cmax) + base.r), "right")
        if ordered:
            start = np.maximum(start, base.m[:, -1])
        # Chunks of about CHUNK candidates keep the temporaries small (and in cache).
        cum = np.cumsum(np.maximum(stop - start, 0))
        total = int(cum[-1]) if len(cum) else 0
        edges = np.unique(np.r_[0, np.searchsorted(cum, np.arange(CHUNK, total, CHUNK), "right"), len(start)])
        if len(edges) < 2:
            edges = np.zeros(2, dtype=np.int64)  # no bases: one empty chunk
        return (self._chunk(base, series, start, stop, lo, hi, windowed, np.arange(a, b))
                for a, b in zip(edges[:-1], edges[1:], strict=True))

    def _chunk(self, base, series, start, stop, lo, hi, windowed, rows) -> _Nets:
        poll()  # a deep table on a large drawer takes seconds: a stop must not wait for it
        b, c = ragged(start[rows], stop[rows])
        b = rows[b]
        self.candidates += len(c)
        # The base already respects qty; the new part's line must not be used more often than
        # stocked, which only a line with qty ≤ the base's part count can be.
        tight = np.flatnonzero(self.Q[c] <= base.m.shape[1])
        times = 1 + (base.m[b[tight]] == c[tight, None]).sum(axis=1)
        bad = tight[times > self.Q[c[tight]]]
        if len(bad):
            keep = np.ones(len(c), dtype=bool)
            keep[bad] = False
            b, c = b[keep], c[keep]
        out = _join(base.take(b), self.one.take(c), series)
        return _inside(out, lo, hi) if windowed else out

    def blocks(self, depth: int) -> list[dict[str, np.ndarray]]:
        """Networks in the window, one block of columns (r, tol, p, m, shape) per shape."""
        one, lo, hi = self.one, self.lo, self.hi
        found = [(_inside(one, lo, hi), SINGLE)]
        if depth >= 2:
            pair_s = _concat(self.extend(one, True, True, windowed=False))
            pair_p = _concat(self.extend(one, False, True, windowed=False))
            found += [(_inside(pair_s, lo, hi), SERIES2), (_inside(pair_p, lo, hi), PARALLEL2)]
        out = [_settle(nets, shape) for nets, shape in found]
        if depth >= 3:  # settled one by one so the limit columns of each are freed early
            for base, series, ordered, shape in (
                (pair_s, True, True, SERIES3), (pair_p, False, True, PARALLEL3),
                (pair_s, False, False, SERIES_IN_PARALLEL), (pair_p, True, False, PARALLEL_IN_SERIES),
            ):
                out += [_settle(c, shape) for c in self.extend(base, series, ordered, windowed=True)]
        return out


def _concat(chunks: Iterator[_Nets]) -> _Nets:
    chunks = list(chunks)
    return _Nets(*(np.concatenate([getattr(c, k) for c in chunks]) for k in ("r", "rl", "rh", "p", "m")))


def _settle(nets: _Nets, shape: int) -> dict[str, np.ndarray]:
    """Final columns of a block; tolerance is the larger side of asymmetric limits."""
    tol = np.maximum(nets.r - nets.rl, nets.rh - nets.r) / nets.r
    return {"r": nets.r, "tol": tol, "p": nets.p, "m": nets.m, "shape": shape}


FINISH_S_PER_NETWORK = 4e-7  # sort, scatter and distinct per network (2.4e-7 s measured on a 2-core machine; margin)


def resistor_networks(stock, depth: int = 3, lo_ohms: float | None = None, hi_ohms: float | None = None,
                      *, max_spread: float | None = None) -> NetworkTable:
    """Every network of up to `depth` parts (1–3) realisable from `stock`, with value in [lo_ohms, hi_ohms].

    stock: any object (or mapping) with equal-length arrays `line, ohms` (Ω), `tolerance` (fraction),
    `power_w` (W, NaN if unknown), `qty`; rows with qty 0 are skipped.  Members index these rows.
    max_spread: if set, drop networks whose largest part exceeds the smallest by more than this ratio
    (such a part changes the value by less than 1/max_spread of itself — rarely worth a slot).
    """
    if depth not in (1, 2, 3):
        raise ValueError(f"depth must be 1, 2 or 3 (got {depth!r})")
    lo = 0.0 if lo_ohms is None else float(lo_ohms)
    hi = np.inf if hi_ohms is None else float(hi_ohms)
    if not (lo >= 0 and hi > 0 and lo <= hi):
        raise ValueError(f"value window [{lo_ohms!r}, {hi_ohms!r}] Ω: expected 0 ≤ lo ≤ hi and hi > 0")
    if max_spread is not None and not max_spread >= 1:
        raise ValueError(f"max_spread must be ≥ 1 (got {max_spread!r})")
    cols = stock_columns(stock, ("line", "ohms", "tolerance", "power_w", "qty"), "resistor")
    check_stock(cols, {"ohms": POSITIVE, "tolerance": FRACTION, "power_w": RATING, "qty": COUNT}, "resistor")
    ohms, tol = cols["ohms"].astype(float), cols["tolerance"].astype(float)
    power, qty = cols["power_w"].astype(float), cols["qty"].astype(np.int64)
    rows = np.flatnonzero(qty > 0)
    order = rows[np.argsort(ohms[rows], kind="stable")]  # position → stock row
    builder = _Builder(ohms[order], tol[order], power[order], qty[order], lo, hi, max_spread)
    blocks = builder.blocks(depth)
    # Sorting and indexing the networks (here and in the table's `distinct`) cannot poll: on a large
    # drawer at depth 3 it is seconds (10 M networks of 203 lines: 2.4 s), so it starts only if the
    # time limit leaves room for it.
    afford(FINISH_S_PER_NETWORK * sum(len(b["r"]) for b in blocks))

    value = np.concatenate([b.pop("r") for b in blocks])
    sort = argsort_positive(value)
    value = value[sort]
    place = np.empty(len(sort), dtype=np.int64)  # where each entry, in block order, lands once sorted
    place[sort] = np.arange(len(sort))
    del sort
    tolerance, power_w = np.empty(len(value)), np.empty(len(value))
    parts, shape = np.empty(len(value), np.int8), np.empty(len(value), np.int8)
    members = np.full((len(value), 3), -1, dtype=np.int32)
    at = 0
    for b in blocks:  # scattered block by block, each freed as it goes, to bound the peak memory
        m = b.pop("m")
        where = place[at:at + len(m)]
        tolerance[where], power_w[where] = b.pop("tol"), b.pop("p")
        parts[where], shape[where] = m.shape[1], b["shape"]
        for j in range(m.shape[1]):  # positions → stock rows
            members[where, j] = order[m[:, j]]
        at += len(m)
    n = len(order)
    stats = {"lines": n, "depth": depth, "raw": n + 2 * n**2 * (depth >= 2) + 4 * n**3 * (depth >= 3),
             "candidates": n + builder.candidates, "kept": len(value)}
    return NetworkTable(
        value=value, tolerance=tolerance, parts=parts, shape=shape, members=members, power_w=power_w,
        stock_line=cols["line"].astype(np.int64), stock_value=ohms, stock_tolerance=tol,
        stock_power_w=power, stats=stats,
    )
