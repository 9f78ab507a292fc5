"""The change journal: JSON Lines beside the drawer file, tolerant of a torn last line."""

from __future__ import annotations

import json
from datetime import datetime
from pathlib import Path

import pytest

from inventory.drawer import Drawer
from inventory.journal import Journal, journal_path
from inventory.store import Store


def make(tmp_path: Path) -> tuple[Path, Store]:
    path = tmp_path / "drawer.csv"
    path.write_bytes(b"kind,value,qty,location\nresistor,4k7,10,A1\nresistor,1k,3,A2\n")
    return path, Store(path)


def test_journal_sits_beside_the_file_one_json_object_per_line(tmp_path):
    path, store = make(tmp_path)
    store.take([(2, 2)], "amp")
    store.set_qty(3, 5, "recount")
    jpath = journal_path(path)
    assert jpath == tmp_path / "drawer.journal.jsonl"
    lines = jpath.read_text().splitlines()
    objs = [json.loads(x) for x in lines]  # JSON Lines: each line is one JSON value (jsonlines.org)
    assert [(o["id"], o["action"], o["reason"]) for o in objs] == [(1, "take", "amp"), (2, "count", "recount")]
    # ISO 8601 in UTC, e.g. 2026-12-01T22:40:03.512Z
    stamp = datetime.fromisoformat(objs[0]["time"].replace("Z", "+00:00"))
    assert stamp.utcoffset().total_seconds() == 0
    c = objs[0]["changes"][0]
    assert (c["line"], c["qty_before"], c["qty_after"]) == (2, 10, 8)
    assert c["identity"][:2] == ["resistor", 4700.0] and c["identity"][-1] == "A1"
    assert c["row"]["value"] == "4k7" and c["raw_before"] == "resistor,4k7,10,A1\n"


def test_a_torn_last_line_is_skipped_and_closed_off_by_the_next_append(tmp_path):
    path, store = make(tmp_path)
    store.take([(2, 1)])
    store.take([(2, 1)])
    jpath = journal_path(path)
    first, second = jpath.read_bytes().splitlines(keepends=True)
    jpath.write_bytes(first + second[: len(second) // 2])  # a crash in the middle of the second append
    journal = Journal(jpath)
    assert [e.id for e in journal.read()] == [1]
    assert journal.damaged == [2]
    entry = store.take([(2, 1)])
    assert entry.id == 3  # the torn line was change 2 (the drawer was saved first): 2 is never given again
    assert [e.id for e in Journal(jpath).read()] == [1, 3]
    assert jpath.read_bytes().count(b"\n") == 3  # the torn half now sits alone on its line


@pytest.mark.parametrize(("torn", "expect"), [
    (b'{"id":7,"time":"2026-', 8),   # shows its number: above it
    (b'{"id":1', 3),                 # torn inside its number (it could have been 1x): one above the line before
    (b'{"ti', 3),                    # no number left: one above the line before it
    (b'{"id":"2","time":"t","action":"count"}', 3),  # edited by hand into another shape
])
def test_no_change_number_a_damaged_line_may_carry_is_given_again(tmp_path, torn, expect):
    path, store = make(tmp_path)
    store.take([(2, 1)])
    jpath = journal_path(path)
    jpath.write_bytes(jpath.read_bytes() + torn + b"\n")
    assert Journal(jpath).next_id() == expect
    entry = store.take([(2, 1)])
    assert entry.id == expect
    ids = [e.id for e in Journal(jpath).read()]
    assert ids == [1, expect] and len(set(ids)) == len(ids)
    assert Drawer.load(path).part_at(2).qty == 8  # both takes landed; nothing lost


def test_damaged_lines_in_the_middle_keep_every_other_entry_and_the_numbering_climbs(tmp_path):
    path, store = make(tmp_path)
    for _ in range(3):
        store.take([(2, 1)])
    jpath = journal_path(path)
    lines = jpath.read_bytes().splitlines(keepends=True)
    jpath.write_bytes(lines[0] + b"garbage\n" + lines[1] + lines[2][:30] + b"\n" + lines[2])
    journal = Journal(jpath)
    assert [e.id for e in journal.read()] == [1, 2, 3]
    assert journal.damaged == [2, 4]
    assert journal.next_id() == 4
    assert store.undo().undoes == 3  # undo still works on the readable entries


def test_undecodable_bytes_in_a_line_survive_the_journal(tmp_path):
    path = tmp_path / "drawer.csv"
    start = b"kind,value,qty,notes\nresistor,4k7,10,caf\xe9\nresistor,1k,1,\n"
    path.write_bytes(start)
    store = Store(path)
    store.remove_part(2, "bad line")
    store.undo()
    assert path.read_bytes() == start
    json.loads(journal_path(path).read_text(encoding="ascii").splitlines()[0])
