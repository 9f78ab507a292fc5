"""A table of part networks sorted by value, with the look-ups the solver needs.

Shared by the resistor networks (`networks.py`) and the capacitor options
(`capacitors.py`).  Rows are networks; `members` names the stock rows each one
draws on (−1 pads unused slots), so a row that uses one drawer line twice lists
that stock row twice.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from optimizer.parts.network_tree import Leaf, Parallel, Series

# Shape codes.  Members are listed in the order of the letters.
SINGLE, SERIES2, PARALLEL2, SERIES3, PARALLEL3, SERIES_IN_PARALLEL, PARALLEL_IN_SERIES = range(7)
SHAPE_NAMES = ("a", "a+b", "a‖b", "a+b+c", "a‖b‖c", "(a+b)‖c", "(a‖b)+c")

DISTINCT_RTOL = 1e-9  # values closer than this (relative) are one distinct value


def stock_columns(stock, names: tuple[str, ...], what: str) -> dict[str, np.ndarray]:
    """The named columns of `stock` (an object with array attributes, or a mapping) as numpy arrays.

    Raises ValueError naming the missing column or the length mismatch.
    """
    out = {}
    for name in names:
        col = stock.get(name) if isinstance(stock, Mapping) else getattr(stock, name, None)
        if col is None:
            raise ValueError(f"{what} stock: missing column {name!r}")
        out[name] = np.atleast_1d(np.asarray(col))
    sizes = {name: len(col) for name, col in out.items()}
    if len(set(sizes.values())) > 1:
        raise ValueError(f"{what} stock: columns differ in length {sizes}")
    return out


# Column checks for `check_stock`: (test on float values, what a bad value is not).
POSITIVE = (lambda v: np.isfinite(v) & (v > 0), "is not a positive finite value")
FRACTION = (lambda v: np.isfinite(v) & (v >= 0) & (v < 1), "is not a tolerance fraction in [0, 1)")
RATING = (lambda v: np.isnan(v) | (v > 0), "is not a positive rating (NaN = unknown)")
COUNT = (lambda v: (v >= 0) & (v == np.round(v)), "is not a whole count ≥ 0")


def check_stock(cols: dict[str, np.ndarray], checks: dict[str, tuple], what: str) -> None:
    """Raise ValueError naming the stock row and drawer line of the first bad value."""
    for name, (ok, problem) in checks.items():
        bad = np.flatnonzero(~ok(cols[name].astype(float)))
        if len(bad):
            k = int(bad[0])
            raise ValueError(f"{what} stock row {k} (line {cols['line'][k]}): {name} {cols[name][k]!r} {problem}")


def window_slice(values: np.ndarray, lo: float, hi: float) -> slice:
    """The slice of sorted `values` with lo ≤ value ≤ hi."""
    return slice(int(np.searchsorted(values, lo, "left")), int(np.searchsorted(values, hi, "right")))


def nearest_positions(values: np.ndarray, target: float, k: int) -> np.ndarray:
    """Positions of the k entries of sorted positive `values` closest to `target` in ratio, closest first.

    Distance is |ln(value/target)|, so 10 % high and 10 % low (in ratio) weigh alike.
    """
    if not target > 0:
        raise ValueError(f"nearest: target must be positive (got {target!r})")
    k = max(0, min(int(k), len(values)))
    at = int(np.searchsorted(values, target))
    lo, hi = max(0, at - k), min(len(values), at + k)  # the k nearest lie within k either side
    dist = np.abs(np.log(values[lo:hi] / target))
    return lo + np.argsort(dist, kind="stable")[:k]


def argsort_positive(values):
    """A permutation sorting positive finite `values` ascending (any order among equal values).

    The float's bits, read as an integer, order positive floats; packed above each entry's
    index they make one int64 key that a plain (SIMD) sort orders.  Where truncating the bits
    to make room merged near-equal values, those runs are put in order afterwards.
    """
    n = len(values)
    if n == 0:
        return np.zeros(0, dtype=np.int64)
    ib = max(1, (n - 1).bit_length())
    bits = values.view(np.int64)
    low = bits.min()
    span = int(bits.max() - low)
    shift = max(0, span.bit_length() - (63 - ib))
    key = bits - low  # in place from here on: this runs on millions of entries
    key >>= shift
    key <<= ib
    for at in range(0, n, 1 << 20):
        key[at:at + (1 << 20)] |= np.arange(at, min(n, at + (1 << 20)), dtype=np.int64)
    key.sort()
    key &= (1 << ib) - 1
    perm = key
    if shift:
        v = values[perm]
        bad = np.flatnonzero(v[1:] < v[:-1])
        if len(bad):
            trunc = v.view(np.int64) - low  # the sorted keys without their index bits
            trunc >>= shift
            start = np.flatnonzero(np.r_[True, trunc[1:] != trunc[:-1]])
            stop = np.r_[start[1:], n]
            runs = np.unique(np.searchsorted(start, bad, "right") - 1)
            run, at = ragged(start[runs], stop[runs])
            at_sorted = at[np.lexsort((v[at], run))]
            perm[at] = perm[at_sorted]
    return perm


def ragged(start: np.ndarray, stop: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Flat (base, candidate) pairs for candidate ranges [start[k], stop[k]) per base k."""
    n = np.maximum(stop - start, 0)
    base = np.repeat(np.arange(len(n)), n)
    offset = np.cumsum(n) - n
    cand = np.arange(int(n.sum()), dtype=np.int64) - np.repeat(offset - start, n)
    return base, cand


