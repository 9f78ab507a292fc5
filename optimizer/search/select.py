"""The design solver: the exact best designs for a spec from the parts on hand.

Search (exact for the objective in objective.py over the space in candidates.py):
  for resistor part budget B = fewest positions, +1, … (B = Σ fewest parts per value):
    screen every value tuple of budget B (candidates.tuples, pruned only by necessary
    conditions) at hFE min and max (feasible.check), choose its capacitors
    (capchoice.choose), add the survivors as rows;
    let CP-SAT (assign.py) pick the top designs over all rows so far under shared stock;
    stop once the N-th best uses ≤ B + 2 + 1 parts: every unscreened tuple needs
    ≥ B + 1 resistor parts, ≥ 2 capacitors and Q1, so cannot tie or win.

Anytime: the time limit, a cancel, or the settled rule (`patience`: the designs the trade-off set
shows have not changed for that many seconds of search, and no screened row waits to be folded in) end the
search early with the set found so far, reported as not proven ("exhaustive" False).
"""

from __future__ import annotations

import importlib
import sys
import time
from dataclasses import dataclass, field

import numpy as np

from optimizer import kinds
from optimizer.parts import capchoice
from optimizer.physics import polarity
from optimizer.search import objective, stopwatch, tradeoff
from optimizer.parts.assign import Assignment, Choice
from optimizer.search.candidates import POSITIONS, Pool, min_positions, profiles, tuples, usable_transistors
from optimizer.parts.capacitors import capacitor_options
from optimizer.parts.one_row import realise_row
from optimizer.search.feasible import Near, check, concat
from optimizer.search.seed import IC_LADDER_A, MIN_IC_A, seed_tuples
from optimizer.spec import (  # noqa: F401
    ANY_TOPOLOGY,
    DEFAULT_DEPTH,
    DEFAULT_PATIENCE_S,
    DEFAULT_PREFER,
    DEFAULT_TIME_LIMIT_S,
    DEFAULT_TOP,
    PREFERENCES,
    Bounds,
)

MIN_CAPS = 2  # CIN and COUT are always fitted
MAX_SCREENED = 60_000_000  # a safety stop; reported in `why` when it ends the search
MAX_REJECTED = 30  # designs the yield constraint may turn down before the search gives up
# The trade-off set spans designs of up to this many parts more than the fewest that meet the
# spec: past that, more parts buy too little to be worth a bench's time (design decision).
SPARE_PARTS = 2
SETTLE_ROWS = 4000  # pending rows folded into the trade-off set at a time
SETTLE_GRACE_S = 0.2  # after a stop, for the rows screened just before it
EXACT_BATCH = 16  # front rows made exact (capacitors chosen) at a time
SETTLE_EVERY_MAX_S = 1.0  # under the settled rule, rows are folded in at least this often (and every half patience)

Cancelled = stopwatch.Cancelled


def min_caps(spec) -> int:
    """Capacitors every design fits: CIN and COUT, less CIN when the source is DC-coupled."""
    return MIN_CAPS - bool(getattr(spec, "dc_input", False))


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
    cap_parts: dict = field(default_factory=dict)  # the same key → capchoice.fewest_parts (int | None)
    bounds: object = None  # spec.Bounds the search pruned with
    stock_bound: bool = False
    exhaustive: bool = True
    budget: int = 0
    seconds: float = 0.0
    started: float = 0.0  # time.perf_counter() at the start of the search
    first_design_s: float | None = None  # seconds from the start until a design was first in hand
    searched: int | None = None  # the last resistor part budget screened in full
    stopped_by: str | None = None  # "time limit", "cancelled", "settled" or "size" when it stopped early
    unexplored: str | None = None
    front_counts: object = None  # tradeoff.counts of the whole trade-off set (n, 4)
    last_change_s: float | None = None  # seconds into the search when the designs shown last changed
    front_trace: list = field(default_factory=list)  # (seconds, counts (n, 4)) at every change of the set


def _row_dict(rows, i):
    return {k: (v[i] if np.ndim(v) else v) for k, v in rows.items()}


def _add_caps(topology, rows, spec, options, cap_qty, positions, sol):
    keep, extra = [], {k: [] for k in ("pc", "ec", "fc", "nf", "opt_CIN", "opt_COUT", "opt_CE")}
    n = len(rows["ge"])
    for i in range(n):
        stopwatch.poll()
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


