"""The stock-best networks for one value tuple, by enumeration instead of CP-SAT.

A design shown (or made exact in the trade-off set) is one row: its values, transistor line and
capacitors are fixed, and only the network realising each value is left to choose.  The choices
interact through shared drawer lines alone, so the combinations can be listed and scored with
the very objective assign.Assignment minimises (objective.py: parts, then the row's own levels,
then lines emptied and Σ used/qty).  That spares loading OR-Tools (with pandas, about half a
second) on most commands; a row with too many combinations is left to CP-SAT.
"""

from __future__ import annotations

import numpy as np

from optimizer.search import objective

# Combinations scored at once / at most; past the cap the caller falls back to CP-SAT.
CHUNK = 4096
MAX_COMBOS = 200_000


def realise_row(positions, row: dict, pool, stock_qty: np.ndarray):
    """(networks {position: table index | None}, Score) minimising the objective for one row, None
    when stock (or the networks' power ratings) rules it out, or NotImplemented past MAX_COMBOS.

    row: scalars for each position's value (0 = absent), "need_<p>" (µW), "pc", "ec", "fc",
    "ge", "nsm" and "nf", as select.py's rows carry them.  Ties keep the first combination in
    table order (CP-SAT's own tie-break may pick another network of equal score).
    """
    table = pool.table
    options = []
    for p in positions:
        val = float(row[p])
        if val == 0:
            options.append(np.array([-1], dtype=np.int64))
            continue
        nets = pool.networks_of(val)
        cap = objective.power_capacity_uw(table.power_w[nets]) if len(nets) else np.zeros(0)
        nets = nets[cap >= int(row[f"need_{p}"])]
        if not len(nets):
            return None
        options.append(nets.astype(np.int64))
    n_combo = int(np.prod([len(o) for o in options]))
    if n_combo > MAX_COMBOS:
        return NotImplemented
    # Stock rows any option uses: the only ones whose counts can change.
    members = np.concatenate([table.members[o[o >= 0]].ravel() for o in options] + [np.zeros(0, dtype=np.int64)])
    involved = np.unique(members[members >= 0])
    local = {int(r): k for k, r in enumerate(involved)}
    qty = np.asarray(stock_qty, dtype=np.int64)[involved]
    weight = np.array([objective.line_weight(int(q)) for q in qty], dtype=np.int64)
    # Per option: parts and a usage vector over the involved rows.
    per_pos = []
    for o in options:
        use = np.zeros((len(o), len(involved)), dtype=np.int64)
        parts = np.zeros(len(o), dtype=np.int64)
        for i, net in enumerate(o):
            if net < 0:
                continue
            parts[i] = int(table.parts[net])
            for m in table.members[net]:
                if m >= 0:
                    use[i, local[int(m)]] += 1
        per_pos.append((parts, use))
    best_key, best = None, None
    sizes = [len(o) for o in options]
    for start in range(0, n_combo, CHUNK):
        flat = np.arange(start, min(n_combo, start + CHUNK))
        idx = np.unravel_index(flat, sizes)
        parts = sum(pp[0][ix] for pp, ix in zip(per_pos, idx, strict=True))
        used = sum(pp[1][ix] for pp, ix in zip(per_pos, idx, strict=True))
        fits = (used <= qty).all(axis=1)
        if not fits.any():
            continue
        emptied = (used >= qty).sum(axis=1)  # as the CP-SAT model counts a line emptied
        frac = used @ weight
        keys = np.column_stack([parts, emptied, frac])[fits]
        k = int(np.lexsort(keys.T[::-1])[0])
        key = tuple(int(x) for x in keys[k])
        if best_key is None or key < best_key:
            best_key = key
            j = int(flat[fits][k])
            best = [int(o[i]) for o, i in zip(options, np.unravel_index(j, sizes), strict=True)]
    if best is None:
        return None
    parts, emptied, frac = best_key
    score = objective.Score(parts + int(row["pc"]) + 1, int(row["ge"]), int(row["nsm"]), int(row["nf"]),
                            emptied + int(row["ec"]), frac + int(row["fc"]))
    return {p: (None if n < 0 else n) for p, n in zip(positions, best, strict=True)}, score
