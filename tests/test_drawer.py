"""Reading and checking a drawer file: parts with SI values, every problem placed by line and column.

All drawer contents here are invented fixtures.
"""

from __future__ import annotations

import csv
import io

import numpy as np
import pytest

from inventory.drawer import Drawer

HEADER = "kind,value,qty,tolerance,power,voltage,dielectric,part,polarity,hfe_min,hfe_max,location,notes\n"


def parse(body: str, header: str = HEADER) -> Drawer:
    return Drawer.parse(header + body, "drawer.csv")


def messages(d: Drawer) -> list[str]:
    return [str(p) for p in d.problems]


def test_values_become_si_by_kind():
    d = parse(
        "resistor,4k7,10,1%,1/4W,,,,,,,A1,\n"
        "capacitor,100n,5,,,50V,x7r,,,,,B2,\n"
        "capacitor,4u7,3,,,6V3,electrolytic,,,,,B3,\n"
        "transistor,,4,,,,,BC547B,npn,200,450,C1,\n"
    )
    assert d.problems == []
    r, c, e, q = d.parts
    # IEC 60062 RKM code: the letter is the decimal point and multiplier, 4k7 = 4.7 kΩ, 6V3 = 6.3 V.
    assert (r.value, r.tolerance, r.power_w, r.line) == (4700.0, 0.01, 0.25, 2)
    assert (c.value, c.voltage_v, c.dielectric, c.polarised) == (pytest.approx(100e-9), 50.0, "x7r", False)
    assert (e.value, e.voltage_v, e.polarised) == (pytest.approx(4.7e-6), pytest.approx(6.3), True)
    assert (q.polarity, q.hfe_min, q.hfe_max, q.part, q.value) == ("NPN", 200.0, 450.0, "BC547B", None)
    assert d.part_at(3) is c and d.part_at(1) is None


def test_defaults_for_unrated_parts():
    # The contract's defaults: 5 % and 0.25 W for resistors, 20 % for capacitors
    # (the common carbon-film and ceramic grades; common practice, no source).
    d = parse("resistor,10k,1,,,,,,,,,,\ncapacitor,10n,1,,,,,,,,,,\n")
    r, c = d.parts
    assert (r.tolerance, r.power_w, c.tolerance, c.voltage_v) == (0.05, 0.25, 0.20, None)


def test_every_problem_at_once_with_line_and_column():
    d = parse(
        "resistor,4k7k,10,,,,,,,,,A1,\n"           # 2: wrong value for kind
        "widget,1k,1,,,,,,,,,,\n"                  # 3: unknown kind
        "resistor,1k,-3,,,,,,,,,,\n"               # 4: bad qty
        "capacitor,220,5,,,,,,,,,,\n"              # 5: capacitor needs a unit letter
        "transistor,,2,,,,,BC557,,100,50,,\n"      # 6: no polarity, hfe_min > hfe_max
        "capacitor,1u,2,,,,paper,,,,,,\n"          # 7: unknown dielectric
        "resistor,1k,1,,,,,,,,,A1,a,b,c\n"         # 8: more cells than the header
    )
    assert messages(d) == [
        'drawer.csv:2:2: value "4k7k" is not a resistance (expected e.g. 4k7, 4.7k, 4700)',
        'drawer.csv:3:1: kind "widget" is unknown (expected resistor, capacitor or transistor)',
        'drawer.csv:4:3: qty "-3" is not a count (expected a whole number, 0 or more)',
        'drawer.csv:5:2: value "220" is not a capacitance (add a unit letter p, n, u or µ, e.g. 220p or 220u)',
        "drawer.csv:6:9: polarity is empty (a transistor needs NPN or PNP)",
        "drawer.csv:6:11: hfe_min 100 is more than hfe_max 50",
        'drawer.csv:7:7: dielectric "paper" is unknown (expected one of c0g, np0, x7r, x5r, film, '
        "electrolytic, tantalum)",
        "drawer.csv:8:14: line has 15 cells but the header has 13 (a cell holding ',' needs double quotes around it)",
    ]
    assert d.parts == [] and all(p.severity == "error" for p in d.problems)


def test_missing_required_column_is_one_clear_error():
    d = Drawer.parse("kind,value,location\nresistor,1k,A1\n", "d.csv")
    assert [str(p) for p in d.problems] == [
        "d.csv:1:4: the header has no qty column (it needs kind, value and qty; found: kind, value, location)"]
    assert d.parts == []


def test_duplicate_part_is_a_warning_and_both_lines_count():
    d = parse("resistor,4k7,3,,,,,,,,,A1,\nresistor,4700,2,5%,,,,,,,,A1,\nresistor,4k7,1,,,,,,,,,A2,\n")
    assert [(p.line, p.severity) for p in d.problems] == [(3, "warning")]
    assert "same resistor in A1 as line 2" in d.problems[0].message
    assert [p.qty for p in d.parts] == [3, 2, 1]


def test_header_any_case_any_order_and_unknown_columns_ignored():
    d = Drawer.parse("Location,QTY,Bin Colour,Value,KIND\nA1,7,red,2k2,Resistor\n")
    assert d.problems == []
    assert (d.parts[0].value, d.parts[0].qty, d.parts[0].location) == (2200.0, 7, "A1")


