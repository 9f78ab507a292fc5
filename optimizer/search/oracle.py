"""The exhaustive oracle: every assignment of physical networks to positions, every capacitor
combination and every transistor line, checked with the same physics and scored with the same
objective as select.py — without its budget order, pruning, capacitor shortcuts or CP-SAT.

Only for small drawers (the tests and the benchmark); `max_combos` guards against a blow-up.
"""

from __future__ import annotations

import numpy as np

from optimizer.parts import capchoice
from optimizer.physics import lowcut
from optimizer.search import objective, tradeoff
from optimizer.search.candidates import OPTIONAL, POSITIONS, WINDOW_OHMS
from optimizer.parts.capacitors import capacitor_options
from optimizer.search.feasible import check
from optimizer.parts.networks import resistor_networks


CHUNK = 400_000


class TooBig(Exception):
    pass


def _dense_usage(table, n_stock):
    u = np.zeros((len(table) + 1, n_stock), dtype=np.int64)  # last row: the absent position
    for c in range(table.members.shape[1]):
        m = table.members[:, c]
        ok = m >= 0
        np.add.at(u, (np.flatnonzero(ok), m[ok]), 1)
    return u


def _best_caps(topology, row, spec, opts, qty, weights):
    """(parts, emptied, Σ used·weight, nF) of the lexicographic minimum (parts, nF, emptied, Σ used·weight)."""
    pos = capchoice.positions_for(row)
    vdc = capchoice.dc_across(topology, row)
    idx = [np.arange(len(opts))] * len(pos)
    mesh = [m.ravel() for m in np.meshgrid(*idx, indexing="ij")]
    ok = np.ones(len(mesh[0]), dtype=bool)
    use = np.zeros((len(ok), len(qty)), dtype=np.int64)
    for p, m in zip(pos, mesh, strict=True):
        need = vdc[p] * capchoice.CAP_VOLTAGE_MARGIN
        if need > 0:
            ok &= opts.voltage_v[m] >= need
        for c in range(opts.members.shape[1]):
            r = opts.members[m, c]
            has = r >= 0
            np.add.at(use, (np.flatnonzero(has), r[has]), 1)
    ok &= (use <= qty).all(axis=1)
    vals = {p: opts.value[m] for p, m in zip(pos, mesh, strict=True)}
    ok &= lowcut.meets_low_cut(topology, row, spec, *(vals.get(q, np.inf) for q in capchoice.CAP_POSITIONS))
    if not ok.any():
        return None
    parts = sum(opts.parts[m].astype(np.int64) for m in mesh)
    emptied = ((use >= qty) & (use > 0)).sum(axis=1)
    frac = use @ weights
    nf = np.rint(sum(vals.values()) / objective.NF).astype(np.int64)
    f = np.flatnonzero(ok)
    n_parts, n_nf, n_emptied, n_frac = sorted(zip(parts[f], nf[f], emptied[f], frac[f], strict=True))[0]
    return int(n_parts), int(n_emptied), int(n_frac), int(n_nf)


def oracle(rstock, cstock, qlines, spec, *, depth=3, top=3, max_combos=2_000_000):
    """Sorted list of the best objective.Score per distinct design (values + transistor part), best `top`."""
    best = _all_designs(rstock, cstock, qlines, spec, depth=depth, max_combos=max_combos)
    return sorted(v[0] for v in best.values())[:top]


