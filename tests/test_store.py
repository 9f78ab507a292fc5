"""Changing the drawer file: counts, takes, adds, removes, undo; external edits detected.

Invented fixtures.  "Byte-identical" is checked against the bytes written at the start.
"""

from __future__ import annotations

import os
import stat
from pathlib import Path

import pytest

from inventory.drawer import Drawer
from inventory.store import ConflictError, NothingToUndo, StockError, Store, StoreError

START = (
    b"kind,value,qty,tolerance,location,notes\n"
    b"resistor,4k7,10,5%,A1,\n"          # line 2
    b"resistor,10k,4,1%,A2,\n"           # line 3
    b"capacitor,100n,6,,B1,ceramic\n"    # line 4
    b"resistor,bad,1,,A9,\n"             # line 5: has an error
)


@pytest.fixture
def path(tmp_path: Path) -> Path:
    p = tmp_path / "drawer.csv"
    p.write_bytes(START)
    return p


def qty(path: Path, line: int) -> int:
    return Drawer.load(path).part_at(line).qty


def test_take_is_one_entry_and_undo_restores_the_file_exactly(path):
    store = Store(path)
    store.load()
    entry = store.take([(2, 3), (4, 6), (2, 1)], "preamp build")
    assert (qty(path, 2), qty(path, 4)) == (6, 0)
    assert [e.id for e in store.history()] == [entry.id]
    assert [(c.line, c.qty_before, c.qty_after) for c in entry.changes] == [(2, 10, 6), (4, 6, 0)]
    undo = store.undo()
    assert undo.undoes == entry.id and path.read_bytes() == START


def test_take_short_names_every_short_line_and_writes_nothing(path):
    store = Store(path)
    with pytest.raises(StockError) as exc:
        store.take([(2, 11), (3, 1), (4, 7)], "too much")
    assert [s[0] for s in exc.value.short] == [2, 4]
    assert "line 2 (resistor 4k7 5% in A1) has 10, needs 11" in str(exc.value)
    assert "line 4 (capacitor 100n 20% in B1) has 6, needs 7" in str(exc.value)
    assert path.read_bytes() == START and store.history() == []


def test_errors_elsewhere_do_not_block_edits_but_the_bad_line_itself_is_refused(path):
    store = Store(path)
    store.set_qty(3, 9, "recount")
    assert qty(path, 3) == 9
    with pytest.raises(StoreError, match="line 5 has errors"):
        store.set_qty(5, 2)
    with pytest.raises(StoreError, match="line 1 holds no part"):
        store.take([(1, 1)])
    store.remove_part(5, "junk line")  # a line with errors can still be removed
    assert b"bad" not in path.read_bytes()
    store.undo()
    assert b"resistor,bad,1,,A9,\n" in path.read_bytes()


@pytest.mark.parametrize("bad", [-1, 1.5, "3", True])
def test_counts_must_be_whole_numbers(path, bad):
    with pytest.raises(StoreError):
        Store(path).set_qty(2, bad)
    with pytest.raises(StoreError):
        Store(path).take([(2, bad)])
    assert path.read_bytes() == START


def test_add_and_remove_then_undo_both(path):
    store = Store(path)
    added = store.add_part({"kind": "resistor", "value": "22k", "qty": "5", "location": "A3"}, "bought")
    assert added.changes[0].line == 6 and qty(path, 6) == 5
    with pytest.raises(StoreError, match="already holds this part"):
        store.add_part({"kind": "resistor", "value": "22000", "qty": "1", "location": "A3"})
    with pytest.raises(StoreError, match="not a resistance"):
        store.add_part({"kind": "resistor", "value": "22kk", "qty": "1"})
    with pytest.raises(StoreError, match='no column "colour"'):
        store.add_part({"kind": "resistor", "value": "1k", "qty": "1", "colour": "red"})
    store.remove_part(3, "used up")
    assert Drawer.load(path).part_at(3).value == 100e-9  # lines below moved up
    store.undo()
    store.undo()
    assert path.read_bytes() == START


