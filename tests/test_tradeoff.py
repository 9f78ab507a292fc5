"""tradeoff.py against brute force: the non-dominated rows by a plain double loop (the definition of
Pareto dominance), and what is shown for each preference."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from optimizer.search import tradeoff


def _brute_front(c):
    keep = []
    for i, a in enumerate(c):
        beaten = any((b <= a).all() and (b < a).any() for j, b in enumerate(c) if j != i)
        if not beaten:
            keep.append(i)
    return keep


@settings(max_examples=60, deadline=None, derandomize=True)
@given(st.lists(st.tuples(*(st.integers(0, 6),) * 4), min_size=0, max_size=400))
def test_nondominated_is_the_definition(rows):
    c = np.array(rows, dtype=np.int64).reshape(-1, 4)
    assert sorted(tradeoff.nondominated(c).tolist()) == _brute_front(c)
    if len(c):
        front = c[tradeoff.nondominated(c)]
        assert not tradeoff.dominated_by(front, front).any()
        rest = np.delete(c, tradeoff.nondominated(c), axis=0)
        assert tradeoff.dominated_by(front, rest).all()


def test_counts_are_quantised_as_documented():
    c = tradeoff.counts([7], [0.012345], [0.456], [1.234e-3])
    assert c.tolist() == [[7, 124, 55, 124]]  # THD 1.2345 % → 124 steps of 0.01 % (up); margin 45 % → 55


def test_labels_and_preferred_first():
    # parts, THD, fragility, current: four designs each best at one count, one in the middle
    c = np.array([[7, 80, 60, 200], [9, 20, 60, 250], [9, 60, 10, 300], [9, 70, 70, 40], [8, 50, 40, 150]])
    won = tradeoff.labels(c)
    assert won["parts"] == 0 and won["clean"] == 1 and won["robust"] == 2 and won["frugal"] == 3
    # balanced: each count scaled 0…1 over the set, summed: row 4 scores 0.5+0.5+0.5+0.42 = 1.92, the least
    assert won["balanced"] == 4
    for prefer in tradeoff.LABELS:
        shown = tradeoff.shown(c, prefer, top=5)
        assert shown[0][0] == won[prefer] and prefer in shown[0][1]
        assert sorted(i for i, _ in shown) == [0, 1, 2, 3, 4]
    assert [i for i, _ in tradeoff.shown(c, "clean", top=2)] == [1, 4]


@pytest.mark.parametrize("top", [1, 3])
def test_twins_do_not_fill_the_list(top):
    c = np.array([[7, 10, 10, 10], [7, 10, 10, 10], [7, 10, 10, 10]])
    assert len(tradeoff.shown(c, "balanced", top=top)) == 1