def _all_designs(rstock, cstock, qlines, spec, *, depth, max_combos):
    """(values, transistor part) → (best objective.Score, worst-corner THD, margin, supply current)."""
    topology = spec.topology
    positions = POSITIONS[topology]
    table = resistor_networks(rstock, depth, *WINDOW_OHMS)
    rqty = np.asarray(rstock.qty, dtype=np.int64)
    usage = _dense_usage(table, len(rqty))
    n = len(table)
    choices = [np.arange(n + 1) if p in OPTIONAL[topology] else np.arange(n) for p in positions]
    total = int(np.prod([len(c) for c in choices], dtype=float))
    if total > max_combos:
        raise TooBig(f"{total} network assignments")
    opts = capacitor_options(cstock, 0.0, depth=2)
    cqty = np.asarray(cstock.qty, dtype=np.int64)
    cweights = objective.line_weights(cqty)
    rweights = objective.line_weights(rqty)
    best, caps_seen = {}, {}
    step = max(1, CHUNK // max(1, total // len(choices[0])))
    for s0 in range(0, len(choices[0]), step):  # in slices of the first position, to bound memory
        sub = [choices[0][s0:s0 + step]] + choices[1:]
        _enumerate(topology, positions, sub, table, usage, rqty, rweights, spec, qlines, opts, cqty, cweights,
                   best, caps_seen)
    return best


def oracle_front(rstock, cstock, qlines, spec, *, depth=3, spare=2, max_combos=2_000_000) -> list[tuple]:
    """The trade-off set by plain enumeration: sorted distinct tradeoff.counts tuples of the designs
    no other beats, among designs of at most `spare` parts more than the fewest (select.SPARE_PARTS)."""
    best = _all_designs(rstock, cstock, qlines, spec, depth=depth, max_combos=max_combos)
    if not best:
        return []
    vals = list(best.values())
    parts = np.array([v[0].parts for v in vals])
    keep = parts <= parts.min() + spare
    c = tradeoff.counts(parts[keep], *(np.array([v[k] for v, ok in zip(vals, keep, strict=True) if ok])
                                      for k in (1, 2, 3)))
    front = c[tradeoff.nondominated(c)]
    return sorted({tuple(int(x) for x in row) for row in front})


def _enumerate(topology, positions, choices, table, usage, rqty, rweights, spec, qlines, opts, cqty, cweights,
               best, caps_seen):
    mesh = [m.ravel() for m in np.meshgrid(*choices, indexing="ij")]
    use = sum(usage[m] for m in mesh)
    fits = (use <= rqty).all(axis=1)
    mesh = [m[fits] for m in mesh]
    use = use[fits]
    if not len(use):
        return
    value = np.append(table.value, 0.0)
    parts = np.append(table.parts.astype(np.int64), 0)
    cap_uw = np.append(objective.power_capacity_uw(table.power_w), 0)
    vals = {p: value[m] for p, m in zip(positions, mesh, strict=True)}
    rparts = sum(parts[m] for m in mesh)
    r_emptied = ((use >= rqty) & (use > 0)).sum(axis=1)
    r_frac = use @ rweights
    tuples_, inverse = np.unique(np.column_stack([vals[p] for p in positions]), axis=0, return_inverse=True)
    inverse = np.ravel(inverse)
    for q in qlines:
        chunk = {p: tuples_[:, k] for k, p in enumerate(positions)}
        rows = check(topology, chunk, q, spec)
        if not len(rows["ge"]):
            continue
        for i, t_idx in enumerate(rows["idx"]):
            tup = tuples_[t_idx]
            row = {k: v[i] for k, v in rows.items()}
            ckey = (tuple(float(x) for x in tup), q.transistor)
            if ckey not in caps_seen:
                caps_seen[ckey] = _best_caps(topology, row, spec, opts, cqty, cweights) if len(opts) else None
            caps = caps_seen[ckey]
            if caps is None:
                continue
            pc, ec, fc, nf = caps
            sel = np.flatnonzero(inverse == t_idx)
            ok = np.ones(len(sel), dtype=bool)
            for p, m in zip(positions, mesh, strict=True):
                ok &= cap_uw[m[sel]] >= row[f"need_{p}"]
            for j in sel[ok]:
                score = objective.Score(parts=int(rparts[j]) + pc + 1, gain_error=int(row["ge"]),
                                        neg_swing_margin=-int(row["sm"]), cap_nf=nf,
                                        emptied=int(r_emptied[j]) + ec + (1 if q.qty <= 1 else 0),
                                        used_frac=int(r_frac[j]) + fc + objective.line_weight(q.qty))
                key = (tuple(float(x) for x in tup), q.name)
                if key not in best or score < best[key][0]:
                    best[key] = (score, float(row["thd"]), float(row["rob"]), float(row["isup"]))
