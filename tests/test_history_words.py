"""How changes and undos are named: the CLI's default undo reason, the app's history wording.

Quick tests (no terminal): the journal is written through the real store on an invented drawer.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from inventory.drawer import Drawer
from inventory.journal import undone_ids
from inventory.store import Store
from tui.cli import main
from tui.screens.history import state_text, undo_detail
from tui.widgets.part_text import broken_lines

DRAWER = b"kind,value,qty,location\nresistor,4k7,10,A1\nresistor,470k,2,A2\nresistor,4k7k,3,B3\n"


@pytest.fixture
def drawer(drawer_at) -> Path:
    return drawer_at(DRAWER)


def counts(path: Path, n: int) -> Store:
    store = Store(path)
    for i in range(n):
        store.load()
        store.set_qty(2, 11 + i, reason=f"count {i + 1}")
    return store


def test_cli_undo_without_a_reason_names_the_change(drawer, capsys):
    store = counts(drawer, 3)
    assert main(["undo"]) == 0
    assert main(["undo", "1"]) == 0
    entries = store.history()
    assert [(e.undoes, e.reason) for e in entries[3:]] == [(3, "undo of #3"), (1, "undo of #1")]
    assert main(["undo", "--reason", "wrong count", "2"]) == 0
    assert store.history()[-1].reason == "wrong count"
    # Nothing left to undo: refused as before (exit 1), nothing journaled.
    assert main(["undo"]) == 1
    assert "nothing to undo" in capsys.readouterr().err
    assert len(store.history()) == 6


def test_state_shows_whole_change_numbers(drawer):
    store = counts(drawer, 11)
    store.load()
    store.undo(10)
    entries = store.history()
    undone = undone_ids(entries)
    by_id = {e.id: e for e in entries}
    assert state_text(by_id[10], undone) == "undone by #12"
    assert state_text(by_id[12], undone) == "reverts #10"
    assert state_text(by_id[11], undone) == ""


def test_undo_detail_says_which_change_and_what_goes_back(drawer):
    store = counts(drawer, 2)
    entry = store.history()[1]
    text = undo_detail(entry)
    assert text.startswith("Change #2, count, ")
    assert "“count 2”" in text and "line 2: resistor 4k7 A1  qty 12 → 11" in text


def test_broken_lines_are_listed_with_their_errors(drawer):
    (bad,) = broken_lines(Drawer.load(drawer))
    assert bad.line == 4 and bad.cells["value"] == "4k7k"
    assert bad.row_cells()[:3] == ("4 ✗", "resistor", "4k7k")
    assert any("4k7k" in p and "resistance" in p for p in bad.problems)
