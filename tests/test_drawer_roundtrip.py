"""Saving keeps the user's file: unchanged lines byte for byte, changed lines only where they changed.

Invented fixtures.  The diff oracle is the standard library's difflib.
"""

from __future__ import annotations

import difflib
from importlib import resources
from pathlib import Path

import pytest

from inventory.drawer import Drawer
from inventory.store import Store

CRAFTED = {
    "crlf_quotes_unknown": (
        b'Kind,Value,QTY,Bin Colour,location,notes\r\n'
        b'resistor,4k7,10,red,"A1, left","metal film ""MF"""\r\n'
        b'resistor, 4.7k ,3,,A2,\r\n'
        b'capacitor,"100n",5,blue,B1,"two\r\nlines"\r\n'
    ),
    "bom_lf_no_final_newline": b"\xef\xbb\xbfkind,value,qty\nresistor,2R2,1\ncapacitor,4u7,2",
    "semicolons": b"kind;value;qty;tolerance\r\nresistor;4,7k;1;1%\r\nresistor;1M5;2;;\r\n",
    "blank_and_padded": b"kind,value,qty,,\n\nresistor,R47,5,,\n,,,,\n,,,,\n",
    "errors_kept": b"kind,value,qty\nresistor,4k7k,1\nwidget,1,1\nresistor,1k,\"open\n",
    "not_utf8": b"kind,value,qty,notes\nresistor,1k,1,caf\xe9\nresistor,2k,1,\xff\xfe\n",
    "lone_cr": b"kind,value,qty\rresistor,1k,1\rresistor,2k,2\r",
}


def demo() -> bytes:
    return resources.files("inventory").joinpath("demo", "drawer.csv").read_bytes()


@pytest.mark.parametrize("name", sorted(CRAFTED))
def test_unchanged_file_is_byte_identical(name):
    assert Drawer.from_bytes(CRAFTED[name]).to_bytes() == CRAFTED[name]


def test_demo_drawer_round_trips_and_is_clean():
    d = Drawer.from_bytes(demo())
    assert d.to_bytes() == demo()
    assert d.errors == []


def changed_lines(old: bytes, new: bytes) -> list[str]:
    """Lines that differ, as difflib's ndiff reports them ('- ' old, '+ ' new)."""
    a = old.decode("utf-8", "surrogateescape").splitlines(keepends=True)
    b = new.decode("utf-8", "surrogateescape").splitlines(keepends=True)
    return [x for x in difflib.ndiff(a, b) if x[:2] in ("- ", "+ ")]


def test_a_count_change_touches_only_the_qty_cell(tmp_path: Path):
    path = tmp_path / "drawer.csv"
    path.write_bytes(CRAFTED["crlf_quotes_unknown"])
    store = Store(path)
    store.load()
    store.set_qty(3, 12, "recount")
    assert changed_lines(CRAFTED["crlf_quotes_unknown"], path.read_bytes()) == [
        "- resistor, 4.7k ,3,,A2,\r\n", "+ resistor, 4.7k ,12,,A2,\r\n"]


def test_a_quoted_cell_stays_quoted_when_counts_change(tmp_path: Path):
    path = tmp_path / "drawer.csv"
    path.write_bytes(b'kind,value,qty\n"resistor","4k7","10"\n')
    Store(path).take([(2, 3)], "build")
    assert path.read_bytes() == b'kind,value,qty\n"resistor","4k7","7"\n'


def test_demo_take_changes_only_the_taken_lines(tmp_path: Path):
    path = tmp_path / "drawer.csv"
    path.write_bytes(demo())
    store = Store(path)
    d = store.load()
    picks = [d.resistor_stock().line[0], d.capacitor_stock().line[-1], d.transistors()[0].line]
    store.take([(int(n), 1) for n in picks], "bench build")
    diff = changed_lines(demo(), path.read_bytes())
    assert len(diff) == 6  # three lines out, three in
    old = demo().decode().splitlines(keepends=True)
    assert sorted(x[2:] for x in diff if x[0] == "-") == sorted(old[n - 1] for n in picks)


def test_added_line_uses_the_files_dialect(tmp_path: Path):
    path = tmp_path / "drawer.csv"
    path.write_bytes(CRAFTED["semicolons"])
    Store(path).add_part({"kind": "capacitor", "value": "2,2n", "qty": "4", "tolerance": "5%"}, "new bag")
    assert path.read_bytes() == CRAFTED["semicolons"] + b"capacitor;2,2n;4;5%\r\n"


def test_added_line_after_a_last_line_without_newline(tmp_path: Path):
    path = tmp_path / "drawer.csv"
    path.write_bytes(CRAFTED["bom_lf_no_final_newline"])
    Store(path).add_part({"kind": "resistor", "value": "10k", "qty": "1"})
    assert path.read_bytes() == CRAFTED["bom_lf_no_final_newline"] + b"\nresistor,10k,1\n"


def test_lines_with_errors_survive_a_save_untouched(tmp_path: Path):
    path = tmp_path / "drawer.csv"
    data = b"kind,value,qty\nresistor,4k7k,1\nresistor,1k,5\nwidget,9,9\n"
    path.write_bytes(data)
    Store(path).set_qty(3, 4)
    assert changed_lines(data, path.read_bytes()) == ["- resistor,1k,5\n", "+ resistor,1k,4\n"]