def _add_cap_parts(topology, rows, spec, options, cap_qty, positions, sol):
    """Rows with "pc" (the fewest capacitor parts, capchoice.fewest_parts) and no capacitors chosen
    yet: all the trade-off counts need; `_add_caps` chooses them for the rows realised."""
    keep, pc = [], []
    n = len(rows["ge"])
    keys = [(tuple(float(rows[p][i]) for p in positions), sol.qlines[int(rows["q"][i])].transistor) for i in range(n)]
    new = [i for i, key in enumerate(keys) if key not in sol.cap_parts and key not in sol.cap_cache]
    if new and len(options):  # the plain rows in one vectorised test, the rest one by one below
        idx = np.asarray(new)
        fast = capchoice.fewest_parts_many(topology, {k: v[idx] for k, v in rows.items()}, spec, options, cap_qty)
        for i, f in zip(new, fast.tolist(), strict=True):
            if f >= 0:
                sol.cap_parts[keys[i]] = f
    for i in range(n):
        stopwatch.poll()
        row = _row_dict(rows, i)
        q = sol.qlines[int(row["q"])]
        key = keys[i]
        if key not in sol.cap_parts:
            c = sol.cap_cache.get(key, False)
            sol.cap_parts[key] = (c.parts if c else None) if c is not False else (
                capchoice.fewest_parts(topology, row, spec, options, cap_qty) if len(options) else None)
        n = sol.cap_parts[key]
        if n is None:
            if len(sol.cap_failures) < 50:
                sol.cap_failures.append((row, q))
            continue
        keep.append(i)
        pc.append(n)
    out = {k: v[keep] for k, v in rows.items()}
    out["pc"] = np.asarray(pc, dtype=np.int64)
    return out


def search(rstock, cstock, qlines, spec, *, top=3, depth=3, progress=None, cancel=None, accept=None,
           prefer="balanced", deadline=None, spare_parts=SPARE_PARTS, patience=None, empty_deadline=None) -> Solution:
    """The trade-off set for `spec` (see the module docstring) and the designs to show from it.

    accept(solution, choice, row) -> bool, if given, is one more constraint (e.g. the Monte Carlo yield):
    a design it rejects leaves the set and the set is taken again without it.
    deadline (time.perf_counter() value) and cancel (threading.Event) stop the screening; the
    designs found so far are still returned, with `exhaustive` False.  patience (seconds; None
    or 0 = off) stops it too once the trade-off set is non-empty and the designs it shows have not
    changed for that long.
    empty_deadline (later than deadline) is when the search stops while it has no design yet: the
    time deadline keeps for analysing designs is not needed then.
    """
    t0 = time.perf_counter()
    topology = spec.topology
    positions = POSITIONS[topology]
    sol = Solution(spec, qlines=qlines, started=t0)
    options = capacitor_options(cstock, 0.0, depth=2)
    sol.options = options
    cap_qty = np.asarray(cstock.qty, dtype=np.int64)
    if not qlines:
        sol.why.append("no usable transistor line (NPN or PNP with an hFE range) is in stock")
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
    models = {}
    for qi, q in enumerate(qlines):
        models.setdefault(q.transistor, []).append(qi)
    front = _Front(positions, sol, lambda r: _add_caps(topology, r, spec, options, cap_qty, positions, sol),
                   lambda r: _add_cap_parts(topology, r, spec, options, cap_qty, positions, sol),
                   keep_dominated=accept is not None, spare=spare_parts, patience=patience, t0=t0, prefer=prefer)
    if empty_deadline is not None and deadline is not None and empty_deadline > deadline:
        front.deadline, deadline = deadline, empty_deadline  # the front enforces the earlier one once it has a design
    budget = n_min
    try:
        with stopwatch.watch(cancel, deadline, front.quiet):
            # Pools grow with the budget (a deep table on a large drawer takes seconds); a value's
            # fewest parts are the same in every pool that holds it, so rows keep their meaning.
            sol.pool = Pool(rstock, min(depth, 2))
            ruled_out = _ruled_out(topology, sol, spec, depth)
            if not ruled_out:
                _screen_seeds(topology, positions, spec, models, qlines, sol, front)
            for budget in range(n_min, b_max + 1):
                if ruled_out:
                    break  # proven at the spec level: every tuple of every budget breaks the same bound
                if budget + min_caps(spec) + 1 > front.fewest_parts + spare_parts:
                    break  # every design left needs more parts than the set spans
                sol.budget = budget
                level = min(depth, budget - n_min + 1)
                if sol.pool.depth < level:
                    sol.pool = Pool(rstock, level)
                for profile in _anytime_order(profiles(topology, budget, level), sol.pool):
                    for model, members in models.items():
                        q = qlines[members[0]]
                        for chunk in tuples(topology, profile, sol.pool, bounds, q):
                            stopwatch.poll()
                            _add_rows(check(topology, chunk, q, spec, sol.near), members, positions, sol, front)
                            front.stop_if_settled()
                    front.settle()
                    front.stop_if_settled()
                    if sol.near.screened > MAX_SCREENED:
                        raise _Overrun()
                front.settle()
                sol.searched = budget
                if progress:
                    found = f", {len(front)} in the trade-off set" if len(front) else ""
                    progress(min(0.95, (budget - n_min + 1) / (b_max - n_min + 1)),
                             f"screened {sol.near.screened:,} value tuples (≤ {budget} resistor parts){found}")
    except stopwatch.Stopped as exc:
        sol.exhaustive = False
        sol.stopped_by = ("cancelled" if isinstance(exc, stopwatch.Cancelled)
                          else "settled" if isinstance(exc, stopwatch.Settled) else "time limit")
        sol.unexplored = _unexplored(sol, budget, b_max, front)
        if sol.stopped_by == "settled":
            sol.unexplored = (f"settled: the preferred design had not changed for {patience:g} s (--patience), "
                              f"so the search stopped; left: {sol.unexplored}")
    except _Overrun:
        sol.exhaustive = False
        sol.stopped_by = "size"
        sol.unexplored = _unexplored(sol, budget, b_max, front)
        sol.notes.append(f"search stopped after {sol.near.screened:,} tuples (≤ {budget} resistor parts); "
                         "designs are the best found so far")
    if sol.stopped_by in ("time limit", "cancelled", "settled"):
        # Rows screened just before the stop are folded in only as far as a short grace allows
        # (after a settled stop, as far as the time limit allows).
        grace = (front.deadline or deadline) if sol.stopped_by == "settled" else time.perf_counter() + SETTLE_GRACE_S
        try:
            with stopwatch.watch(cancel, deadline=grace):
                front.settle()
        except stopwatch.Stopped:
            pass
    else:
        front.settle()
    sol.designs = front.pick(prefer, top, accept)
    sol.seconds = time.perf_counter() - t0
    sol.last_change_s, sol.front_trace = front.last_change_s, front.trace
    if not sol.designs:
        sol.stock_bound = front.stock_bound
    return sol