def test_misspelt_column_gets_a_hint():
    d = Drawer.parse("kind,value,qty,tolerence\nresistor,1k,1,1%\n")
    assert [str(p) for p in d.problems] == [
        'drawer.csv:1:4: warning: column "tolerence" is not read (did you mean tolerance?); it is kept as it is']
    assert d.parts[0].tolerance == 0.05


def test_quoted_cells_with_delimiters_and_newlines():
    # RFC 4180 section 2: a quoted field may hold commas, CR/LF and "" for a quote.
    d = parse('resistor,4k7,10,,,,,,,,,"A1, front","two\nlines ""quoted"""\nresistor,1k,2,,,,,,,,,A2,\n')
    assert d.problems == []
    a, b = d.parts
    assert (a.location, a.notes) == ("A1, front", 'two\nlines "quoted"')
    assert (a.line, b.line) == (2, 4)  # the record on line 2 spans two physical lines


def test_unclosed_quote_is_reported_and_reading_goes_on():
    d = parse('resistor,4k7,10,,,,,,,,,"A1,\nresistor,1k,2,,,,,,,,,A2,\n')
    assert [(p.line, p.column) for p in d.problems] == [(2, 12)]
    assert "never closed" in d.problems[0].message
    assert [p.line for p in d.parts] == [3]


def test_semicolon_file_from_a_spreadsheet_with_decimal_commas():
    # Spreadsheets in locales whose decimal mark is ',' save CSV with ';' (common practice, no source).
    d = Drawer.parse("kind;value;qty;tolerance;location\r\nresistor;4,7k;10;0,5%;A1\r\n")
    assert d.problems == [] and d.dialect.delimiter == ";"
    assert (d.parts[0].value, d.parts[0].tolerance) == (4700.0, 0.005)


def test_bom_blank_lines_and_no_trailing_newline():
    # U+FEFF encoded as EF BB BF is the UTF-8 byte order mark (Unicode Standard, ch. 23.8).
    data = b"\xef\xbb\xbfkind,value,qty\n\nresistor,1k,1\n,,\nresistor,2k,2"
    d = Drawer.from_bytes(data)
    assert d.problems == [] and d.dialect.bom
    assert [(p.line, p.value) for p in d.parts] == [(3, 1000.0), (5, 2000.0)]


def test_non_utf8_bytes_are_reported_not_fatal():
    data = "kind,value,qty,notes\nresistor,1k,1,caf\u00e9\n".encode("latin-1") + b"resistor,2k,2,ok\n"
    d = Drawer.from_bytes(data)
    assert [(p.line, p.column) for p in d.problems] == [(2, 4)]
    assert "0xE9 is not UTF-8" in d.problems[0].message
    assert [p.line for p in d.parts] == [3]
    assert d.to_bytes() == data  # kept byte for byte


@pytest.mark.parametrize("data, words", [
    (b"", "empty"),
    (b"\xff\xfek\x00i\x00", "UTF-16"),
    (b"kind,value,qty\nresistor,1k,\x001\n", "NUL"),
])
def test_whole_file_problems(data, words):
    d = Drawer.from_bytes(data)
    assert len(d.problems) == 1 and words in d.problems[0].message
    assert (d.problems[0].line, d.problems[0].column) == (1, 1)


def test_a_bad_line_is_left_out_but_the_others_are_read():
    d = parse("resistor,1k,1,,,,,,,,,,\nresistor,oops,1,,,,,,,,,,\nresistor,3k,3,,,,,,,,,,\n")
    assert [p.line for p in d.parts] == [2, 4]
    assert d.part_at(3) is None and d.errors[0].line == 3


def test_stock_arrays_hold_only_lines_in_stock():
    d = parse(
        "resistor,1k,0,,,,,,,,,,\nresistor,2k2,4,1%,0.5W,,,,,,,,\n"
        "capacitor,10u,2,,,25V,electrolytic,,,,,,\ncapacitor,1n,0,,,,,,,,,,\ncapacitor,47n,6,10%,,,film,,,,,,\n"
        "transistor,,0,,,,,2N3904,NPN,100,300,,\ntransistor,,2,,,,,2N3906,PNP,100,300,,\n"
    )
    r = d.resistor_stock()
    assert r.line.tolist() == [3] and r.ohms.tolist() == [2200.0] and r.qty.dtype.kind == "i"
    assert (r.tolerance.tolist(), r.power_w.tolist(), r.qty.tolist()) == ([0.01], [0.5], [4])
    c = d.capacitor_stock()
    assert c.line.tolist() == [4, 6] and c.polarised.tolist() == [True, False]
    np.testing.assert_allclose(c.farads, [10e-6, 47e-9])
    assert c.voltage_v[0] == 25.0 and np.isnan(c.voltage_v[1])
    assert [t.part for t in d.transistors()] == ["2N3906"]


def test_cells_agree_with_the_standard_csv_reader():
    # Python's csv module is an independent RFC 4180 reader: for a file it writes, our records
    # must hold the same cells.
    rows = [["kind", "value", "qty", "notes"], ["resistor", "4k7", "1", 'a "b", c'],
            ["capacitor", "1n", "2", "x\r\ny"], ["resistor", "1k", "3", ""]]
    buf = io.StringIO()
    csv.writer(buf, lineterminator="\r\n").writerows(rows)
    d = Drawer.parse(buf.getvalue())
    assert [r.cells for r in d.records] == rows
    assert d.problems == []
