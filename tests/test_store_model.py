"""Random sequences of changes checked against a plain list model, then all undone.

The model is the obvious one (a list of [value, place, qty] rows in file order, a stack of
earlier states for undo); the file after every step must read back as the model says, and
undoing everything must give back the starting bytes.  Invented fixtures.
"""

from __future__ import annotations

import copy
import tempfile
from collections import Counter
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from inventory.drawer import Drawer
from inventory.store import NothingToUndo, StockError, Store, StoreError

START = b"kind,value,qty,location,notes\r\nresistor,4k7,5,A1,\"film, 1%\"\r\nresistor,10k,2,A2,\r\n"
RUNS: Counter = Counter()
VALUES = {"1k": 1e3, "4k7": 4.7e3, "10k": 10e3, "22k": 22e3}

OPS = st.lists(st.one_of(
    st.tuples(st.just("take"), st.integers(0, 9), st.integers(1, 4)),
    st.tuples(st.just("count"), st.integers(0, 9), st.integers(0, 9)),
    st.tuples(st.just("add"), st.sampled_from(sorted(VALUES)), st.sampled_from(["A1", "B2"]), st.integers(0, 9)),
    st.tuples(st.just("remove"), st.integers(0, 9)),
    st.tuples(st.just("undo")),
), max_size=12)


def read(path: Path) -> list[list]:
    return [[p.value, p.location, p.qty] for p in Drawer.load(path).parts]


@pytest.mark.fuzz
@settings(max_examples=60, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(OPS)
def test_changes_match_the_model_and_undoing_all_restores_the_file(ops):
    RUNS["sequences"] += 1
    RUNS["steps"] += len(ops)
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "drawer.csv"
        path.write_bytes(START)
        store = Store(path)
        model = [[4.7e3, "A1", 5], [10e3, "A2", 2]]
        past: list[list[list]] = []
        for op in ops:
            before = copy.deepcopy(model)
            k = op[1] % len(model) if len(op) > 1 and model and op[0] != "add" else None
            line = k + 2 if k is not None else None
            try:
                if op[0] == "take" and model:
                    store.take([(line, op[2])], "model")
                    assert model[k][2] >= op[2]
                    model[k][2] -= op[2]
                elif op[0] == "count" and model:
                    same = model[k][2] == op[2]
                    store.set_qty(line, op[2])
                    if same:  # no edit at all: nothing written and nothing journaled, so nothing to undo
                        assert read(path) == model
                        continue
                    model[k][2] = op[2]
                elif op[0] == "add":
                    store.add_part({"kind": "resistor", "value": op[1], "qty": str(op[3]), "location": op[2]})
                    assert [VALUES[op[1]], op[2]] not in [r[:2] for r in model]
                    model.append([VALUES[op[1]], op[2], op[3]])
                elif op[0] == "remove" and model:
                    store.remove_part(line)
                    del model[k]
                elif op[0] == "undo":
                    store.undo()
                    model = past.pop()
                    assert read(path) == model
                    continue
                else:
                    continue
            except StockError:
                assert op[0] == "take" and model[k][2] < op[2]
                continue
            except NothingToUndo:
                assert not past
                continue
            except StoreError as exc:
                assert op[0] == "add" and "already holds" in str(exc)
                continue
            past.append(before)
            assert read(path) == model
        while True:
            try:
                store.undo()
            except NothingToUndo:
                break
        assert path.read_bytes() == START
