"""A build's record in the journal (to reopen its sheet), the design tag shared by the CLI and the app,
and the cross-check table's spelling.  Invented fixtures; no solver run, no Textual."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from inventory.drawer import Drawer
from inventory.journal import Entry, Journal, journal_path
from inventory.store import Store, StoreError
from tui.builds import build_record, design_tag, last_build, record_problem, sheet_document, tag_of
from tui.cli import main
from tui.cmd_design import fingerprint
from tui.crosscheck_text import deviation_text, table_rows

from .test_cli_build import DRAWER, USES, drawer, saved  # noqa: F401  (fixtures)

DESIGN = {"topology": "common-emitter", "parts": {"RC": {"ohms": 4700.0}}, "predicted": {"gain": -9.9},
          "uses": [{"line": 2, "qty": 1}]}


def test_take_keeps_the_record_and_other_entries_stay_as_they_were(drawer):  # noqa: F811
    store = Store(drawer)
    store.load()
    record = build_record(2, DESIGN, {"spec": {"gain": 10}, "designs": [DESIGN]})
    store.take([(2, 1)], "built it", design=record)
    store.set_qty(3, 1, "counted")
    raw = journal_path(drawer).read_text().splitlines()
    assert json.loads(raw[0])["design"] == {"rank": 2, "design": DESIGN, "spec": {"gain": 10}}
    assert "design" not in json.loads(raw[1])  # lines without a record are written as before
    took, counted = store.history()
    assert took.design == record and counted.design is None
    # The record is a copy as journaled: changing the caller's dict afterwards changes nothing kept.
    record["rank"] = 9
    assert store.history()[0].design["rank"] == 2


def test_a_record_is_journaled_as_strict_json(drawer):  # noqa: F811
    store = Store(drawer)
    store.take([(2, 1)], "built", design={"design": {"predicted": {"thd": float("nan"), "rout": float("inf")}}})
    line = journal_path(drawer).read_text()
    assert "NaN" not in line and "Infinity" not in line
    assert store.history()[0].design == {"design": {"predicted": {"thd": None, "rout": None}}}


@pytest.mark.parametrize("odd", ["text", 3, [1, 2], None, True])
def test_a_record_of_an_odd_shape_is_ignored_not_the_entry(tmp_path, odd):
    path = tmp_path / "j.jsonl"
    line = {"id": 1, "time": "2026-12-01T10:00:00.000Z", "action": "take", "reason": "r", "file": "d.csv",
            "changes": [], "undoes": None, "design": odd}
    path.write_text(json.dumps(line) + "\n")
    (entry,) = Journal(path).read()
    assert entry.design is None and entry.action == "take"


def test_an_older_reader_reads_a_line_with_a_record(tmp_path):
    # The field is additive: an Entry built from the line's other keys is the same entry.
    entry = Entry(1, "2026-12-01T10:00:00.000Z", "take", "r", "d.csv", [], None, {"rank": 1, "design": DESIGN})
    obj = entry.to_json()
    older = {k: v for k, v in obj.items() if k != "design"}
    assert Entry.from_json(older) == Entry(1, "2026-12-01T10:00:00.000Z", "take", "r", "d.csv")


@pytest.mark.parametrize("bad", ["a string", {"x": {1, 2}}, {"x": object()}])
def test_a_record_that_cannot_be_journaled_is_refused_before_anything_is_written(drawer, bad):  # noqa: F811
    store = Store(drawer)
    with pytest.raises(StoreError):
        store.take([(2, 1)], "built", design=bad)
    assert drawer.read_bytes() == DRAWER and not journal_path(drawer).exists()


def test_cli_build_keeps_the_record_with_its_tag(drawer, tmp_path):  # noqa: F811
    file = saved(tmp_path, drawer)
    doc = json.loads(file.read_text())
    assert main(["build", str(file)]) == 0
    (entry,) = Store(drawer).history()
    assert entry.design == {"rank": 1, "design": doc["designs"][0], "spec": {}, "fingerprint": doc["fingerprint"]}
    # The app computes the same tag from the record, so each refuses the other's second build.
    assert tag_of(1, entry.design["design"], entry.design) == design_tag(doc, 1)
    assert design_tag(doc, 1) in entry.reason
    assert last_build(Store(drawer).history(), design_tag(doc, 1)).id == entry.id


def test_tag_of_a_later_rank_matches_the_cli_tag(drawer, tmp_path):  # noqa: F811
    other = {"topology": "common-emitter", "uses": [{"line": 3, "qty": 2}]}
    fp = fingerprint(Drawer.load(drawer), [2, 3])
    doc = {"designs": [{"uses": USES}, other], "fingerprint": fp}
    assert tag_of(2, other, doc) == design_tag(doc, 2) != design_tag(doc, 1)
    assert tag_of(2, other, {}) != design_tag(doc, 2)  # another stock fingerprint, another design


def test_sheet_document_reads_back_the_picked_design():
    doc = {"spec": {"gain": 10}, "designs": [{"a": 1}, DESIGN]}
    assert sheet_document(2, doc["designs"][1], doc) == (doc, 2)
    rebuilt, pick = sheet_document(3, DESIGN, {"spec": {"gain": 10}})  # a build record: no designs list
    assert pick == 3 and rebuilt["designs"][2] is DESIGN and rebuilt["spec"] == {"gain": 10}


def entry(action="take", design=None) -> Entry:
    return Entry(4, "2026-12-01T10:00:00.000Z", action, "r", "d.csv", [], None, design)


@pytest.mark.parametrize(("e", "says"), [
    (None, "not in the journal"),
    (entry("count"), "not a build (count)"),
    (entry(), "kept no build sheet"),
    (entry(design={"rank": 1, "design": "x"}), "damaged"),
    (entry(design={"rank": 1, "design": {"parts": {"RC": 3}}}), "damaged"),
    (entry(design={"rank": 10**9, "design": DESIGN}), "damaged"),
    (entry(design={"rank": 1, "design": DESIGN, "spec": []}), "damaged"),
])
def test_why_a_past_build_has_no_sheet(e, says):
    assert says in record_problem(e, 4)


def test_a_kept_record_has_a_sheet():
    assert record_problem(entry(design=build_record(1, DESIGN, {"spec": {}})), 4) is None


def test_crosscheck_rows_are_spelled_by_the_one_rule():
    rows = [{"figure": "thd", "unit": "", "corner": "min", "hfe": 200.0, "drawerfit": 0.012, "ngspice": 0.0121,
             "deviation": 0.0001, "relative": 0.0001 / 0.012},
            {"figure": "vb", "unit": "V", "corner": "min", "hfe": 200.0, "drawerfit": 0.958, "ngspice": 0.9583,
             "deviation": 0.0003, "relative": 0.0003 / 0.958},
            {"figure": "f_low", "unit": "Hz", "corner": "max", "hfe": 450.0, "drawerfit": 22.9, "ngspice": None,
             "deviation": None, "relative": None},
            {"figure": "ve", "unit": "V", "corner": "typical", "hfe": 300.0, "drawerfit": 0.0, "ngspice": 0.002,
             "deviation": 0.002, "relative": None}]
    table = table_rows(rows)
    assert [r[0] for r in table] == ["Base (no signal)", "Emitter (no signal)", "Low cut-off", "Distortion (THD)"]
    assert table[0] == ("Base (no signal)", "hFE min (200)", "958 mV", "958 mV", "+0.03 %")
    assert table[1][4] == "+2 mV"  # drawerfit's 0 V: the difference in volts, not a share
    assert table[2][2:] == ("22.9 Hz", "–", "–")
    assert table[3][2:] == ("1.20 %", "1.21 %", "+0.83 %")
    assert deviation_text({"relative": -0.0123}) == "-1.23 %"
    assert deviation_text({"relative": -1e-7}) == "0.00 %"  # no "-0.00 %"
    assert table_rows([{**rows[0], "hfe": 252.982}])[0][1] == "hFE min (253)"