# Spec-level bounds (Kind.spec_bounds) that are proofs: physics (gain against the supply, the current a
# swing needs) and Rin against the largest network the pool makes (a proof only when the pool is as deep
# as the search may go).
PROOF_BOUNDS = ("gain", "current")


def _ruled_out(topology, sol, spec, depth) -> bool:
    hook = kinds.get(topology).spec_bounds
    if hook is None:
        return False
    binding = set(hook(sol, spec))
    return bool(binding & set(PROOF_BOUNDS)) or ("rin" in binding and sol.pool.depth >= depth)


def _screen_seeds(topology, positions, spec, models, qlines, sol, front):
    """The stocked neighbours of the ideal values (seed.py), screened first: good designs early.
    The budget loop screens them again in their turn, so the set's completeness rests on it alone."""
    for floor in (MIN_IC_A,) + IC_LADDER_A:  # the ladder only while nothing is in hand
        for members in models.values():
            q = qlines[members[0]]
            chunk = seed_tuples(topology, spec, q, sol.pool, floor)
            if not len(chunk[positions[0]]):
                continue
            _add_rows(check(topology, {p: chunk[p] for p in positions}, q, spec), members, positions, sol, front)
        front.settle()
        if front.fewest_parts < np.inf:
            return


def _add_rows(rows, members, positions, sol, front):
    """Checked rows into the trade-off set, once per line of the transistor type (same physics)."""
    if not len(rows["ge"]):
        return
    rows["nsm"] = -rows["sm"]
    rows["parts_lb"] = _parts_lb(sol.pool, rows, positions, min_caps(sol.spec))
    for qi in members:
        front.add(dict(rows, q=np.full(len(rows["ge"]), qi, dtype=np.int64)))


