"""The drawer subcommands through `tui.cli.main`, in temporary folders.  Invented fixtures."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from inventory.drawer import Drawer
from inventory.journal import journal_path
from inventory.locate import demo_bytes
from tui.cli import main

GOOD = b"kind,value,qty,tolerance,voltage,dielectric,part,polarity,hfe_min,hfe_max,location\n" \
       b"resistor,4k7,10,1%,,,,,,,A1\nresistor,470k,2,,,,,,,,A2\ncapacitor,100n,5,,50V,x7r,,,,,B1\n" \
       b"transistor,,3,,,,BC547B,NPN,200,450,C1\n"


@pytest.fixture
def drawer(drawer_at) -> Path:
    return drawer_at(GOOD)


def run(*argv: str) -> int:
    return main(list(argv))


def test_check_exit_codes(drawer, capsys):
    assert run("check") == 0
    drawer.write_bytes(GOOD + b"resistor,4k7k,1,,,,,,,,A3\nwidget,1,x,,,,,,,,\n")
    assert run("--inventory", str(drawer), "check") == 2
    out = capsys.readouterr().out.splitlines()
    assert out[0] == f'{drawer}:6:2: value "4k7k" is not a resistance (expected e.g. 4k7, 4.7k, 4700)'
    assert [x.split(":")[1:3] for x in out] == [["6", "2"], ["7", "1"], ["7", "3"]]


def test_check_with_only_warnings_is_0(drawer, capsys):
    drawer.write_bytes(GOOD + b"resistor,4700,1,1%,,,,,,,A1\n")
    assert run("check") == 0
    assert "warning: same resistor in A1 as line 2" in capsys.readouterr().out


def test_list_json_keys_and_filters(drawer, capsys):
    assert run("list", "--json") == 0
    rows = json.loads(capsys.readouterr().out)
    assert {"line", "kind", "value", "qty", "location", "tolerance", "power_w", "voltage_v"} <= set(rows[0])
    assert [(r["line"], r["value"]) for r in rows] == [(2, 4700.0), (3, 470e3), (4, 100e-9), (5, None)]
    assert run("list", "--json", "--min", "1k", "--max", "100k") == 0
    assert [r["line"] for r in json.loads(capsys.readouterr().out)] == [2]
    assert run("list", "--json", "--min", "10n") == 0  # a capacitance implies capacitors
    assert [r["line"] for r in json.loads(capsys.readouterr().out)] == [4]
    assert run("list", "--json", "--location", "c") == 0
    assert [r["part"] for r in json.loads(capsys.readouterr().out)] == ["BC547B"]


def test_list_table_uses_rkm_spelling(drawer, capsys):
    drawer.write_bytes(GOOD.replace(b"470k", b"470000"))
    assert run("list") == 0
    out = capsys.readouterr().out
    assert " 470k " in out and " 100n " in out and "470000" not in out


def test_bad_filter_names_the_option(drawer, capsys):
    assert run("list", "--min", "4k7k") == 2
    assert capsys.readouterr().err.startswith('drawerfit: --min: "4k7k" is not a resistance')
    assert run("list", "--kind", "transistor", "--max", "1k") == 2
    capsys.readouterr()
    # argparse refuses an unknown choice, naming the option; main() returns its exit code
    assert run("list", "--kind", "diode") == 2 and "--kind" in capsys.readouterr().err


def test_add_count_remove_history_undo(drawer, capsys):
    assert run("add", "resistor", "22k", "--qty", "4", "--location", "A3", "--reason", "bought") == 0
    assert run("add", "transistor", "2N3906", "--qty", "2", "--polarity", "pnp",
               "--hfe-min", "100", "--hfe-max", "300") == 0
    assert run("count", "2", "7") == 0
    assert run("count", "2", "-2", "--reason", "test rig") == 0
    assert run("count", "3", "+3") == 0
    assert run("remove", "4") == 0
    d = Drawer.load(drawer)
    assert [(p.line, p.qty) for p in d.parts[:2]] == [(2, 5), (3, 5)]
    assert d.parts[-1].polarity == "PNP" and d.parts[-1].line == 6
    capsys.readouterr()
    assert run("history", "--json") == 0
    entries = json.loads(capsys.readouterr().out)
    assert [e["action"] for e in entries] == ["add", "add", "count", "count", "count", "remove"]
    assert entries[0]["reason"] == "bought"
    for _ in range(6):
        assert run("undo") == 0
    assert drawer.read_bytes() == GOOD
    assert run("undo") == 1
    assert "nothing to undo" in capsys.readouterr().err
    assert run("history") == 0
    assert "(undone by" in capsys.readouterr().out


def test_refusals_exit_with_a_message_and_no_traceback(drawer, capsys):
    assert run("count", "2", "-11") == 1
    assert "has 10, needs 11" in capsys.readouterr().err
    assert run("count", "99", "1") == 2
    assert "line 99 holds no part" in capsys.readouterr().err
    assert run("count", "2", "seven") == 2
    assert capsys.readouterr().err.startswith("drawerfit: QTY:")
    assert run("add", "capacitor", "220", "--qty", "1") == 2
    assert "not a capacitance" in capsys.readouterr().err
    assert run("add", "resistor", "1k", "--qty", "1", "--cell", "colour=red") == 2
    assert 'no column "colour"' in capsys.readouterr().err
    assert run("undo", "42") == 2
    assert drawer.read_bytes() == GOOD


def test_missing_explicit_inventory_is_an_error_not_a_new_file(drawer, tmp_path, capsys):
    assert run("--inventory", str(tmp_path / "nope.csv"), "check") == 2
    assert "nope.csv (--inventory) does not exist" in capsys.readouterr().err
    assert not (tmp_path / "nope.csv").exists()


def test_first_use_starts_from_the_demo_and_says_where(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    monkeypatch.delenv("DRAWERFIT_INVENTORY", raising=False)
    monkeypatch.setenv("XDG_DATA_HOME", str(tmp_path / "data"))  # where platformdirs looks on Linux
    assert run("list", "--json") == 0
    home = tmp_path / "data" / "drawerfit" / "drawer.csv"
    assert home.read_bytes() == demo_bytes()
    assert str(home) in capsys.readouterr().err
    assert run("check") == 0
    assert "demo" not in capsys.readouterr().err  # said once, on creation


def test_environment_variable_names_the_file(drawer, tmp_path, monkeypatch, capsys):
    other = tmp_path / "other.csv"
    other.write_bytes(b"kind,value,qty\nresistor,1k,1\n")
    monkeypatch.setenv("DRAWERFIT_INVENTORY", str(other))
    assert run("list", "--json") == 0
    assert [r["value"] for r in json.loads(capsys.readouterr().out)] == [1000.0]


def test_edit_changes_named_cells_in_place(drawer, capsys):
    assert run("edit", "3", "--location", "A4", "--notes", "moved, 2026", "--reason", "tidy") == 0
    lines, good = drawer.read_bytes().split(b"\n"), GOOD.split(b"\n")
    assert lines[2] == b'resistor,470k,2,,,,,,,,A4,"moved, 2026"'
    assert lines[0] == good[0] + b",notes"  # the file had no notes column: it is added
    assert [lines[i] for i in (1, 3, 4, 5)] == [good[i] for i in (1, 3, 4, 5)]
    d = Drawer.load(drawer)
    assert (d.part_at(3).location, d.part_at(3).notes) == ("A4", "moved, 2026")
    assert run("edit", "3", "--value", "470kk") == 2
    assert "not a resistance" in capsys.readouterr().err
    assert run("undo") == 0
    assert drawer.read_bytes() == GOOD


# ---- the crash sweep of a new bench user (each test names the command line it pins) ------------------------------

def test_count_past_the_largest_count_is_refused_and_writes_nothing(drawer, capsys):
    # `count 2 +999999999` once wrote qty 1000000001, which the file's own check then rejects (qty holds at most
    # nine digits, inventory/rows.py): the line turned into an error line.
    assert run("count", "2", "+999999989") == 0  # 10 + 999999989 = 999999999, the largest count a line holds
    before = drawer.read_bytes()
    assert run("count", "2", "+1") == 2
    err = capsys.readouterr().err
    assert "at most 999,999,999" in err and "nothing was written" in err
    assert drawer.read_bytes() == before
    assert not Drawer.load(drawer).errors


@pytest.mark.parametrize("n", ["0", "-1"])
def test_history_last_must_be_one_or_more(drawer, capsys, n):
    # `history --last -1` once said "no changes recorded" of a journal that holds changes.
    assert run("count", "2", "+1") == 0
    capsys.readouterr()
    assert run("history", "--last", n) == 2
    assert "--last" in capsys.readouterr().err
    assert run("history", "--last", "1") == 0
    assert "line 2" in capsys.readouterr().out


NOT_A_DRAWER = {
    "no drawer columns": b"name,phone\nAnna,555\n",
    "an unclosed quote": b'"kind,value,qty\nresistor,4k7,3\n',
}


@pytest.mark.parametrize("data", NOT_A_DRAWER.values(), ids=NOT_A_DRAWER)
def test_a_file_that_is_no_drawer_is_never_patched(drawer_at, capsys, data):
    # `add`/`edit` once appended drawer columns to any CSV named by mistake (and, behind an unclosed quote, a
    # second "kind" column the reader never sees); `list` and `design` answered as if from an empty drawer.
    path = drawer_at(data)
    assert run("add", "resistor", "1k", "--qty", "2") == 2
    assert "drawer.csv:1: not a drawer file: the header" in capsys.readouterr().err
    assert run("edit", "2", "--location", "B1") == 2
    capsys.readouterr()
    assert path.read_bytes() == data and not journal_path(path).exists()
    assert run("list") == 2
    assert "drawer.csv:1: not a drawer file" in capsys.readouterr().err
    assert run("design", "--gain", "10", "--time-limit", "1") == 2  # bad input, not "proven infeasible" (3)
    assert "not a drawer file" in capsys.readouterr().err


def test_an_empty_inventory_name_is_an_error_not_the_default_drawer(drawer, capsys):
    # `drawerfit --inventory "$F" count 2 -1` with F unset once changed ./drawer.csv (or the data folder's).
    assert run("--inventory", "", "count", "2", "-1") == 2
    assert "--inventory: the file name is empty" in capsys.readouterr().err
    assert drawer.read_bytes() == GOOD


@pytest.mark.parametrize("argv", [["list", "--inventory", "x.csv"], ["list", "--inventory=x.csv"]])
def test_inventory_after_the_command_says_where_it_goes(drawer, capsys, argv):
    assert run(*argv) == 2
    assert "--inventory goes before the command" in capsys.readouterr().err


def test_a_journal_that_cannot_be_read_is_said_plainly(drawer, capsys):
    # `history` once printed "[Errno 21] Is a directory: '…'".
    journal_path(drawer).mkdir()
    assert run("history") == 2
    err = capsys.readouterr().err
    assert f"{journal_path(drawer)}: cannot use it (Is a directory)" in err and "[Errno" not in err


def test_history_and_undo_name_each_damaged_journal_line(drawer, capsys):
    assert run("count", "2", "+1") == 0
    assert run("count", "2", "+1") == 0
    jpath = journal_path(drawer)
    first, second = jpath.read_bytes().splitlines(keepends=True)
    jpath.write_bytes(first + second[:25])  # torn in the middle of change 2
    assert run("count", "3", "+1") == 0
    capsys.readouterr()
    assert run("history") == 0
    out, err = capsys.readouterr()
    assert f"{jpath}:2: not a journal entry" in err
    assert [line.split()[0] for line in out.splitlines() if not line.startswith(" " * 8)] == ["1", "3"]
    assert run("undo") == 0
    out, err = capsys.readouterr()
    assert f"{jpath}:2: not a journal entry" in err and out.startswith("undid change 3")
    assert Drawer.load(drawer).part_at(3).qty == 2  # change 3 (the count on line 3) was the one undone


@pytest.mark.parametrize("qty", ["10", "+0", "-0"])
def test_a_count_the_line_already_has_writes_nothing(drawer, capsys, qty):
    # `count 2 10` on a line counting 10 once journaled a change that changed nothing.
    assert run("count", "2", qty) == 0
    assert "drawer.csv:2: already reads so; nothing written" in capsys.readouterr().err
    assert drawer.read_bytes() == GOOD and not journal_path(drawer).exists()
    assert run("undo") == 1  # nothing to undo: no entry was made


def test_list_shows_each_line_on_one_line_and_keeps_the_file(drawer, capsys):
    text = GOOD + b'resistor,1k,1,,,,,,,,A4,"bought at the fair\nsecond bag\r\nthird\tone"\n'
    drawer.write_bytes(text.replace(b",location\n", b",location,notes\n", 1))
    before = drawer.read_bytes()
    assert run("list") == 0
    out = capsys.readouterr().out.splitlines()
    assert len(out) == 1 + 5  # the header and one row per part
    assert out[-1].endswith("bought at the fair / second bag / third\\tone")
    assert drawer.read_bytes() == before
    assert run("list", "--json") == 0  # the JSON keeps the text as the file has it
    assert json.loads(capsys.readouterr().out)[-1]["notes"] == "bought at the fair\nsecond bag\r\nthird\tone"


def test_list_with_min_above_max_names_both(drawer, capsys):
    assert run("list", "--min", "10k", "--max", "1k") == 2
    err = capsys.readouterr().err
    assert "--min 10k is above --max 1k" in err and err.count("\n") == 1
    assert run("list", "--json", "--min", "4k7", "--max", "4700") == 0  # equal bounds: that one value
    assert [r["line"] for r in json.loads(capsys.readouterr().out)] == [2]


@pytest.mark.parametrize(("argv", "said"), [
    (["resistor", "1k", "--dielectric", "x7r"], "--dielectric does not apply to a resistor (it is for capacitors)"),
    (["capacitor", "100n", "--power", "1W"], "--power does not apply to a capacitor (it is for resistors)"),
    (["resistor", "1k", "--hfe-min", "100"], "--hfe-min does not apply to a resistor (it is for transistors)"),
    (["transistor", "BC547B", "--tolerance", "5%"],
     "--tolerance does not apply to a transistor (it is for resistors and capacitors)"),
    (["resistor", "1k", "--cell", "vceo=45V"], "--vceo does not apply to a resistor"),
])
def test_add_refuses_a_cell_its_kind_does_not_read(drawer, capsys, argv, said):
    assert run("add", *argv, "--qty", "1") == 2
    assert said in capsys.readouterr().err
    assert drawer.read_bytes() == GOOD and not journal_path(drawer).exists()


@pytest.mark.parametrize(("cells", "column"), [
    (b"1e9,1e10", 9), (b"0.5,300", 9), (b"100,200000", 10),
])
def test_check_refuses_a_current_gain_no_transistor_has(drawer, capsys, cells, column):
    drawer.write_bytes(GOOD + b"transistor,,3,,,,XX1,NPN," + cells + b",C2\n")
    assert run("check") == 2
    out = capsys.readouterr().out
    assert f"drawer.csv:6:{column}: " in out and "is not a transistor's current gain (expected 1 to 100,000" in out
    assert 6 not in [p.line for p in Drawer.load(drawer).transistors()]  # designs never see it


def test_check_passes_darlingtons_and_refuses_ratings_past_any_transistor(drawer_at, capsys):
    head = b"kind,value,qty,part,polarity,hfe_min,hfe_max,vceo,ic_max,pd_max\n"
    # A Darlington's hFE runs to tens of thousands (BC517 is given as >= 30 000, from memory).
    drawer = drawer_at(head + b"transistor,,2,BC517,NPN,30000,90000,30V,1A,625mW\n"
                              b"transistor,,2,TIP122,NPN,1000,20000,100V,5A,65W\n")
    assert run("check") == 0
    drawer.write_bytes(head + b"transistor,,2,X,NPN,100,300,45kV,100mA,500mW\n"
                              b"transistor,,2,Y,NPN,100,300,45V,2000A,500mW\n"
                              b"transistor,,2,Z,NPN,100,300,45V,100mA,20000W\n")
    assert run("check") == 2
    out = capsys.readouterr().out.splitlines()
    assert [line.split(": ", 1)[1].split(" ")[0] for line in out] == ["vceo", "ic_max", "pd_max"]
    assert all("beyond any single transistor" in line for line in out)
