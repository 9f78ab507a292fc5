"""The trade-off set: designs no other beats on every count, what each is best at, and the order shown.

Four counts, each smaller-is-better once quantised to whole steps (so ties are real ties and the
solver and the exhaustive oracle compare the very same integers):

  parts      physical parts in total (resistors, capacitors, the transistor);
  thd        worst-corner THD at the asked swing, in steps of 0.01 % (rounded up);
  fragility  100 − the worst-corner margin in whole % (the margin, rounded down, is the least
             spare fraction of any limit at any corner: gain tolerance, swing, Rin, VCE, THD);
  current    worst-corner supply current in steps of 10 µA (rounded up).

The steps are what a bench can tell apart; finer ones only multiply near-equal designs.

A design is in the set when no other is at least as good on all four and better on one.
Labels: "parts" (fewest parts), "clean" (least THD), "robust" (largest margin), "frugal"
(least current) and "balanced" (least balanced score); ties go to fewer parts, then to the
balanced score, then to the counts in order (parts, THD, fragility, current).  The balanced
score sums the four counts, each scaled over the set to 0 (the best in the set) … 1 (the
worst), with equal weights; it is the default preference.
"""

from __future__ import annotations

import numpy as np

LABELS = ("balanced", "parts", "clean", "robust", "frugal")
COUNTS = ("parts", "thd", "fragility", "current")
THD_STEP = 1e-4  # 0.01 %
MARGIN_STEP = 1e-2  # 1 %
CURRENT_STEP_A = 1e-5  # 10 µA
BLOCK = 128


def counts(parts, thd, robustness, supply_a) -> np.ndarray:
    """(n, 4) int64 array of the quantised counts (see the module docstring)."""
    parts = np.asarray(parts, dtype=np.int64)
    q_thd = np.ceil(np.asarray(thd, dtype=float) / THD_STEP - 1e-9)
    q_frag = 100 - np.floor(np.asarray(robustness, dtype=float) / MARGIN_STEP + 1e-9)
    q_cur = np.ceil(np.asarray(supply_a, dtype=float) / CURRENT_STEP_A - 1e-9)
    return np.column_stack([parts, q_thd.astype(np.int64), q_frag.astype(np.int64), q_cur.astype(np.int64)])


def nondominated(c: np.ndarray) -> np.ndarray:
    """Indices of the rows of `c` (n, k; smaller better) that no other row dominates.

    A dominator is lexicographically smaller, so rows are taken in lexicographic order and each
    is compared only with the front so far and the earlier rows of its block.
    """
    c = np.asarray(c)
    if len(c) == 0:
        return np.zeros(0, dtype=np.int64)
    order = np.lexsort(c.T[::-1])
    s = c[order]
    front = np.zeros((0, c.shape[1]), dtype=c.dtype)
    keep = []
    for b0 in range(0, len(s), BLOCK):
        blk = s[b0:b0 + BLOCK]
        dom = np.zeros(len(blk), dtype=bool)
        if len(front):
            le = (front[None, :, :] <= blk[:, None, :]).all(axis=2)
            lt = (front[None, :, :] < blk[:, None, :]).any(axis=2)
            dom |= (le & lt).any(axis=1)
        le = (blk[None, :, :] <= blk[:, None, :]).all(axis=2)
        lt = (blk[None, :, :] < blk[:, None, :]).any(axis=2)
        earlier = np.tri(len(blk), k=-1, dtype=bool)
        dom |= (le & lt & earlier).any(axis=1)
        new = np.flatnonzero(~dom)
        front = np.concatenate([front, blk[new]])
        keep.extend((b0 + new).tolist())
    return np.sort(order[np.asarray(keep, dtype=np.int64)])


def dominated_by(front: np.ndarray, c: np.ndarray) -> np.ndarray:
    """Bool per row of `c`: does some row of `front` dominate it?"""
    out = np.zeros(len(c), dtype=bool)
    if not len(front) or not len(c):
        return out
    step = max(1, 2_000_000 // (len(front) * c.shape[1]))
    for b0 in range(0, len(c), step):
        blk = c[b0:b0 + step]
        le = (front[None, :, :] <= blk[:, None, :]).all(axis=2)
        lt = (front[None, :, :] < blk[:, None, :]).any(axis=2)
        out[b0:b0 + step] = (le & lt).any(axis=1)
    return out


def balanced_score(c: np.ndarray) -> np.ndarray:
    """Sum over the counts of (value − best) / (worst − best) within `c` (0 where all are equal)."""
    c = np.asarray(c, dtype=float)
    lo, hi = c.min(axis=0), c.max(axis=0)
    span = np.where(hi > lo, hi - lo, 1.0)
    return ((c - lo) / span).sum(axis=1)


def preference_order(c: np.ndarray, prefer: str) -> np.ndarray:
    """Indices of `c` best first for `prefer` (one of LABELS)."""
    bal = balanced_score(c)
    parts, thd, frag, cur = (c[:, k] for k in range(4))
    keys = {
        "balanced": (bal, parts),
        "parts": (parts, bal),
        "clean": (thd, parts, bal),
        "robust": (frag, parts, bal),
        "frugal": (cur, parts, bal),
    }[prefer]
    # Full ties (equal balanced scores can come from different counts) go to the counts in order, so
    # the order never depends on the order the rows came in.
    keys = keys + (parts, thd, frag, cur)
    return np.lexsort(tuple(reversed(keys)))


def labels(c: np.ndarray) -> dict[str, int]:
    """Label → index of the design in `c` best at it."""
    return {lab: int(preference_order(c, lab)[0]) for lab in LABELS} if len(c) else {}


def shown(c: np.ndarray, prefer: str, top: int) -> list[tuple[int, list[str]]]:
    """At most `top` designs to show, as (index, labels), best first for `prefer` (so the first is
    the preferred design): every label's winner while room is left, then the next best whose counts
    differ from every design already picked."""
    if not len(c):
        return []
    order = preference_order(c, prefer)
    won = labels(c)
    rank = {int(i): k for k, i in enumerate(order)}
    winners = sorted(set(won.values()), key=rank.get)
    pick = winners[:max(1, top)]
    seen = {tuple(c[i]) for i in pick}
    for i in order:  # then the next best, one per distinct set of counts (equal counts are twins)
        if len(pick) >= top:
            break
        if int(i) not in pick and tuple(c[i]) not in seen:
            pick.append(int(i))
            seen.add(tuple(c[i]))
    pick.sort(key=rank.get)
    return [(i, [lab for lab in LABELS if won[lab] == i]) for i in pick]