class Usage(NamedTuple):
    """Long usage table: network `network` takes `count` parts from stock row `row` (drawer line `line`)."""

    network: np.ndarray
    row: np.ndarray
    line: np.ndarray
    count: np.ndarray


class SortedByValue:
    """Look-ups on an ascending `value` array (networks, or distinct values)."""

    value: np.ndarray

    def __len__(self) -> int:
        return len(self.value)

    def window(self, lo: float, hi: float) -> slice:
        """Index slice of the entries with lo ≤ value ≤ hi."""
        return window_slice(self.value, lo, hi)

    def nearest(self, target: float, k: int = 1) -> np.ndarray:
        """Indices of the k entries closest to target (in ratio), closest first."""
        return nearest_positions(self.value, target, k)


@dataclass(frozen=True)
class Distinct(SortedByValue):
    """Distinct network values (relative rounding 1e-9), ascending.

    value[g]     the value of group g (that of its best realisation)
    best[g]      table index of its best realisation: fewest parts, then tightest tolerance,
                 then (resistors) highest power capacity
    min_parts[g] the fewest parts that realise it
    start[g], stop[g]  the table slice holding every realisation of the value
    """

    value: np.ndarray
    best: np.ndarray
    min_parts: np.ndarray
    start: np.ndarray
    stop: np.ndarray


