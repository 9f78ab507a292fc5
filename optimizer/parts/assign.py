"""CP-SAT: pick a feasible value tuple and the physical networks that realise it, under shared stock.

Model (integers only):
  * one bool per (position, network) that realises a value some feasible tuple uses
    at that position (plus an "absent" bool for optional positions); add_exactly_one per position;
  * v[p] = the value number chosen at p (a linear sum of those bools);
  * the feasible tuples (from feasible.py and capchoice.py, one row per value tuple and
    transistor line) couple the positions through add_allowed_assignments over
    [v[p]…, q, objective columns, power needs]; never multiplication;
  * per position, the chosen network's power capacity ≥ the row's need (both µW);
  * one named stock constraint per drawer line: Σ parts taken ≤ qty.
The objective (objective.py) is minimised lexicographically in stages, each stage
fixing the previous optimum; one worker and a fixed seed keep it reproducible.
"""

from __future__ import annotations

import threading
from dataclasses import dataclass

import numpy as np

from optimizer.search import objective

SEED = 20261201


def _cp_model():
    """OR-Tools' CP-SAT module, loaded on first use: it (with pandas) takes about half a second
    to import, which a command should not spend before it starts searching."""
    from ortools.sat.python import cp_model

    return cp_model
# The row column each objective level equals, when the level is a property of the row alone.
ROW_COLUMNS = (None, "ge", "nsm", "nf", None, None)
MAX_TIME_S = 20.0


@dataclass
class Choice:
    """One solved design: network index per position (None = absent), transistor index, row number."""

    networks: dict
    q: int
    row: int
    score: objective.Score

    @property
    def score_levels(self) -> tuple[int, ...]:
        return tuple(self.score.__dict__.values())


