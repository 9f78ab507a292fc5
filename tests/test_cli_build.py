"""`drawerfit build` with saved files that are damaged, hand-edited or from elsewhere, and building twice.

Invented fixtures.  The saved file is written by hand here (its shape as `design --save` writes it,
README: design and build), so these tests need no solver run.
"""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from inventory.drawer import Drawer
from inventory.journal import journal_path
from tui.cli import main
from tui.cmd_design import fingerprint

DRAWER = (b"kind,value,qty,voltage,dielectric,part,polarity,hfe_min,hfe_max,location\n"
          b"resistor,47k,4,,,,,,,A1\nresistor,10k,4,,,,,,,A2\nresistor,4k7,4,,,,,,,A3\n"
          b"capacitor,10u,6,25V,electrolytic,,,,,B1\ntransistor,,3,,,BC547B,NPN,200,450,C1\n")
USES = [{"line": 2, "qty": 1}, {"line": 3, "qty": 1}, {"line": 4, "qty": 1}, {"line": 5, "qty": 2},
        {"line": 6, "qty": 1}]


@pytest.fixture
def drawer(drawer_at) -> Path:
    return drawer_at(DRAWER)


def saved(tmp_path: Path, drawer: Path, **change) -> Path:
    doc = {"designs": [{"topology": "common-emitter", "uses": USES}], "why": [], "hints": [],
           "inventory": str(drawer), "fingerprint": fingerprint(Drawer.load(drawer), [u["line"] for u in USES])}
    doc.update(change)
    path = tmp_path / "design.json"
    path.write_text(json.dumps(doc))
    return path


def test_build_then_second_build_is_refused_unless_again(drawer, tmp_path, capsys):
    file = saved(tmp_path, drawer)
    assert main(["build", str(file)]) == 0
    after_first = drawer.read_bytes()
    assert main(["build", str(file)]) == 1
    err = capsys.readouterr().err
    assert "already built" in err and "--again" in err
    assert drawer.read_bytes() == after_first
    assert main(["build", str(file), "--again"]) == 0
    assert Drawer.load(drawer).part_at(2).qty == 2
    # Undoing a build makes it buildable again without --again.
    assert main(["undo"]) == 0 and main(["undo"]) == 0
    assert drawer.read_bytes() == DRAWER
    assert main(["build", str(file)]) == 0


def test_another_design_of_the_same_file_is_not_a_repeat(drawer, tmp_path):
    other = [{"line": 2, "qty": 1}, {"line": 6, "qty": 1}]
    file = saved(tmp_path, drawer, designs=[{"uses": USES}, {"uses": other}])
    assert main(["build", str(file), "--pick", "1"]) == 0
    assert main(["build", str(file), "--pick", "2"]) == 0


BAD_FILES = {
    "designs as a string": {"designs": "R1=47k"},
    "designs missing": {"why": []},
    "top level a list": [1, 2],
    "uses missing": {"designs": [{"parts": {}}]},
    "uses not a list": {"designs": [{"uses": {"line": 2, "qty": 1}}]},
    "uses empty": {"designs": [{"uses": []}]},
    "uses holding text": {"designs": [{"uses": ["line 2"]}]},
    "qty NaN": {"designs": [{"uses": [{"line": 2, "qty": float("nan")}]}]},
    "qty 1e400": "RAW:{\"designs\": [{\"uses\": [{\"line\": 2, \"qty\": 1e400}]}]}",
    "qty 1.5": {"designs": [{"uses": [{"line": 2, "qty": 1.5}]}]},
    "qty 0": {"designs": [{"uses": [{"line": 2, "qty": 0}]}]},
    "qty negative": {"designs": [{"uses": [{"line": 2, "qty": -1}]}]},
    "qty true": {"designs": [{"uses": [{"line": 2, "qty": True}]}]},
    "qty as text": {"designs": [{"uses": [{"line": 2, "qty": "1"}]}]},
    "line the header": {"designs": [{"uses": [{"line": 1, "qty": 1}]}]},
    "line huge": {"designs": [{"uses": [{"line": 10**30, "qty": 1}]}]},
    "fingerprint a string": {"designs": [{"uses": [{"line": 2, "qty": 1}]}], "fingerprint": "abc"},
    "fingerprint lines a list": {"designs": [{"uses": [{"line": 2, "qty": 1}]}], "fingerprint": {"lines": []}},
    "fingerprint identity text": {"designs": [{"uses": [{"line": 2, "qty": 1}]}],
                                  "fingerprint": {"lines": {"2": {"identity": "x", "qty": 1}}, "sha256": ""}},
    "inventory a number": {"designs": [{"uses": [{"line": 2, "qty": 1}]}], "inventory": 5},
    "not JSON": "RAW:{designs: [",
    "not UTF-8": "RAW:\xff\xfe",
    "deeply nested": "RAW:" + "[" * 100_000,
    "empty": "RAW:",
}


@pytest.mark.parametrize("name", list(BAD_FILES))
def test_a_damaged_saved_file_is_one_message_exit_2_nothing_touched(drawer, tmp_path, capsys, name):
    content = BAD_FILES[name]
    file = tmp_path / "design.json"
    if isinstance(content, str):
        file.write_bytes(content[4:].encode("latin-1"))
    else:
        file.write_text(json.dumps(content))
    assert main(["build", str(file)]) == 2
    err = capsys.readouterr().err
    assert len(err.strip().splitlines()) == 1, err
    assert "design.json" in err and "Traceback" not in err
    assert drawer.read_bytes() == DRAWER and not journal_path(drawer).exists()


def test_a_file_with_no_design_and_a_bad_pick(drawer, tmp_path, capsys):
    file = saved(tmp_path, drawer, designs=[])
    assert main(["build", str(file)]) == 2
    file = saved(tmp_path, drawer)
    for pick in ("9", "0", "x", "1.5"):
        assert main(["build", str(file), "--pick", pick]) == 2
        assert "--pick" in capsys.readouterr().err
    assert drawer.read_bytes() == DRAWER


def test_stock_changed_since_saving_is_exit_1(drawer, tmp_path, capsys):
    file = saved(tmp_path, drawer)
    assert main(["count", "5", "1"]) == 0
    assert main(["build", str(file)]) == 1
    assert "line 5 has 1 left" in capsys.readouterr().err


def test_a_missing_saved_file_is_exit_2(drawer, tmp_path, capsys):
    assert main(["build", str(tmp_path / "nope.json")]) == 2
    assert "nope.json" in capsys.readouterr().err


def test_a_saved_file_whose_drawer_is_gone_names_the_saved_file(drawer, tmp_path, capsys):
    # The drawer named in the saved file was moved away: the message once blamed "(--inventory)", an option
    # the user had not given.
    file = saved(tmp_path, drawer, inventory=str(tmp_path / "moved.csv"))
    assert main(["build", str(file)]) == 2
    err = capsys.readouterr().err
    assert f"moved.csv (the drawer {file} was made from) does not exist" in err and "(--inventory)" not in err
    assert "--inventory FILE names another drawer" in err
    assert drawer.read_bytes() == DRAWER