class PartsTable(SortedByValue):
    """Networks sorted by value.  Arrays, all of length n (the number of networks):

    value [n] float (Ω or F), tolerance [n] float (fraction, worst case), parts [n] int,
    shape [n] int (SHAPE_NAMES), members [n, w] int (stock rows, −1 padding).
    Stock columns, per stock row: stock_line, stock_value, stock_tolerance.
    """

    kind = "resistor"
    _tie_break: tuple[str, ...] = ()  # extra columns for `distinct`, higher is better

    def __init__(self, value, tolerance, parts, shape, members, stock_line, stock_value, stock_tolerance):
        self.value = value
        self.tolerance = tolerance
        self.parts = parts
        self.shape = shape
        self.members = members
        self.stock_line = stock_line
        self.stock_value = stock_value
        self.stock_tolerance = stock_tolerance
        self._distinct: Distinct | None = None

    def usage(self, i: int) -> list[tuple[int, int]]:
        """[(drawer line, count), …] of network i, by line."""
        rows, counts = np.unique(self.members[i][self.members[i] >= 0], return_counts=True)
        return sorted((int(self.stock_line[r]), int(c)) for r, c in zip(rows, counts, strict=True))

    def usage_table(self, indices=None) -> Usage:
        """Long table (network, stock row, drawer line, count) over `indices` (default: all networks).

        A network taking one line two or three times has one entry with that count.
        """
        net = np.arange(len(self)) if indices is None else np.asarray(indices, dtype=np.int64)
        m = self.members[net]
        width = m.shape[1]
        nets, rows, counts = [], [], []
        for c in range(width):
            col = m[:, c]
            first = col >= 0
            for d in range(c):  # only the first slot holding a row reports it
                first &= m[:, d] != col
            count = sum((m[:, d] == col).astype(np.int64) for d in range(width))
            nets.append(net[first])
            rows.append(col[first])
            counts.append(count[first])
        net_a, row_a, count_a = (np.concatenate(x).astype(np.int64) for x in (nets, rows, counts))
        order = np.lexsort((row_a, net_a))
        net_a, row_a, count_a = net_a[order], row_a[order], count_a[order]
        return Usage(net_a, row_a, self.stock_line[row_a].astype(np.int64), count_a)

    def usage_matrix(self, indices=None):
        """scipy.sparse CSR matrix [len(indices), stock rows] of part counts; row k is network indices[k] (unique)."""
        from scipy import sparse

        net = np.arange(len(self)) if indices is None else np.asarray(indices, dtype=np.int64)
        u = self.usage_table(net)
        pos = _positions(net, u.network)
        return sparse.csr_matrix((u.count, (pos, u.row)), shape=(len(net), len(self.stock_line)))

    def leaf(self, row: int) -> Leaf:
        return Leaf(float(self.stock_value[row]), float(self.stock_tolerance[row]), int(self.stock_line[row]))

    def node(self, i: int):
        """The network_tree node of network i (a Leaf per physical part)."""
        a, b, c = (list(self.members[i]) + [-1, -1])[:3]
        shape = int(self.shape[i])
        leaf = self.leaf
        if shape == SINGLE:
            return leaf(a)
        if shape in (SERIES2, PARALLEL2):
            return (Series if shape == SERIES2 else Parallel)((leaf(a), leaf(b)))
        if shape in (SERIES3, PARALLEL3):
            return (Series if shape == SERIES3 else Parallel)((leaf(a), leaf(b), leaf(c)))
        if shape == SERIES_IN_PARALLEL:
            return Parallel((Series((leaf(a), leaf(b))), leaf(c)))
        return Series((Parallel((leaf(a), leaf(b))), leaf(c)))

    def ranked(self, indices) -> np.ndarray:
        """`indices` reordered best first: fewest parts, tightest tolerance, then the tie-break columns."""
        idx = np.asarray(indices, dtype=np.int64)
        keys = [-np.nan_to_num(getattr(self, c)[idx], nan=-np.inf) for c in reversed(self._tie_break)]
        return idx[np.lexsort((*keys, self.tolerance[idx], self.parts[idx]))]

    def realisations(self, group: int) -> np.ndarray:
        """Every network realising distinct value number `group`, best first."""
        d = self.distinct()
        return self.ranked(np.arange(d.start[group], d.stop[group]))

    def distinct(self) -> Distinct:
        """Distinct values with their best realisation (cached)."""
        if self._distinct is None:
            v = self.value
            brk = np.ones(len(v), dtype=bool)
            brk[1:] = v[1:] > v[:-1] * (1.0 + DISTINCT_RTOL)
            start = np.flatnonzero(brk)
            group = np.cumsum(brk) - 1
            # Best per group by successive keys, each an O(n) pass: fewest parts, tightest
            # tolerance, then the tie-break columns (higher is better, NaN worst).
            alive = np.ones(len(v), dtype=bool)
            keys = [self.parts, self.tolerance] + [-np.nan_to_num(getattr(self, c), nan=-np.inf)
                                                   for c in self._tie_break]
            for key in keys:
                masked = np.where(alive, key, np.inf)
                alive &= masked == np.minimum.reduceat(masked, start)[group]
            best = np.minimum.reduceat(np.where(alive, np.arange(len(v)), len(v)), start)
            stop = np.append(start[1:], len(v))
            self._distinct = Distinct(v[best], best, self.parts[best], start, stop)
        return self._distinct


def _positions(net: np.ndarray, wanted: np.ndarray) -> np.ndarray:
    """For each entry of `wanted`, its position in `net` (entries of net are unique)."""
    order = np.argsort(net, kind="stable")
    return order[np.searchsorted(net[order], wanted)]