def _anytime_order(profs, pool):
    """Profiles with the plainest networks first (fewest parts at any one position), then the
    smallest: single resistors are what a bench reaches for, and small profiles finish soon."""
    def size(p):
        return float(np.prod([max(1, len(pool.group(k))) for k in p.values()]))
    return sorted(profs, key=lambda p: (max(p.values()), size(p)))


class _Overrun(Exception):
    pass


def _unexplored(sol, budget, b_max, front) -> str:
    done = getattr(sol, "searched", None)
    span = "" if front.fewest_parts == np.inf else f" (the set spans designs of up to {front.fewest_parts + SPARE_PARTS} parts)"
    if done is None:
        return f"value tuples of {budget} to {b_max} resistor parts, from {budget} on{span}"
    return f"value tuples of {done + 1} to {b_max} resistor parts{span}"


class _Front:
    """The rows no other beats (tradeoff.py), kept as the search goes, with the counts made exact
    lazily: a row enters with its optimistic part count (each capacitor one part) and is made
    exact (capacitors chosen, fewest-parts networks checked against stock) only while it is in
    the front; a row an exact row dominates can never come back (rows only ever add dominators),
    so it is dropped, which keeps memory to the front's size."""

    def __init__(self, positions, sol, add_caps, add_cap_parts=None, keep_dominated=False, spare=SPARE_PARTS,
                 patience=None, t0=None, prefer=DEFAULT_PREFER):
        self.positions = positions
        self.spare = spare
        self.sol = sol
        self.add_caps = add_caps  # rows → rows with their capacitors chosen (for realising)
        self.add_cap_parts = add_cap_parts or add_caps  # rows → rows with "pc" (for the counts)
        self.keep_dominated = keep_dominated
        self.pending = []
        self.n_pending = 0
        self.rows = None  # exact rows (dict of arrays), every one with "pc" and "parts" (capacitors chosen at pick)
        self.fewest_parts = np.inf
        self.stock_bound = False
        # The settled rule: the set as a user would see it (within `spare` parts of the fewest),
        # when it last changed, and the time a settled stop is due (None while the set is empty).
        self.patience = patience if patience and patience > 0 else None
        self.t0 = time.perf_counter() if t0 is None else t0
        self.signature = frozenset()
        self.preferred = None
        self.prefer = prefer
        self.last_change_s = None
        self.quiet_until = None
        self.busy = False
        self.deadline = None  # with a design in hand the search stops here (see search's empty_deadline)
        self.settled_at = self.t0
        self.trace = []

    def __len__(self):
        return 0 if self.rows is None else len(self.rows["ge"])

    def add(self, rows):
        self.pending.append(rows)
        self.n_pending += len(rows["ge"])
        # Under the settled rule rows are folded in at least every half patience, so a change is
        # seen within it.
        if self.n_pending >= SETTLE_ROWS or (
                self.patience is not None
                and time.perf_counter() - self.settled_at >= min(self.patience / 2, SETTLE_EVERY_MAX_S)):
            self.settle()

    def settle(self):
        """Fold the pending rows in: make front members exact until the front is all exact.

        Polls the stop watch; a stop part-way leaves the front as it was before the call."""
        if not self.pending:
            return
        self.busy = True
        try:
            self._settle()
        finally:
            self.busy = False
            self.settled_at = time.perf_counter()

    def quiet_time_up(self) -> bool:
        return self.quiet_until is not None and time.perf_counter() >= self.quiet_until

    def quiet(self):
        """For the stop watch: OutOfTime once a design is in hand and the deadline for that case has
        passed; True when a settled stop is due (not while folding rows in: rows screened but not
        yet folded in are folded in after the stop, so the set shown includes them)."""
        if self.deadline is not None and self.fewest_parts < np.inf and time.perf_counter() >= self.deadline:
            return stopwatch.OutOfTime
        return not self.busy and self.quiet_time_up()

    def stop_if_settled(self):
        """Raise stopwatch.Settled when the patience has run out and folding in the rows screened
        meanwhile does not change the set."""
        if self.quiet_time_up():
            self.settle()
            if self.quiet_time_up():
                raise stopwatch.Settled()

    def _settle(self):
        new = concat(self.pending)
        self.pending, self.n_pending = [], 0
        new["parts"] = new["parts_lb"].astype(np.int64)
        new["exact"] = np.zeros(len(new["ge"]), dtype=bool)
        if self.rows is not None and not self.keep_dominated and len(self.rows["ge"]):
            # Rows the exact front already beats can never come back: drop them before sorting.
            beaten = tradeoff.dominated_by(
                tradeoff.counts(self.rows["parts"], self.rows["thd"], self.rows["rob"], self.rows["isup"]),
                tradeoff.counts(new["parts"], new["thd"], new["rob"], new["isup"]))
            new = {k: v[~beaten] for k, v in new.items()}
        rows = new if self.rows is None else _cat(self.rows, new)
        done = []
        try:
            while True:
                c = tradeoff.counts(rows["parts"], rows["thd"], rows["rob"], rows["isup"])
                f = tradeoff.nondominated(c)
                todo = f[~rows["exact"][f]]
                if not len(todo):
                    break
                # A few at a time, most promising first, so a stop keeps what was made exact.
                todo = todo[tradeoff.preference_order(c[todo], "balanced")]
                done = []
                for b0 in range(0, len(todo), EXACT_BATCH):
                    done.append(self._exact({k: v[todo[b0:b0 + EXACT_BATCH]] for k, v in rows.items()}))
                keep = np.ones(len(rows["ge"]), dtype=bool)
                keep[todo] = False
                rows = _cat({k: v[keep] for k, v in rows.items()}, concat(done))
                done = []
        except stopwatch.Stopped:
            exact = {k: v[rows["exact"]] for k, v in rows.items()}
            self._commit(_cat(exact, concat(done)) if done else exact)
            raise
        self._commit(rows if self.keep_dominated else {k: v[f] for k, v in rows.items()})

    def _commit(self, rows):
        exact = rows["exact"]
        if exact.any():
            self.fewest_parts = min(self.fewest_parts, int(rows["parts"][exact].min()))
            if self.sol.first_design_s is None:
                self.sol.first_design_s = time.perf_counter() - self.sol.started
        self.rows = rows
        self._note_change()

    def _note_change(self):
        """Record a change of the set (the exact rows' counts within `spare` parts of the fewest,
        as pick shows them) for the settled rule and the trace."""
        rows = self.rows
        exact = rows["exact"]
        if not exact.any():
            return
        c = tradeoff.counts(rows["parts"][exact], rows["thd"][exact], rows["rob"][exact], rows["isup"][exact])
        c = c[c[:, 0] <= c[:, 0].min() + self.spare]
        c = np.unique(c[tradeoff.nondominated(c)], axis=0)
        sig = frozenset(map(tuple, c.tolist()))
        if sig == self.signature:
            return
        now = time.perf_counter()
        self.signature = sig
        self.trace.append((now - self.t0, c))
        # The patience runs from the last change of the design a user is handed first (designs[0],
        # the preferred one for --prefer): the other labels' winners keep improving long after it
        # has settled (tests.bench.settle traces), and no answer to the user's question changes.
        preferred = tuple(c[tradeoff.preference_order(c, self.prefer)[0]].tolist())
        if preferred == self.preferred:
            return
        self.preferred = preferred
        self.last_change_s = now - self.t0
        if self.patience is not None:
            self.quiet_until = now + self.patience

    def _exact(self, rows):
        """Rows with parts made exact (the fewest capacitor parts, fewest-parts networks against
        stock, CP-SAT when those do not fit); rows that cannot be built dropped."""
        rows = self.add_cap_parts(rows)
        if not len(rows["ge"]):
            return rows
        has_ce = rows["RE2"] > 0 if "RE2" in rows else np.zeros(len(rows["ge"]), dtype=bool)
        res_parts = rows["parts_lb"] - min_caps(self.sol.spec) - has_ce - 1
        parts = res_parts + rows["pc"] + 1
        ok = np.ones(len(parts), dtype=bool)
        for i in np.flatnonzero(~_greedy_fits(self.sol.pool, rows, self.positions)):
            one = self.add_caps({k: v[i:i + 1] for k, v in rows.items()})
            got = _realise(self.positions, one, self.sol) if len(one["ge"]) else None
            if got is None:
                ok[i] = False
                self.stock_bound = True
            else:
                parts[i] = got.score.parts
        rows["parts"] = parts
        rows["exact"] = np.ones(len(parts), dtype=bool)
        return {k: v[ok] for k, v in rows.items()}

    def pick(self, prefer, top, accept):
        """The designs to show: [(assign.Choice, row dict, labels)], the preferred first."""
        out = []
        rejected = 0
        while self.rows is not None and len(self.rows["ge"]):
            rows = self._distinct(self.rows)
            rows = {k: v[rows["parts"] <= rows["parts"].min() + self.spare] for k, v in rows.items()}
            c = tradeoff.counts(rows["parts"], rows["thd"], rows["rob"], rows["isup"])
            f = tradeoff.nondominated(c)
            front = {k: v[f] for k, v in rows.items()}
            self.sol.front_counts = c[f]
            picks = tradeoff.shown(c[f], prefer, top)
            out, bad = [], None
            for i, labels in picks:
                one = self.add_caps({k: v[i:i + 1] for k, v in front.items()})
                got = _realise(self.positions, one, self.sol) if len(one["ge"]) else None
                row = _row_dict(one, 0) if len(one["ge"]) else None
                if got is None:
                    bad = i
                    break
                choice = Choice(got.networks, got.q, i, got.score)
                if accept is not None and not accept(self.sol, choice, row):
                    bad = i
                    rejected += 1
                    break
                out.append((choice, row, labels))
            if bad is None:
                return out
            if rejected > MAX_REJECTED:
                self.sol.notes.append(f"--min-yield: stopped after {MAX_REJECTED} designs below the yield asked for")
                return []
            drop = np.ones(len(self.rows["ge"]), dtype=bool)
            drop[self._index_of(front, bad)] = False
            self.rows = {k: v[drop] for k, v in self.rows.items()}
        return out

    def _distinct(self, rows):
        """One row per (values, transistor type): lines of one type share the physics."""
        types = {}
        kind = np.array([types.setdefault(self.sol.qlines[int(q)].transistor, len(types)) for q in rows["q"]])
        key = np.column_stack([rows[p] for p in self.positions] + [kind])
        _, first = np.unique(key, axis=0, return_index=True)
        first = np.sort(first)
        return {k: v[first] for k, v in rows.items()}

    def _index_of(self, front, i):
        mask = np.ones(len(self.rows["ge"]), dtype=bool)
        for p in self.positions:
            mask &= self.rows[p] == front[p][i]
        mask &= self.rows["q"] == front["q"][i]
        return np.flatnonzero(mask)


