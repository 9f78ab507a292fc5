"""Property trials on malformed drawer files: never a traceback, every problem placed, bytes kept.

Run with -s to see how many cases ran (`python -m tests.helpers.figures` prints them too).
"""

from __future__ import annotations

import csv
import io
import tempfile
from collections import Counter
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from inventory.drawer import Drawer
from inventory.rows import COLUMNS, REQUIRED
from inventory.store import NothingToUndo, Store, StoreError

CASES: Counter = Counter()
FUZZ = settings(max_examples=400, deadline=None, derandomize=True,
                suppress_health_check=[HealthCheck.too_slow])

# Cells people type, good and bad (invented).
CELL = st.sampled_from([
    "", " ", "resistor", "capacitor", "transistor", "Resistor", "widget", "4k7", "4k7k", "100n", "220",
    "1M5", "R47", "-3", "0", "10", "1e3", "5%", "±1%", "1/4W", "25V", "6V3", "x7r", "electrolytic",
    "NPN", "pnp", "BC547", "200", "450", "A1", 'a "quoted" note', "two,commas,", "line\nbreak",
    "caf\u00e9", "\u00b5", "\t", ";", "\r", "\ufeff", "nan", "inf", "9" * 30,
]) | st.text(max_size=8)
HEAD = st.lists(st.sampled_from(COLUMNS + ("extra", "Qty", "KIND", "", "qty")), min_size=1, max_size=10)


def check(data: bytes) -> Drawer:
    d = Drawer.from_bytes(data, "f.csv")
    lines = max(1, data.count(b"\n") + data.count(b"\r") - data.count(b"\r\n") + 1)
    for p in d.problems:
        assert 1 <= p.line <= lines and p.column >= 1
        assert str(p).startswith(f"f.csv:{p.line}:{p.column}: ")
        assert str(p).isprintable()  # one line, safe to print whatever the cell held
        str(p).encode("utf-8")
        assert p.severity in ("error", "warning")
    assert d.to_bytes() == data  # whatever it is, it saves back unchanged
    if all(name in d.columns for name in REQUIRED):
        bad = {p.line for p in d.errors}
        for rec in d.records[d.header + 1:]:  # no line is dropped silently
            assert rec.blank or d.part_at(rec.line) is not None or rec.line in bad
    return d


def table(header: list[str], rows: list[list[str]], delimiter: str, newline: str, quoting: int) -> str:
    buf = io.StringIO()
    csv.writer(buf, delimiter=delimiter, lineterminator=newline, quoting=quoting).writerows([header, *rows])
    return buf.getvalue()


@pytest.mark.fuzz
@FUZZ
@given(st.binary(max_size=400))
def test_random_bytes(data):
    CASES["random bytes"] += 1
    check(data)


@pytest.mark.fuzz
@FUZZ
@given(st.text(alphabet=st.sampled_from(list('kindvalueqtyresistor4k7,;"\r\n \t')), max_size=300))
def test_random_csv_like_text(text):
    CASES["csv-like text"] += 1
    check(text.encode())


@pytest.mark.fuzz
@FUZZ
@given(HEAD, st.lists(st.lists(CELL, max_size=12), max_size=8), st.sampled_from([",", ";", "\t"]),
       st.sampled_from(["\n", "\r\n"]), st.sampled_from([csv.QUOTE_MINIMAL, csv.QUOTE_ALL]), st.booleans())
def test_random_cells_under_a_random_header(header, rows, delimiter, newline, quoting, bom):
    CASES["random cells"] += 1
    text = table(header, rows, delimiter, newline, quoting)
    data = (b"\xef\xbb\xbf" if bom else b"") + text.encode("utf-8", "surrogatepass")
    check(data)


@pytest.mark.fuzz
@FUZZ
@given(st.lists(st.lists(CELL, min_size=3, max_size=5), min_size=1, max_size=6),
       st.lists(st.tuples(st.integers(0, 10_000), st.sampled_from(['"', ",", "\n", "\r", '""', "\xff"])),
                max_size=4))
def test_broken_quoting_and_stray_bytes(rows, damage):
    CASES["broken quoting"] += 1
    data = bytearray(table(["kind", "value", "qty", "location", "notes"], rows, ",", "\n",
                           csv.QUOTE_MINIMAL).encode())
    for at, junk in damage:
        pos = at % (len(data) + 1)
        data[pos:pos] = junk.encode("latin-1")
    check(bytes(data))


VALID = st.lists(st.tuples(st.sampled_from(["resistor", "capacitor"]),
                           st.sampled_from(["1k", "4k7", "10k", "100n", "1u", "47p"]),
                           st.integers(0, 50), st.sampled_from(["A1", "A2", "B1", "C 3"])),
                 min_size=1, max_size=8)


@pytest.mark.fuzz
@settings(max_examples=150, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow])
@given(VALID, st.sampled_from(["\n", "\r\n"]), st.data())
def test_a_count_changes_one_line_and_undo_restores_the_bytes(rows, newline, data):
    CASES["count + undo"] += 1
    text = newline.join(["kind,value,qty,location", *(",".join(map(str, r)) for r in rows)]) + newline
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "drawer.csv"
        path.write_bytes(text.encode())
        store = Store(path)
        d = store.load()
        if not d.parts:
            return
        part = data.draw(st.sampled_from(d.parts))
        new_qty = data.draw(st.integers(0, 99))
        try:
            store.set_qty(part.line, new_qty, "fuzz")
        except StoreError:
            return
        if new_qty == part.qty:  # no edit at all: the file keeps its bytes and the journal has nothing to undo
            assert path.read_bytes() == text.encode()
            with pytest.raises(NothingToUndo):
                store.undo()
            return
        before, after = text.splitlines(True), path.read_bytes().decode().splitlines(True)
        assert len(before) == len(after)
        assert [i for i, (a, b) in enumerate(zip(before, after)) if a != b] in ([], [part.line - 1])
        assert Drawer.load(path).part_at(part.line).qty == new_qty
        store.undo()
        assert path.read_bytes() == text.encode()


@pytest.fixture(scope="module", autouse=True)
def _report():
    yield
    print(f"\nfuzz cases run: {sum(CASES.values())} ({', '.join(f'{k}: {v}' for k, v in CASES.items())})")
