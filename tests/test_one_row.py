"""One row's networks by enumeration (optimizer/parts/one_row.py) against CP-SAT (assign.py).

Two independent solvers of the same problem: OR-Tools' CP-SAT over the full model of
assign.Assignment, and plain listing of every combination.  On drawers with few parts per line
(so stock binds and lines empty) both must reach the same lexicographic score, and the
enumeration's networks must realise the row's values within the stock.
"""

from __future__ import annotations

import numpy as np
import pytest

from optimizer.parts.assign import Assignment
from optimizer.parts.one_row import MAX_COMBOS, realise_row
from optimizer.search import objective
from optimizer.search.candidates import Pool
from tests.test_select_oracle import QS, resistors

POSITIONS = ("R1", "R2", "RC", "RE1", "RE2")


def _drawer(rng):
    values = [100.0, 220.0, 470.0, 1e3, 2.2e3, 4.7e3, 10e3, 22e3, 47e3]
    return resistors([(10 + k, float(v), int(rng.integers(1, 5))) for k, v in enumerate(values)])


def _row(rng, pool, optional_absent):
    row = {}
    for p in POSITIONS:
        if p == "RE2" and optional_absent:
            row[p] = 0.0
            row[f"need_{p}"] = 0
            continue
        row[p] = float(rng.choice(pool.distinct.value))
        row[f"need_{p}"] = int(rng.choice([0, 1000, 60000, 200000]))  # µW
    row.update(q=0, pc=int(rng.integers(2, 5)), ec=int(rng.integers(0, 2)), fc=int(rng.integers(0, 9000)),
               ge=int(rng.integers(0, 30)), nsm=int(rng.integers(-900, 0)), nf=int(rng.integers(0, 5000)))
    return row


@pytest.mark.parametrize("seed", range(6))
def test_enumeration_matches_cp_sat(seed):
    rng = np.random.default_rng(seed)
    stock = _drawer(rng)
    pool = Pool(stock, 2)
    qty = np.asarray(pool.stock.qty, dtype=np.int64)
    seen = {"both": 0, "neither": 0}
    for k in range(40):
        row = _row(rng, pool, optional_absent=k % 3 == 0)
        table = {key: np.array([val]) for key, val in row.items()}
        exact = Assignment(POSITIONS, table, pool, qty, QS).solve()
        got = realise_row(POSITIONS, row, pool, qty)
        assert got is not NotImplemented
        if exact is None:
            assert got is None, row
            seen["neither"] += 1
            continue
        assert got is not None, row
        networks, score = got
        assert score == exact.score, (row, score, exact.score)
        # The networks realise the values, carry their power and fit the stock together.
        used = np.zeros(len(qty), dtype=np.int64)
        for p in POSITIONS:
            net = networks[p]
            if row[p] == 0:
                assert net is None
                continue
            assert abs(pool.table.value[net] - row[p]) <= 1e-9 * row[p]
            assert objective.power_capacity_uw(pool.table.power_w[[net]])[0] >= row[f"need_{p}"]
            for m in pool.table.members[net]:
                if m >= 0:
                    used[m] += 1
        assert (used <= qty).all()
        seen["both"] += 1
    # Both outcomes occur, so neither branch of the comparison is vacuous.
    assert seen["both"] > 0 and seen["neither"] > 0, seen


def test_too_many_combinations_are_left_to_cp_sat(monkeypatch):
    rng = np.random.default_rng(1)
    pool = Pool(_drawer(rng), 2)
    row = _row(rng, pool, optional_absent=False)
    row.update({f"need_{p}": 0 for p in POSITIONS})
    monkeypatch.setattr("optimizer.parts.one_row.MAX_COMBOS", 0)
    assert MAX_COMBOS > 0
    assert realise_row(POSITIONS, row, pool, pool.stock.qty) is NotImplemented