def _cat(a, b):
    """Rows of a then b; a column only one side has is filled with zeros on the other (rows not
    yet made exact lack the capacitor columns)."""
    na, nb = len(a["ge"]), len(b["ge"])
    out = {}
    for k in {**a, **b}:
        x = a[k] if k in a else np.zeros(na, dtype=b[k].dtype)
        y = b[k] if k in b else np.zeros(nb, dtype=a[k].dtype)
        out[k] = np.concatenate([x, y])
    return out


def _greedy_fits(pool, rows, positions) -> np.ndarray:
    """Per row: do the fewest-parts networks of its values fit the stock and carry their power?"""
    d, table = pool.distinct, pool.table
    n = len(rows["ge"])
    use = np.zeros((n, len(pool.stock.qty)), dtype=np.int64)
    ok = np.ones(n, dtype=bool)
    for p in positions:
        v = rows[p]
        present = v > 0
        g = np.clip(np.searchsorted(d.value, v * (1 - 1e-10)), 0, len(d) - 1)
        net = d.best[g]
        cap = objective.power_capacity_uw(table.power_w[net])
        ok &= ~present | (cap >= rows[f"need_{p}"])
        for c in range(table.members.shape[1]):
            m = table.members[net, c]
            has = present & (m >= 0)
            np.add.at(use, (np.flatnonzero(has), m[has]), 1)
    return ok & (use <= np.asarray(pool.stock.qty, dtype=np.int64)).all(axis=1)


