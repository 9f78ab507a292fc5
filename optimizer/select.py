"""The design solver: the exact best designs for a spec from the parts on hand.

Search (exact for the objective in objective.py over the space in candidates.py):
  for resistor part budget B = fewest positions, +1, … (B = Σ fewest parts per value):
    screen every value tuple of budget B (candidates.tuples, pruned only by necessary
    conditions) at hFE min and max (feasible.check), choose its capacitors
    (capchoice.choose), add the survivors as rows;
    let CP-SAT (assign.py) pick the top designs over all rows so far under shared stock;
    stop once the N-th best uses ≤ B + 2 + 1 parts: every unscreened tuple needs
    ≥ B + 1 resistor parts, ≥ 2 capacitors and Q1, so cannot tie or win.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field

import numpy as np

from . import capchoice, objective
from .assign import Assignment
from .candidates import POSITIONS, Pool, min_positions, profiles, tuples, usable_transistors
from .capacitors import capacitor_options
from .feasible import Near, check, concat
from .spec import Bounds

MIN_CAPS = 2  # CIN and COUT are always fitted
ROWS_FIRST = 48  # rows handed to CP-SAT first (more follow while an excluded row could compete)
MAX_SCREENED = 60_000_000
MAX_REJECTED = 30  # designs the yield constraint may turn down before the search gives up  # a safety stop; reported in `why` when it ends the search


class Cancelled(Exception):
    pass


@dataclass
class Solution:
    """What the search found; select.find_designs turns it into the JSON document."""

    spec: object
    designs: list = field(default_factory=list)  # (assign.Choice, row dict)
    why: list = field(default_factory=list)
    notes: list = field(default_factory=list)
    near: Near = field(default_factory=Near)
    pool: Pool | None = None
    options: object = None
    qlines: list = field(default_factory=list)
    cap_failures: list = field(default_factory=list)  # rows that met the rest but found no capacitors
    cap_cache: dict = field(default_factory=dict)  # (values, transistor model) → capchoice.CapChoice | None
    bounds: object = None  # spec.Bounds the search pruned with
    stock_bound: bool = False
    exhaustive: bool = True
    budget: int = 0
    seconds: float = 0.0


def _row_dict(rows, i):
    return {k: (v[i] if np.ndim(v) else v) for k, v in rows.items()}


def _add_caps(topology, rows, spec, options, cap_qty, positions, sol):
    keep, extra = [], {k: [] for k in ("pc", "ec", "fc", "nf", "opt_CIN", "opt_COUT", "opt_CE")}
    n = len(rows["ge"])
    for i in range(n):
        row = _row_dict(rows, i)
        q = sol.qlines[int(row["q"])]
        # Lines of one transistor type share the physics, so their rows share the capacitors.
        key = (tuple(float(row[p]) for p in positions), q.transistor)
        if key not in sol.cap_cache:
            sol.cap_cache[key] = capchoice.choose(topology, row, spec, options, cap_qty) if len(options) else None
        c = sol.cap_cache[key]
        if c is None:
            if len(sol.cap_failures) < 50:
                sol.cap_failures.append((row, q))
            continue
        keep.append(i)
        extra["pc"].append(c.parts)
        extra["ec"].append(c.emptied + (1 if q.qty <= 1 else 0))
        extra["fc"].append(c.frac + objective.line_weight(q.qty))
        extra["nf"].append(c.nf)
        for p in capchoice.CAP_POSITIONS:
            extra[f"opt_{p}"].append(c.options.get(p, -1))
    out = {k: v[keep] for k, v in rows.items()}
    out.update({k: np.asarray(v, dtype=np.int64) for k, v in extra.items()})
    return out


def search(rstock, cstock, qlines, spec, *, top=3, depth=3, progress=None, cancel=None, accept=None) -> Solution:
    """The top `top` distinct designs (value tuples + transistor part) for `spec`; see the module docstring.

    accept(solution, choice, row) -> bool, if given, is one more constraint (e.g. the Monte Carlo yield):
    a design it rejects is excluded and the next best taken in its place.
    """
    t0 = time.perf_counter()
    topology = spec.topology
    positions = POSITIONS[topology]
    sol = Solution(spec, qlines=qlines)
    options = capacitor_options(cstock, 0.0, depth=2)
    sol.options = options
    cap_qty = np.asarray(cstock.qty, dtype=np.int64)
    if not qlines:
        sol.why.append("no usable NPN transistor line is in stock")
        return sol
    if len(rstock.qty) == 0:
        sol.why.append("no resistors are in stock")
        return sol
    if len(options) == 0:
        sol.why.append("no capacitors are in stock (CIN and COUT are always fitted)")
        return sol
    bounds = sol.bounds = Bounds.of(spec, float(options.value.max()))  # floors the capacitors on hand imply
    n_min = min_positions(topology)
    b_max = len(positions) * depth
    rows_all = []
    last_rows = 0
    models = {}
    for qi, q in enumerate(qlines):
        models.setdefault(q.transistor, []).append(qi)
    for budget in range(n_min, b_max + 1):
        sol.budget = budget
        level = min(depth, budget - n_min + 1)
        if sol.pool is None or sol.pool.depth < level:
            sol.pool = Pool(rstock, level)
        for profile in profiles(topology, budget, level):
            for model, members in models.items():
                q = qlines[members[0]]
                for chunk in tuples(topology, profile, sol.pool, bounds, q):
                    if cancel is not None and cancel.is_set():
                        raise Cancelled()
                    rows = check(topology, chunk, q, spec, sol.near)
                    if not len(rows["ge"]):
                        continue
                    rows["nsm"] = -rows["sm"]
                    rows["parts_lb"] = _parts_lb(sol.pool, rows, positions)
                    for qi in members:  # lines of one transistor type share the physics
                        rows_all.append(dict(rows, q=np.full(len(rows["ge"]), qi, dtype=np.int64)))
            if sol.near.screened > MAX_SCREENED:
                sol.exhaustive = False
                break
        if progress:
            progress(budget / b_max, f"screened {sol.near.screened:,} value tuples (≤ {budget} resistor parts)")
        n_rows = sum(len(r["ge"]) for r in rows_all)
        if n_rows and n_rows != last_rows:
            last_rows = n_rows
            sol.designs = _top(positions, concat(rows_all), sol, spec, top, cancel, accept,
                               lambda r, _: _add_caps(topology, r, spec, options, cap_qty, positions, sol))
        if len(sol.designs) >= top and sol.designs[-1][0].score.parts <= budget + MIN_CAPS + 1:
            break
        if not sol.exhaustive:
            sol.notes.append(f"search stopped after {sol.near.screened:,} tuples (≤ {budget} resistor parts); "
                             "designs are the best found so far")
            break
    sol.seconds = time.perf_counter() - t0
    if not sol.designs:
        sol.stock_bound = last_rows > 0
    return sol


def _parts_lb(pool, rows, positions):
    """Fewest parts a row can be built with: Σ fewest parts per value + its capacitors (≥ 1 each) + Q1."""
    d = pool.distinct
    lb = np.ones(len(rows["ge"]), dtype=np.int64)
    for p in positions:
        v = rows[p]
        g = np.clip(np.searchsorted(d.value, v * (1 - 1e-10)), 0, len(d) - 1)
        lb += np.where(v > 0, d.min_parts[g], 0)
    has_ce = rows["RE2"] > 0 if "RE2" in rows else np.zeros(len(lb), dtype=bool)
    return lb + MIN_CAPS + has_ce


def _top(positions, rows, sol, spec, top, cancel, accept, add_caps):
    """The top designs; rows enter CP-SAT in order of their lower bound until no excluded row can compete.

    A row's bound (fewest parts, its exact gain error and swing margin, then 0) is ≤ the score of any
    design built on it, so once the top-th design scores ≤ the best excluded bound the list is final.
    """
    order = np.lexsort((rows["nsm"], rows["ge"], rows["parts_lb"]))
    done = np.zeros(0, dtype=np.int64)
    chosen = {k: v[:0] for k, v in rows.items()}
    keep = None
    k = ROWS_FIRST
    while True:
        new = order[len(done):k]
        done = order[:k]
        if len(new):
            part = add_caps({key: v[new] for key, v in rows.items()}, None)
            chosen = {key: np.concatenate([chosen[key], part[key]]) if key in chosen else part[key]
                      for key in part}
        out = _solve_top(positions, chosen, sol, top, cancel, accept) if len(chosen["ge"]) else []
        if k >= len(order):
            return out
        nxt = order[k]
        bound = (int(rows["parts_lb"][nxt]), int(rows["ge"][nxt]), int(rows["nsm"][nxt]))
        if len(out) >= top and _key(out[-1][0].score) <= bound:
            return out
        k *= 4


def _key(score):
    return (score.parts, score.gain_error, score.neg_swing_margin)


def _solve_top(positions, rows, sol, top, cancel, accept):
    qty = _stock_qty(sol.pool)
    a = Assignment(positions, rows, sol.pool, qty, sol.qlines, cancel=cancel)
    out = []
    rejected = 0
    names = np.array([q.name for q in sol.qlines])
    while len(out) < top and rejected <= MAX_REJECTED:
        c = a.solve()
        if c is None:
            if a.stopped:
                raise Cancelled()
            break
        row = _row_dict(rows, c.row)
        if accept is None or accept(sol, c, row):
            out.append((c, row))
        else:
            rejected += 1
            if rejected > MAX_REJECTED:
                sol.notes.append(f"--min-yield: stopped after {MAX_REJECTED} designs below the yield asked for")
        # Forbid every row with the same values and the same transistor part (any line of it).
        same = np.ones(len(rows["q"]), dtype=bool)
        for p in positions:
            same &= rows[p] == rows[p][c.row]
        same &= names[rows["q"]] == names[rows["q"][c.row]]
        a.forbid(np.flatnonzero(same))
    return out


def _stock_qty(pool) -> np.ndarray:
    return np.asarray(pool.stock.qty, dtype=np.int64)



PREFERENCES = ("balanced", "parts", "clean", "robust", "frugal")
DEFAULT_PREFER = "balanced"
DEFAULT_TIME_LIMIT_S = 10.0


def find_designs(drawer, spec, *, top=3, depth=3, min_yield=None, progress=None, cancel=None,
                 hints=True, seed=None, prefer=DEFAULT_PREFER, time_limit_s=DEFAULT_TIME_LIMIT_S) -> dict:
    """The design result document (DEVELOPERS.md) for `spec` from an inventory Drawer.

    The document's "status" is "found" (designs non-empty), "infeasible" (proven: nothing in
    the drawer meets the spec) or "unproven" (nothing found within `time_limit_s`, not proven
    impossible); "optimal" says whether the trade-off set is proven complete.
    """
    from . import explain, result
    from .hints import HINT_MAX_OHMS, shopping_hints

    doc = {"designs": [], "why": [], "hints": [], "spec": result.spec_json(spec),
           "inventory": str(getattr(drawer, "path", "") or ""), "status": "unproven", "optimal": False,
           "unexplored": None}
    problems = spec.problems()
    if problems:
        doc["why"] = problems
        doc["error"] = "spec"
        return doc
    rstock, cstock = drawer.resistor_stock(), drawer.capacitor_stock()
    qlines, notes = usable_transistors(drawer.transistors())
    locations = {p.line: p.location for p in drawer.parts}
    mc_seed = result.MC_SEED if seed is None else int(seed)
    yields = {}

    def accept(sol, choice, row):
        y, mc = result.yield_of(sol, choice, spec, seed=mc_seed)
        yields[id(choice)] = (y, mc)
        return min_yield is None or y >= min_yield

    try:
        sol = search(rstock, cstock, qlines, spec, top=top, depth=depth, progress=progress, cancel=cancel,
                     accept=accept)
    except Cancelled:
        doc["why"] = ["cancelled"]
        doc["cancelled"] = True
        return doc
    doc["search"] = {"resistor_part_budget": sol.budget, "tuples_screened": sol.near.screened,
                     "seconds": round(sol.seconds, 3), "exhaustive": sol.exhaustive, "depth": depth}
    for choice, row in sol.designs:
        y, mc = yields.get(id(choice)) or result.yield_of(sol, choice, spec, seed=mc_seed)
        doc["designs"].append(result.design_json(sol, choice, row, spec, locations=locations, mc=mc, yld=y))
    doc["why"] = notes + (sol.notes if sol.designs else [])
    if not sol.designs:
        doc["why"] = explain.reasons(sol, spec) + notes
        if min_yield is not None and sol.designs == [] and yields:
            best = max(y for y, _ in yields.values())
            doc["why"].append(f"--min-yield {min_yield:g}: the best Monte Carlo yield among designs meeting "
                              f"the spec is {best:.1%}")
        skip = explain.no_purchase_helps(sol, spec, HINT_MAX_OHMS) if hints and qlines else None
        if skip:
            doc["why"].append(skip)
        elif hints and qlines:
            doc["hints"] = shopping_hints(rstock, cstock, qlines, spec, sol, depth=depth, search=search)
    doc["optimal"] = bool(sol.exhaustive)
    doc["status"] = "found" if doc["designs"] else ("infeasible" if sol.exhaustive else "unproven")
    if progress:
        progress(1.0, "done")
    return doc