def test_add_a_known_column_the_file_lacks_and_undo_takes_it_out(path):
    store = Store(path)
    store.add_part({"kind": "capacitor", "value": "10u", "qty": "2", "voltage": "25V",
                    "dielectric": "electrolytic"})
    d = Drawer.load(path)
    assert d.problems[-1].line == 5  # only the old bad line has a problem
    assert d.parts[-1].voltage_v == 25.0 and d.parts[-1].polarised
    store.undo()
    assert path.read_bytes() == START


def test_undo_after_other_edits_finds_the_part_by_identity(path):
    store = Store(path)
    first = store.take([(4, 2)], "build A")                     # 100n: 6 -> 4
    store.remove_part(2, "4k7 gone to another bench")          # 100n moves up to line 3
    store.take([(3, 1)], "build B")                            # 100n: 4 -> 3
    store.undo(first.id)                                       # gives back the 2 of build A
    d = Drawer.load(path)
    assert [(p.line, p.value, p.qty) for p in d.parts] == [(2, 10e3, 4), (3, 100e-9, 5)]
    with pytest.raises(StoreError, match="already undone"):
        store.undo(first.id)
    with pytest.raises(StoreError, match="no change 99"):
        store.undo(99)


def test_undo_walks_back_and_an_undo_can_be_undone(path):
    store = Store(path)
    store.set_qty(2, 1)
    store.set_qty(3, 2)
    u1 = store.undo()
    u2 = store.undo()
    assert (u1.undoes, u2.undoes) == (2, 1) and path.read_bytes() == START
    with pytest.raises(NothingToUndo):
        store.undo()
    store.undo(u2.id)  # undoing the undo of change 1 sets line 2 back to 1
    assert qty(path, 2) == 1


def test_external_edit_elsewhere_is_kept_and_the_change_re_applied(path):
    store = Store(path)
    store.load()
    # Meanwhile a spreadsheet saves the file: a new line on top, a note changed, 10k recounted.
    edited = START.replace(b"resistor,4k7,10,5%,A1,\n", b"resistor,1k,3,5%,A0,\nresistor,4k7,10,5%,A1,checked\n")
    edited = edited.replace(b"resistor,10k,4,", b"resistor,10k,40,")
    path.write_bytes(edited)
    store.take([(2, 2)], "build")  # line 2 was the 4k7 when loaded; it is now on line 3
    after = path.read_bytes()
    assert after == edited.replace(b"resistor,4k7,10,5%,A1,checked", b"resistor,4k7,8,5%,A1,checked")


def test_external_edit_to_the_same_part_is_refused(path):
    store = Store(path)
    store.load()
    path.write_bytes(START.replace(b"resistor,4k7,10,5%,A1", b"resistor,4k7,10,5%,A7"))  # moved bins
    with pytest.raises(ConflictError, match="resistor 4k7 5% in A1 that was on line 2 is no longer there"):
        store.take([(2, 1)], "build")
    path.write_bytes(START.replace(b"resistor,4k7,10,", b"resistor,4k7,7,"))  # recounted
    store.load()
    path.write_bytes(START)
    with pytest.raises(ConflictError, match="went from 7 to 10; not overwriting"):
        store.set_qty(2, 5)
    assert path.read_bytes() == START


def test_ambiguous_part_after_an_external_edit_is_refused(path):
    store = Store(path)
    store.load()
    # The same part twice now, and neither line is the text that was loaded.
    path.write_bytes(b"kind,value,qty,tolerance,location,notes\nresistor,4700,1,5%,A1,\n"
                     + START.split(b"\n", 1)[1].replace(b"A1,", b"A1,recounted"))
    with pytest.raises(ConflictError, match="now matches lines 2, 3"):
        store.take([(2, 1)])
    store.load()
    path.write_bytes(START + b"resistor,4700,1,5%,A1,\n")  # the loaded line is still there as it was
    store.load()
    path.write_bytes(b"kind,value,qty,tolerance,location,notes\nresistor,4700,1,5%,A1,\n"
                     + START.split(b"\n", 1)[1])
    store.take([(2, 1)])  # found by its unchanged text, now on line 3
    assert qty(path, 3) == 9 and qty(path, 2) == 1