def _realise(positions, rows, sol):
    """The stock-best networks for a one-row table, or None when stock rules it out: listed and
    scored in numpy (one_row.py), or by CP-SAT (assign.Assignment) when the combinations are many."""
    with stopwatch.watch():  # realising a handful of rows is short and must not be cut off half-way
        if len(rows["ge"]) == 1:
            got = realise_row(positions, _row_dict(rows, 0), sol.pool, _stock_qty(sol.pool))
            if got is None:
                return None
            if got is not NotImplemented:
                networks, score = got
                return Choice(networks, int(rows["q"][0]), 0, score)
        a = Assignment(positions, rows, sol.pool, _stock_qty(sol.pool), sol.qlines)
        return a.solve()


def _parts_lb(pool, rows, positions, caps=MIN_CAPS):
    """Fewest parts a row can be built with: Σ fewest parts per value + its capacitors (≥ 1 each) + Q1."""
    d = pool.distinct
    lb = np.ones(len(rows["ge"]), dtype=np.int64)
    for p in positions:
        v = rows[p]
        g = np.clip(np.searchsorted(d.value, v * (1 - 1e-10)), 0, len(d) - 1)
        lb += np.where(v > 0, d.min_parts[g], 0)
    has_ce = rows["RE2"] > 0 if "RE2" in rows else np.zeros(len(lb), dtype=bool)
    return lb + caps + has_ce


