"""Regression tests: nothing a user stocks, types or pipes crashes the command line.  Invented fixtures.

Each test names the finding it pins (numbers as in the reliability issue).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest

from inventory.drawer import Drawer
from inventory.journal import journal_path
from inventory.locate import demo_bytes
from tui.cli import main

GOOD = (b"kind,value,qty,tolerance,voltage,dielectric,part,polarity,hfe_min,hfe_max,location\n"
        b"resistor,4k7,10,1%,,,,,,,A1\nresistor,0R,5,,,,,,,,A0\nresistor,470k,2,,,,,,,,A2\n"
        b"capacitor,100n,5,,50V,x7r,,,,,B1\ntransistor,,3,,,,BC547B,NPN,200,450,C1\n")


@pytest.fixture
def drawer(drawer_at) -> Path:
    return drawer_at(GOOD)


def run(*argv: str) -> int:
    return main(list(argv))


# 1. A 0R link is a legal part: `check` accepts it, the solver's stock leaves it out, design answers.
def test_zero_ohm_link_is_kept_out_of_the_solver_stock(drawer, capsys):
    d = Drawer.load(drawer)
    assert run("check") == 0
    assert 0.0 in [p.value for p in d.parts]
    stock = d.resistor_stock()
    assert list(stock.line) == [2, 4] and (stock.ohms > 0).all()


def test_design_with_a_zero_ohm_link_does_not_crash(drawer, capsys):
    code = run("--inventory", str(drawer), "design", "--gain", "5", "--depth", "1", "--no-hints", "--json",
               "--time-limit", "5")
    out = capsys.readouterr()
    assert code in (0, 3, 4), out.err
    assert "Traceback" not in out.err and "internal error" not in out.err
    assert isinstance(json.loads(out.out)["designs"], list)


def test_analyze_with_a_zero_ohm_emitter_resistor(capsys):
    # A 0R at RE1 is a wire: the position is absent (README: analyze).
    code = run("analyze", "--topology", "common-emitter", "--r1", "47k", "--r2", "10k", "--rc", "4k7",
               "--re1", "0R", "--re2", "1k", "--ce", "100u", "--json")
    out = capsys.readouterr()
    assert code == 0, out.err
    assert json.loads(out.out)["predicted"]["gain"] < 0


# 6. and 15. Exponent notation and SI prefixes wherever a figure is read.
def test_exponent_and_prefix_spellings_on_the_command_line(capsys):
    base = ["analyze", "--topology", "common-emitter", "--r2", "10k", "--rc", "4k7", "--re1", "1k",
            "--supply", "12", "--json"]
    assert run(*base, "--r1", "47k", "--cin", "4u7") == 0
    plain = json.loads(capsys.readouterr().out)["predicted"]
    assert run(*base, "--r1", "4.7e4", "--cin", "4.7e-06") == 0
    expo = json.loads(capsys.readouterr().out)["predicted"]
    assert expo == plain


def test_drawer_file_in_exponent_notation_keeps_its_spelling(drawer, capsys):
    data = drawer.read_bytes() + b"resistor,2.2e3,4,,,,,,,,A3\n"
    drawer.write_bytes(data)
    d = Drawer.load(drawer)
    assert d.part_at(7).value == 2200.0 and not d.errors
    assert run("count", "2", "-1") == 0  # another line changes; this one keeps its bytes
    assert b"resistor,2.2e3,4,,,,,,,,A3\n" in drawer.read_bytes()


def test_low_cut_takes_si_prefixes(drawer, capsys):
    # The issue's `--low-cut 1.8k` was refused as "not a number"; --time-limit 0 is refused after it
    # is read, so no search runs.
    assert run("design", "--gain", "5", "--low-cut", "1.8k", "--time-limit", "0") == 2
    err = capsys.readouterr().err
    assert "--time-limit" in err and "--low-cut" not in err


# 16. Nonsense: a message naming the option, exit 2, no search.
@pytest.mark.parametrize(("args", "flag"), [
    (["--temp-range", "-300..-280"], "--temp-range"),
    (["--temp-range", "-inf..inf"], "--temp-range"),
    (["--temp-range", "50..0"], "--temp-range"),
    (["--temp-range", "-80..20"], "--temp-range"),
    (["--depth", "two"], "--depth"),
    (["--gain", "1e-6"], "--gain"),
    (["--gain", "nan"], "--gain"),
    (["--gain-tol", "1e-9"], "--gain-tol"),
    (["--source", "1000M"], "--source"),
    (["--load", "0R01"], "--load"),
    (["--max-thd", "150%"], "--max-thd"),
    (["--max-thd", "abc"], "--max-thd"),
    (["--min-vce", "20"], "--min-vce"),
    (["--prefer", "cheap"], "--prefer"),
    (["--time-limit", "inf"], "--time-limit"),
    (["--time-limit", "-1"], "--time-limit"),
    (["--min-yield", "2"], "--min-yield"),
    (["--low-cut", "1e400"], "--low-cut"),
])
def test_nonsense_names_the_option(drawer, capsys, args, flag):
    assert run("design", "--gain", "5", *args) == 2
    err = capsys.readouterr().err
    assert flag in err and "Traceback" not in err
    assert len(err.strip().splitlines()) == 1


# 3. Every command piped into `head` exits 0 or 141 quietly.
@pytest.mark.parametrize("argv", [
    ["list", "--json"], ["list"], ["history", "--json"], ["check"],
    ["analyze", "--topology", "common-emitter", "--r1", "47k", "--r2", "10k", "--rc", "4k7", "--re1", "1k",
     "--json"],
])
def test_closed_pipe_exits_quietly(drawer, argv):
    for i in range(40):  # enough history that `history --json` outgrows a pipe buffer
        assert main(["count", "2", str(i % 9 + 1)]) == 0 if argv[0] == "history" else True
    env = {**os.environ, "PYTHONPATH": str(Path(__file__).resolve().parents[1])}
    cmd = [sys.executable, "-m", "tui", "--inventory", str(drawer), *argv]
    pipe = subprocess.run(f"{_quote(cmd)} | head -c 1 >/dev/null; echo ${{PIPESTATUS[0]}}", shell=True,
                          executable="/bin/bash", capture_output=True, text=True, env=env, timeout=120)
    assert pipe.stdout.strip() in ("0", "141"), pipe.stderr
    assert "Traceback" not in pipe.stderr and "Error" not in pipe.stderr


def _quote(cmd):
    import shlex

    return " ".join(shlex.quote(c) for c in cmd)


def test_broken_pipe_in_process_is_exit_141(drawer, monkeypatch):
    import tui.cmd_drawer_list as listing

    def closed(*a, **k):
        raise BrokenPipeError(32, "Broken pipe")

    monkeypatch.setattr(listing, "_table", closed)
    assert main(["list"]) == 141


# Ctrl-C during any command: exit 130, one line, the drawer untouched.
def test_ctrl_c_exits_130_with_one_line(drawer, monkeypatch, capsys):
    import optimizer.search.select

    def interrupted(*a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr(optimizer.search.select, "find_designs", interrupted)
    before = drawer.read_bytes()
    assert main(["design", "--gain", "5"]) == 130
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1 and "interrupted" in err
    assert drawer.read_bytes() == before


def test_ctrl_c_during_a_real_design_subprocess(drawer):
    import signal
    import time

    big = GOOD + b"".join(b"resistor,%dR,3,,,,,,,,X%d\n" % (10 + 7 * i, i) for i in range(60))
    drawer.write_bytes(big)
    env = {**os.environ, "PYTHONPATH": str(Path(__file__).resolve().parents[1])}
    proc = subprocess.Popen([sys.executable, "-m", "tui", "--inventory", str(drawer), "design", "--gain", "20",
                             "--time-limit", "30"], stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=env)
    time.sleep(1.5)
    proc.send_signal(signal.SIGINT)
    out, err = proc.communicate(timeout=30)
    assert proc.returncode in (0, 3, 4, 130), err
    assert b"Traceback" not in err
    if proc.returncode == 130:
        assert len(err.decode().strip().splitlines()) == 1
    assert drawer.read_bytes() == big


# 10. An unreadable drawer file: a clear message, exit 2.
@pytest.mark.parametrize("argv", [["design", "--gain", "5"], ["list"], ["check"], ["count", "2", "+1"]])
def test_unreadable_drawer_is_exit_2(drawer, monkeypatch, capsys, argv):
    real = Path.read_bytes

    def denied(self):
        if self.name == "drawer.csv":
            raise PermissionError(13, "Permission denied", str(self))
        return real(self)

    monkeypatch.setattr(Path, "read_bytes", denied)
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert "drawer.csv" in err and "Permission denied" in err and "Traceback" not in err


# 12. Binary and UTF-16 drawers are refused, untouched.
@pytest.mark.parametrize("data", [
    "kind,value,qty\nresistor,1k,1\n".encode("utf-16"),
    "kind,value,qty\nresistor,1k,1\n".encode("utf-16-le"),
    bytes(range(256)) * 20,
    b"\x89PNG\r\n\x1a\n" + bytes(200),
    "kind,value,qty\n".encode() + "résistor,1k,1\n".encode("latin-1") * 200,
])
@pytest.mark.parametrize("argv", [["add", "resistor", "1k", "--qty", "1"], ["remove", "2"], ["count", "2", "5"],
                                  ["list"], ["design", "--gain", "5"]])
def test_not_a_utf8_csv_is_refused_untouched(drawer, capsys, data, argv):
    drawer.write_bytes(data)
    assert main(argv) == 2
    assert drawer.read_bytes() == data
    assert not journal_path(drawer).exists()
    err = capsys.readouterr().err
    assert "Traceback" not in err and "drawer.csv" in err


def test_utf8_with_bom_is_accepted(drawer):
    drawer.write_bytes(b"\xef\xbb\xbf" + GOOD)
    assert main(["count", "2", "+1"]) == 0
    assert drawer.read_bytes().startswith(b"\xef\xbb\xbf")


# 11. A journal line of an odd shape must not crash undo or history.
ODD_LINES = [
    b"[1, 2, 3]", b'"text"', b"42", b"null", b'{"id": "x", "time": 1, "action": "count"}',
    b'{"id": 1, "time": "t", "action": "count", "changes": "abc"}',
    b'{"id": 1, "time": "t", "action": "count", "changes": [1, 2]}',
    b'{"id": 1, "time": "t", "action": "count", "changes": [{"line": "x"}]}',
    b'{"id": 1, "time": "t", "action": "count", "undoes": "x", "changes": []}',
    b'{"id": 1, "time": "t", "action": "count", "changes": [{"line": 2, "index": 1, "identity": null, "row": {},'
    b' "raw_before": "", "raw_after": "", "qty_before": 1, "qty_after": 2, "header": true}]}',
    b'{"id": 1, "time": "t", "action": "count", "changes": [{"line": 2, "index": 1, "identity": [1], "row": {},'
    b' "raw_before": "x", "raw_after": "y", "qty_before": 1, "qty_after": 2}]}',
    b'{"id": 1, "time": "t", "action": "add", "changes": [{"line": 2, "index": -5, "identity": null, "row": {},'
    b' "raw_before": null, "raw_after": "", "qty_before": null, "qty_after": null}]}',
    b'{"id": 1, "time": "t", "action": "remove", "changes": [{"line": 2, "index": 99, "identity": null,'
    b' "row": {}, "raw_before": "garbage\\n", "raw_after": null, "qty_before": null, "qty_after": null}]}',
    b"\xff\xfe\x00", b"{" * 100_000,
]


@pytest.mark.parametrize("odd", ODD_LINES)
def test_odd_journal_lines_never_crash_undo_or_history(drawer, capsys, odd):
    journal_path(drawer).write_bytes(odd + b"\n")
    before = drawer.read_bytes()
    assert main(["history"]) == 0
    assert main(["history", "--json"]) == 0
    code = main(["undo"])
    err = capsys.readouterr().err
    assert code in (0, 1, 2) and "Traceback" not in err and "internal error" not in err
    if code != 0:
        assert drawer.read_bytes() == before


def test_journal_of_odd_shape_then_a_real_change_undoes(drawer, capsys):
    journal_path(drawer).write_bytes(b"[1]\n")
    assert main(["count", "2", "7"]) == 0
    assert main(["undo"]) == 0
    assert drawer.read_bytes() == GOOD
    assert main(["history"]) == 0
    assert f"{journal_path(drawer)}:1: not a journal entry" in capsys.readouterr().err


# The README names every option `add --help` has (it once claimed `add --part`).
def test_readme_add_options_match_add_help(capsys):
    readme = (Path(__file__).resolve().parents[1] / "README.md").read_text()
    row = next(line for line in readme.splitlines() if "`drawerfit [--inventory F] add " in line)
    import re

    named = set(re.findall(r"(--[a-z][a-z-]*)", row.split("|")[1])) - {"--inventory"}
    assert main(["add", "--help"]) == 0
    help_text = capsys.readouterr().out
    missing = [flag for flag in sorted(named) if flag not in help_text]
    assert not missing, missing


def test_every_subcommand_is_in_the_lazy_registration_table():
    import argparse

    from tui.cli import FAMILIES, build_parser

    parser = build_parser()
    sub = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    assert set(sub.choices) == set(FAMILIES)
    for name, family in FAMILIES.items():  # registering one family gives that command
        one = build_parser(name)
        sub = next(a for a in one._actions if isinstance(a, argparse._SubParsersAction))
        assert name in sub.choices


def test_drawer_commands_do_not_load_the_physics():
    code = ("import sys; from tui.cli import main; main(['--inventory', sys.argv[1], 'list']); "
            "print(sorted(m for m in ('scipy', 'ortools', 'pandas', 'textual') if m in sys.modules))")
    demo = Path(__file__).resolve().parents[1] / "inventory" / "demo" / "drawer.csv"
    done = subprocess.run([sys.executable, "-c", code, str(demo)], capture_output=True, text=True, timeout=120,
                          cwd=Path(__file__).resolve().parents[1])
    assert done.stdout.strip().splitlines()[-1] == "[]", done.stderr


# `design --help` once ended in "internal error": a "%" in an option's help that argparse reads as a format.
def test_every_help_page_prints(capsys):
    from tui.cli import FAMILIES

    assert main(["--help"]) == 0
    for name in FAMILIES:
        assert main([name, "--help"]) == 0, name
        page = capsys.readouterr()
        assert page.out.startswith("usage: drawerfit"), (name, page.err)
        assert "internal error" not in page.err


# ---- saved design files: what a drawer line or a hand edit can put in them ------------------------------------

SAVED = Path(__file__).resolve().parent / "data" / "trade_doc.json"  # a `design --save` document (3 designs)


@pytest.mark.parametrize("fmt", ["html", "svg"])
def test_sheet_of_a_transistor_whose_part_cell_holds_markup_characters(tmp_path, capsys, fmt):
    # A drawer line `transistor,,5,…,BC547B A&B,NPN,…` once made `sheet --format html|svg` end in "internal
    # error (ParseError …)": schemdraw reads a label as SVG markup, where a bare & is no text.
    doc = json.loads(SAVED.read_text())
    doc["designs"][0]["parts"]["Q1"]["part"] = "BC547B A&B <25> $5"
    path = tmp_path / "saved.json"
    path.write_text(json.dumps(doc))
    assert main(["sheet", str(path), "--format", fmt]) == 0
    out = capsys.readouterr().out
    assert "BC547B A&amp;B &lt;25&gt;" in out  # the part cell, escaped as SVG and HTML text


# Unicode Standard Annex #9's explicit formatting characters and marks: invisible, they reorder the text
# around them (a pick list could read otherwise than the drawer says).
BIDI = "\u061c\u200e\u200f\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069"


@pytest.mark.parametrize("fmt", ["html", "svg", "md", "csv", "cir"])
def test_text_direction_controls_never_reach_an_exported_sheet(tmp_path, capsys, fmt):
    doc = json.loads(SAVED.read_text())
    design = doc["designs"][0]
    design["parts"]["Q1"]["part"] = "BC547\u202eB25"  # shown as BC52B745 by a reader that obeys it
    design["locations"][str(design["parts"]["Q1"]["line"])] = "D\u20661" + BIDI
    path = tmp_path / "saved.json"
    path.write_text(json.dumps(doc))
    assert main(["sheet", str(path), "--format", fmt]) == 0
    out = capsys.readouterr().out
    assert not any(c in out for c in BIDI)
    if fmt != "cir":  # the deck names the transistor by its line, not its part cell
        assert "BC547\\u202eB25" in out  # shown, as `check` and `list` show it
    if fmt in ("html", "md", "csv"):  # the pick list carries the location
        assert "D\\u20661" in out


def test_sheet_and_open_refuse_a_file_nested_too_deeply(tmp_path, capsys):
    # A hand-edited file of 100 000 nested brackets once ended `sheet` in "internal error (RecursionError …)".
    from tui.saved import SavedFileError, load_saved

    path = tmp_path / "deep.json"
    path.write_text('{"designs": ' + "[" * 100_000 + "]" * 100_000 + "}")
    assert main(["sheet", str(path), "--format", "md"]) == 2
    err = capsys.readouterr().err
    assert "deep.json: not a saved design file" in err and "internal error" not in err
    with pytest.raises(SavedFileError, match="deep.json"):  # `drawerfit open FILE` reads it this way
        load_saved(path)


def test_sheet_reads_a_saved_file_with_a_byte_order_mark(tmp_path, capsys):
    # An editor that saves with a BOM: `build` and `open` read such a file; `sheet` refused it.
    path = tmp_path / "bom.json"
    path.write_bytes(b"\xef\xbb\xbf" + SAVED.read_bytes())
    assert main(["sheet", str(path), "--format", "csv"]) == 0
    assert capsys.readouterr().out.startswith("location,line,part,value,qty,positions")


# A hand-damaged saved file once got `sheet`/`build` to say Python's own words ("list indices must be
# integers or slices, not str"); the reason names the entry by its JSON path instead.
DAMAGE = {
    "a part that is a list": (("designs", 0, "parts", "RC"), [1, 2], "designs[0].parts.RC: expected an object"),
    "a value as text": (("designs", 0, "parts", "RC", "ohms"), "4k7", "designs[0].parts.RC.ohms: expected a number"),
    "a network that is a list": (("designs", 0, "parts", "R1", "network"), [1],
                                 "designs[0].parts.R1.network: expected an object"),
    "a transistor that is a list": (("designs", 0, "parts", "Q1"), [], "designs[0].parts.Q1: expected an object"),
    "hFE as text": (("designs", 0, "hfe"), "x", "designs[0].hfe: expected an object"),
    "a figure as text": (("designs", 0, "predicted", "gain"), "a", "designs[0].predicted.gain: expected a number"),
    "a warning that is an object": (("designs", 0, "warnings"), [{"a": 1}], "designs[0].warnings[0]: expected text"),
    "a use that is a list": (("designs", 0, "uses", 0), [1], "designs[0].uses[0]: expected "),
    "the supply as text": (("spec", "supply_v"), "x", "spec.supply_v: expected a number"),
    "no load at all": (("spec", "load_ohms"), 0, "spec.load_ohms: expected a number of 1 mΩ or more"),
}


def _damaged(tmp_path: Path, where: tuple, value) -> Path:
    doc = json.loads(SAVED.read_text())
    node = doc
    for key in where[:-1]:
        node = node[key]
    node[where[-1]] = value
    path = tmp_path / "hand.json"
    path.write_text(json.dumps(doc))
    return path


@pytest.mark.parametrize(("where", "value", "reason"), DAMAGE.values(), ids=DAMAGE)
def test_a_damaged_saved_design_is_named_by_file_and_json_path(tmp_path, capsys, where, value, reason):
    path = _damaged(tmp_path, where, value)
    drawer = tmp_path / "drawer.csv"
    drawer.write_bytes(demo_bytes())
    for argv in (["sheet", str(path), "--format", "csv"], ["--inventory", str(drawer), "build", str(path)]):
        assert main(argv) == 2
        err = capsys.readouterr().err
        assert err.startswith(f"drawerfit: {path}: ") and reason in err, argv
        assert err.count("\n") == 1 and "cannot be drawn" not in err
    assert drawer.read_bytes() == demo_bytes() and not journal_path(drawer).exists()


PYTHON_WORDS = ("NoneType", "object has no", "not subscriptable", "indices must", "not iterable", "argument",
                "__format__", "not supported between")


def test_no_hand_damage_to_a_saved_design_gets_python_words_from_sheet(tmp_path, capsys):
    # Brute force over the saved demo document: every entry of design 1 and of the request, each
    # replaced by a value of another type.  Each run draws the sheet or refuses it in one plain line.
    doc = json.loads(SAVED.read_text())

    def entries(node, where=()):
        if where:
            yield where
        if isinstance(node, dict) and len(where) < 5:
            for k, x in node.items():
                yield from entries(x, (*where, k))
        elif isinstance(node, list) and node and len(where) < 5:
            yield from entries(node[0], (*where, 0))

    spots = [w for w in entries(doc) if w[:2] == ("designs", 0) or w[:1] == ("spec",)]
    assert len(spots) > 60
    for where in spots:
        for value in ([], "x", None):
            path = _damaged(tmp_path, where, value)
            code = main(["sheet", str(path), "--format", "csv"])
            err = capsys.readouterr().err
            assert code in (0, 2) and err.count("\n") == (code == 2), (where, value, err)
            assert not any(w in err for w in PYTHON_WORDS) and "internal error" not in err, (where, value, err)


def test_a_numeric_warning_inside_a_command_is_one_plain_line(drawer, capsys, monkeypatch):
    # numpy's RuntimeWarning once reached the terminal as "…/decompose.py:101: RuntimeWarning: invalid value
    # encountered in log1p" and a line of source.  Whatever warns inside a command is said once, plainly.
    import warnings

    import numpy as np

    import tui.cmd_drawer_list as listing

    real = listing.select

    def select_that_warns(*args):
        np.log1p(np.array([-2.0, -3.0]))  # NaN, and numpy warns (twice over: said once)
        np.log1p(np.array([-2.0]))
        return real(*args)

    monkeypatch.setattr(listing, "select", select_that_warns)
    monkeypatch.delenv("DRAWERFIT_DEBUG", raising=False)
    with warnings.catch_warnings():
        warnings.simplefilter("always")  # as a user's interpreter shows them (this suite makes them errors)
        assert main(["list"]) == 0
    err = capsys.readouterr().err
    notes = [line for line in err.splitlines() if "went out of range" in line]
    assert notes == ["drawerfit list: note: a calculation went out of range (invalid value encountered in log1p); "
                     "please report it with the command line (DRAWERFIT_DEBUG=1 shows where)"]
    assert "RuntimeWarning" not in err and ".py:" not in err