class Assignment:
    """The CP-SAT model over `rows` (dict of equal-length arrays, see select.py)."""

    def __init__(self, positions, rows, pool, stock_qty, qlines, cancel=None):
        self.positions = positions
        self.rows = rows
        self.pool = pool
        self.cancel = cancel
        self.stopped = False
        cp_model = _cp_model()
        m = self.model = cp_model.CpModel()
        n = len(rows["q"])
        self.values = {}
        self.cap = {}
        self.v, self.x = {}, {}
        table = self.pool.table
        parts_terms, cap_terms = [], []
        usage = {}
        for p in positions:
            vals = np.unique(rows[p])
            self.values[p] = vals
            self.v[p] = m.new_int_var(0, len(vals) - 1, f"v[{p}]")
            xs = []
            value_terms = []
            for j, val in enumerate(vals):
                nets = [None] if val == 0 else list(self.pool.networks_of(float(val)))
                for net in nets:
                    b = m.new_bool_var(f"x[{p},{'absent' if net is None else net}]")
                    xs.append(b)
                    self.x[(p, net)] = b
                    if j:
                        value_terms.append(j * b)
                    if net is None:
                        continue
                    parts_terms.append(int(table.parts[net]) * b)
                    cap_terms.append(int(objective.power_capacity_uw(table.power_w[net])) * b)
                    for row_, cnt in zip(*np.unique(table.members[net][table.members[net] >= 0],
                                                    return_counts=True), strict=True):
                        usage.setdefault(int(row_), []).append(int(cnt) * b)
            m.add_exactly_one(xs)
            m.add(self.v[p] == sum(value_terms))
            self.cap[p] = sum(cap_terms)
            cap_terms = []
        self.q = m.new_int_var(0, len(qlines) - 1, "q")
        self.rid = m.new_int_var(0, n - 1, "row")
        vidx = {p: np.searchsorted(self.values[p], rows[p]) for p in positions}
        tbl = np.column_stack([vidx[p] for p in positions] + [rows["q"], np.arange(n)])
        self.vars = [self.v[p] for p in positions] + [self.q]
        m.add_allowed_assignments(self.vars + [self.rid], tbl.astype(np.int64).tolist())
        cols = {}
        for k in ("ge", "nsm", "pc", "ec", "fc", "nf") + tuple(f"need_{p}" for p in positions):
            vals = rows[k].astype(np.int64)
            cols[k] = m.new_int_var(int(vals.min()), int(vals.max()), k)
            m.add_element(self.rid, vals.tolist(), cols[k])
        for p in positions:
            m.add(self.cap[p] >= cols[f"need_{p}"])
        self._vidx = vidx
        emptied, frac = [cols["ec"]], [cols["fc"]]
        lines = table.stock_line
        for r, terms in sorted(usage.items()):
            qty = int(stock_qty[r])
            used = sum(terms)
            m.add(used <= qty).with_name(f"stock[line {int(lines[r])}]")
            e = m.new_bool_var(f"emptied[line {int(lines[r])}]")
            m.add(used <= qty - 1 + e)
            emptied.append(e)
            frac.append(objective.line_weight(qty) * used)
        self.levels = [
            sum(parts_terms) + cols["pc"] + 1,
            cols["ge"],
            cols["nsm"],
            cols["nf"],
            sum(emptied),
            sum(frac),
        ]
        max_parts = sum(max((int(table.parts[net]) for (q_, net) in self.x if q_ == p and net is not None),
                            default=0) for p in positions)
        frac_hi = sum(objective.line_weight(int(stock_qty[r])) * int(stock_qty[r]) for r in usage)
        self.bounds = [
            (0, max_parts + int(rows["pc"].max()) + 1),
            (int(rows["ge"].min()), int(rows["ge"].max())),
            (int(rows["nsm"].min()), int(rows["nsm"].max())),
            (int(rows["nf"].min()), int(rows["nf"].max())),
            (0, len(usage) + int(rows["ec"].max())),
            (0, frac_hi + int(rows["fc"].max())),
        ]
        self.n_rows = n
        self.allowed = np.ones(n, dtype=bool)
        self.stock_qty = stock_qty
        self.qlines = qlines

    def forbid(self, rows_idx):
        """Exclude these rows' (values, transistor) combinations from later solves."""
        self.allowed[np.asarray(rows_idx, dtype=np.int64)] = False
        tuples = [[int(self._vidx[p][i]) for p in self.positions] + [int(self.rows["q"][i])] for i in rows_idx]
        self.model.add_forbidden_assignments(self.vars, tuples)

    def _solver(self):
        s = _cp_model().CpSolver()
        s.parameters.num_workers = 1
        s.parameters.random_seed = SEED
        s.parameters.max_time_in_seconds = MAX_TIME_S
        return s

    def _run(self, solver, model):
        if self.cancel is None:
            return solver.solve(model)
        done = threading.Event()

        def watch():
            while not done.wait(0.02):
                if self.cancel.is_set():
                    solver.stop_search()
                    self.stopped = True
                    return

        t = threading.Thread(target=watch, daemon=True)
        t.start()
        try:
            return solver.solve(model)
        finally:
            done.set()
            t.join()

    def stages(self):
        """Consecutive levels merged into weighted objectives, from the first level on, while the
        weights stay below 2^50: [(level, weight), …] per stage.  Leading levels first keeps the
        row-level terms in the first stage, which `solve` relies on to shrink the later ones."""
        out, group, prod = [], [], 1
        for k in range(len(self.levels)):
            lo, hi = self.bounds[k]
            span = hi - lo + 1
            if group and prod * span > 2**50:
                out.append(group)
                group, prod = [], 1
            group.append(k)
            prod *= span
        out.append(group)
        staged = []
        for group in out:
            weights, w = {}, 1
            for k in reversed(group):
                weights[k] = w
                w *= self.bounds[k][1] - self.bounds[k][0] + 1
            staged.append([(k, weights[k]) for k in group])
        return staged

    def solve(self) -> Choice | None:
        """The lexicographic optimum, or None when no row can be realised from the stock.

        The first stage runs on the whole model.  Its optimum fixes the row-level terms
        (gain error, swing margin, capacitance), so the later stages run on a fresh model
        of only the rows that share them, held at the first stage's values: the same
        optimum over far fewer rows, which is what keeps the stock terms quick.
        """
        groups = self.stages()
        got = self._solve_stages(groups[:1])
        if got is None or len(groups) == 1:
            return got
        values = {k: got.score_levels[k] for k, _ in groups[0]}
        mask = self.allowed.copy()
        for k, v in values.items():
            if ROW_COLUMNS[k] is not None:
                mask &= self.rows[ROW_COLUMNS[k]] == v
        idx = np.flatnonzero(mask)
        sub = Assignment(self.positions, {k: v[idx] for k, v in self.rows.items()}, self.pool, self.stock_qty,
                         self.qlines, cancel=self.cancel)
        for k, v in values.items():
            sub.model.add(sub.levels[k] == v)
        c = sub._solve_stages(sub.stages())
        self.stopped = sub.stopped
        if c is None:  # cannot happen unless cancelled: the first stage's design is in the sub-model
            return None
        return Choice(c.networks, c.q, int(idx[c.row]), c.score)

    def _solve_stages(self, groups) -> Choice | None:
        # Each stage's optimum is held through an assumption literal, so the model
        # (assumptions cleared) can serve the next design from the full problem again.
        model = self.model
        model.clear_assumptions()
        held = []
        solver = None
        for group in groups:
            expr = sum(w * (self.levels[k] - self.bounds[k][0]) for k, w in group)
            model.clear_objective()
            model.minimize(expr)
            solver = self._solver()
            status = self._run(solver, model)
            if self.stopped or status not in (_cp_model().OPTIMAL, _cp_model().FEASIBLE):
                model.clear_assumptions()
                return None
            # Each level of the stage is held at its value (not only their weighted sum):
            # equalities propagate to the row and network choices.
            lit = model.new_bool_var(f"stage[{len(held)}]")
            for k, _ in group:
                model.add(self.levels[k] == int(solver.value(self.levels[k]))).only_enforce_if(lit)
            held.append(lit)
            model.clear_assumptions()
            model.add_assumptions(held)
            model.clear_hints()
            for b in self.x.values():
                model.add_hint(b, solver.boolean_value(b))
        model.clear_assumptions()
        model.clear_hints()
        values = [int(solver.value(level)) for level in self.levels]
        nets = {}
        for (p, net), b in self.x.items():
            if solver.boolean_value(b):
                nets[p] = net
        qv = solver.value(self.q)
        return Choice(nets, qv, int(solver.value(self.rid)), objective.Score(*values))

    def _row_of(self, key, qv):
        mask = self.rows["q"] == qv
        for p, val in zip(self.positions, key, strict=True):
            mask &= self.rows[p] == val
        return int(np.flatnonzero(mask)[0])