def _stock_qty(pool) -> np.ndarray:
    return np.asarray(pool.stock.qty, dtype=np.int64)



SEARCH_SHARE = 0.3  # of the time limit, at least, for the search itself
POST_S_PER_DESIGN = 0.3  # analysing one design shown (measured about 0.2 s on this project's 2-core machines)
# Modules find_designs loads before it sets the search's deadline, so their import time is charged
# to the limit as it is.  None now: designs are realised by enumeration (one_row.py), and CP-SAT
# (about 0.5 s to import, with pandas) loads only for a row with too many combinations, which the
# OVERRUN_S margin covers.
LAZY_IMPORTS = ()
OVERRUN_S = 1.0  # no command ends more than this past its time limit
EMPTY_RESERVE_S = 0.5  # of the limit, kept for the reasons when the search has found nothing
HINT_RESERVE_S = 0.3
HINT_SHARE = 0.3  # of the time limit, at most, for shopping hints when nothing fits


def find_designs(drawer, spec, *, top=DEFAULT_TOP, depth=DEFAULT_DEPTH, min_yield=None, progress=None, cancel=None,
                 hints=True, seed=None, prefer=DEFAULT_PREFER, time_limit_s=DEFAULT_TIME_LIMIT_S,
                 patience_s=DEFAULT_PATIENCE_S, started=None) -> dict:
    """The design result document (DEVELOPERS.md) for `spec` from an inventory Drawer.

    The document's "status" is "found" (designs non-empty), "infeasible" (proven: nothing in
    the drawer meets the spec) or "unproven" (nothing found within `time_limit_s`, not proven
    impossible); "optimal" says whether the trade-off set is proven complete.  `patience_s`
    (0 or None: off) is the settled rule: the search stops once the designs shown have not changed
    for that long ("search": "stopped_by": "settled"; not optimal).  `started` (a time.perf_counter()
    value; default: the call) is when the time limit started counting.
    """
    from optimizer.chain.names import is_chain
    from optimizer.search import explain, result
    from optimizer.search.hints import HINT_MAX_OHMS, shopping_hints

    if spec.topology == ANY_TOPOLOGY:  # every kind in turn, one trade-off set across them
        from optimizer.search.across import find_any

        return find_any(drawer, spec, top=top, time_limit_s=time_limit_s, progress=progress, cancel=cancel,
                        depth=depth, min_yield=min_yield, hints=hints, seed=seed, prefer=prefer,
                        patience_s=patience_s, started=started)

    if is_chain(spec.topology):  # two stages designed together: optimizer/chain
        from optimizer.chain.result import find_chain_designs

        if started is not None and time_limit_s is not None:
            time_limit_s = max(0.1 * time_limit_s, time_limit_s - (time.perf_counter() - started))
        return find_chain_designs(drawer, spec, top=top, depth=depth, progress=progress, cancel=cancel, hints=hints,
                                  prefer=prefer, time_limit_s=time_limit_s, min_yield=min_yield, seed=seed)

    doc = {"designs": [], "why": [], "hints": [], "spec": result.spec_json(spec),
           "inventory": str(getattr(drawer, "path", "") or ""), "status": "unproven", "optimal": False,
           "unexplored": None}
    problems = spec.problems()
    if problems:
        doc["why"] = problems
        doc["error"] = "spec"
        doc["status"] = "invalid"  # the CLI exits 2 before it gets here
        return doc
    rstock, cstock = drawer.resistor_stock(), drawer.capacitor_stock()
    qlines, notes = usable_transistors(drawer.transistors())
    if kinds.get(spec.topology).rails > 1 and any(polarity.is_pnp(q.transistor) for q in qlines):
        # The PNP mirror (physics/polarity.py) holds on one positive supply only.
        qlines = [q for q in qlines if not polarity.is_pnp(q.transistor)]
        notes.append("PNP lines left out: split-supply stages are designed with NPN transistors for now")
    locations = {p.line: p.location for p in drawer.parts}
    mc_seed = result.MC_SEED if seed is None else int(seed)
    yields = {}
    t0 = time.perf_counter() if started is None else started
    limit = float(time_limit_s) if time_limit_s is not None else None
    for name in LAZY_IMPORTS:
        if name not in sys.modules:
            importlib.import_module(name)
    # The search gets what the limit leaves after analysing the designs shown (exact analysis at
    # three hFE, Monte Carlo) and realising them (CP-SAT), and at least SEARCH_SHARE of it; when
    # nothing fits, the shopping hints get what is left.
    post = POST_S_PER_DESIGN * max(1, top)
    deadline = None if limit is None else t0 + max(SEARCH_SHARE * limit, limit - post - (time.perf_counter() - t0))

    def accept(sol, choice, row):
        y, mc = result.yield_of(sol, choice, spec, seed=mc_seed)
        yields[id(choice)] = (y, mc)
        return y >= min_yield

    sol = search(rstock, cstock, qlines, spec, top=top, depth=depth, progress=progress, cancel=cancel,
                 accept=accept if min_yield is not None else None, prefer=prefer, deadline=deadline,
                 patience=patience_s, empty_deadline=None if limit is None else t0 + limit - EMPTY_RESERVE_S)
    doc["search"] = {"resistor_part_budget": sol.budget, "tuples_screened": sol.near.screened,
                     "seconds": round(sol.seconds, 3), "exhaustive": sol.exhaustive, "depth": depth,
                     "prefer": prefer, "time_limit_s": limit, "stopped_by": sol.stopped_by,
                     "first_design_s": None if sol.first_design_s is None else round(sol.first_design_s, 3),
                     "patience_s": patience_s or 0.0,
                     "last_change_s": None if sol.last_change_s is None else round(sol.last_change_s, 3)}
    each = POST_S_PER_DESIGN  # the longest a design's analysis has taken so far, at least the estimate
    for k, (choice, row, labels) in enumerate(sol.designs):
        if k and limit is not None and time.perf_counter() + each > t0 + limit + OVERRUN_S:
            doc["why"].append(f"{len(sol.designs) - k} more design(s) of the trade-off set left out to keep the "
                              f"{stopwatch.seconds_text(limit)} s limit")
            break
        t_design = time.perf_counter()
        y, mc = yields.get(id(choice)) or result.yield_of(sol, choice, spec, seed=mc_seed)
        doc["designs"].append(result.design_json(sol, choice, row, spec, locations=locations, mc=mc, yld=y,
                                                 labels=labels))
        each = max(each, time.perf_counter() - t_design)
    if sol.stopped_by == "cancelled":
        doc["cancelled"] = True
    doc["why"] = notes + (sol.notes if sol.designs else []) + doc["why"]
    if not sol.designs:
        doc["why"] = explain.reasons(sol, spec) + notes
        if min_yield is not None and sol.designs == [] and yields:
            best = max(y for y, _ in yields.values())
            doc["why"].append(f"--min-yield {min_yield:g}: the best Monte Carlo yield among designs meeting "
                              f"the spec is {best:.1%}")
        skip = explain.no_purchase_helps(sol, spec, HINT_MAX_OHMS) if hints and qlines else None
        if skip:
            doc["why"].append(skip)
        elif hints and qlines and not sol.stopped_by:
            left = None if limit is None else min(t0 + limit - HINT_RESERVE_S - time.perf_counter(),
                                                  HINT_SHARE * limit)
            if left is None or left > 0.5:
                doc["hints"] = shopping_hints(rstock, cstock, qlines, spec, sol, depth=depth, search=search,
                                              budget_s=left if left is not None else 20.0)
    doc["optimal"] = bool(sol.exhaustive)
    doc["unexplored"] = sol.unexplored
    if not sol.designs and not sol.exhaustive and sol.stopped_by in ("time limit", "cancelled"):
        how = (f"within the {stopwatch.seconds_text(limit)} s limit" if sol.stopped_by == "time limit"
               else "before the stop")
        doc["why"].insert(0, f"no design found {how} ({sol.near.screened:,} value tuples screened; not proven "
                             f"impossible: {sol.unexplored} were left), so a longer --time-limit may find one")
    doc["status"] = "found" if doc["designs"] else ("infeasible" if sol.exhaustive else "unproven")
    if progress:
        progress(1.0, "done")
    return doc