def test_undo_refuses_when_the_added_line_was_edited_since(path):
    store = Store(path)
    store.add_part({"kind": "resistor", "value": "22k", "qty": "5", "location": "A3"})
    path.write_bytes(path.read_bytes().replace(b"resistor,22k,5,,A3,", b"resistor,22k,5,,A3,note"))
    with pytest.raises(ConflictError, match="changed after it was added"):
        store.undo()


def test_permission_bits_are_kept(path):
    os.chmod(path, 0o640)
    Store(path).set_qty(2, 1)
    assert stat.S_IMODE(path.stat().st_mode) == 0o640
    assert not list(path.parent.glob(".drawer.csv.*.tmp"))


def test_a_read_only_file_is_not_replaced(path):
    os.chmod(path, 0o444)
    with pytest.raises(StoreError, match="read-only"):
        Store(path).set_qty(2, 1)
    assert path.read_bytes() == START


def test_a_held_lock_times_out_with_a_clear_message(path):
    import filelock

    with filelock.FileLock(str(path) + ".lock"):
        with pytest.raises(StoreError, match="locked by another drawerfit"):
            Store(path, lock_timeout_s=0.05).set_qty(2, 1)
    assert path.read_bytes() == START


def test_a_missing_file_is_a_store_error(tmp_path):
    with pytest.raises(StoreError, match="cannot read"):
        Store(tmp_path / "none.csv").load()


def test_edit_rewrites_only_the_changed_cells_in_place_and_undo_restores(path):
    store = Store(path)
    entry = store.edit_part(3, {"kind": "resistor", "value": "10k", "qty": "4", "tolerance": "2%",
                                "location": "A2", "notes": "recounted"}, "relabelled")
    assert path.read_bytes() == START.replace(b"resistor,10k,4,1%,A2,\n", b"resistor,10k,4,2%,A2,recounted\n")
    assert entry.action == "edit" and entry.changes[0].rewrite and entry.changes[0].line == 3
    assert store.edit_part(3, {"tolerance": "2%"}).changes == []  # nothing to change: nothing written
    with pytest.raises(StoreError, match="already holds this part"):
        store.edit_part(3, {"value": "4k7", "tolerance": "5%", "location": "A1"})
    with pytest.raises(StoreError, match="as edited is not valid"):
        store.edit_part(3, {"value": "10kk"})
    store.undo()
    assert path.read_bytes() == START
    store.edit_part(5, {"value": "1k"}, "fixed the bad line")  # a line with errors can be mended
    assert Drawer.load(path).errors == []


def test_lines_from_an_older_read_are_checked_against_the_file_now(path):
    seen = Drawer.load(path)  # e.g. the drawer a design was made from
    path.write_bytes(START.replace(b"resistor,4k7,10,5%,A1,\n", b""))  # 4k7 line deleted since
    store = Store(path)
    store.base_on(seen)
    with pytest.raises(ConflictError, match="4k7 5% in A1 that was on line 2 is no longer there"):
        store.take([(2, 1)])  # without base_on this would take from the 10k now on line 2
    store.take([(3, 1)])  # the 10k, seen on line 3, is found on line 2
    assert qty(path, 2) == 3


def test_saving_through_a_symlink_keeps_the_link(path):
    link = path.parent / "link.csv"
    link.symlink_to(path.name)
    Store(link).set_qty(2, 1)
    assert link.is_symlink() and qty(path, 2) == 1
    assert len(Store(path).history()) == 1  # one journal (and one lock) for link and target


def test_a_line_that_already_repeats_a_part_can_still_be_edited(path):
    path.write_bytes(START + b"resistor,4700,1,5%,A1,\n")  # a repeat the user already has (a warning)
    store = Store(path)
    store.edit_part(6, {"notes": "second bag"})
    assert Drawer.load(path).part_at(6).notes == "second bag"
